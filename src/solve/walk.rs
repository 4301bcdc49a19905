//! The walk: the plan's segments sample by sample, each sample's joints from the
//! [`Follower`], joint moves interpolated in joint space, the jump test, speeds and the
//! hand-off to the sinks. Only the previous sample is kept; the loop allocates nothing.

mod chunks;
mod grid;
mod joint;
mod lanes;
mod state;
pub use chunks::walk_in_chunks;
pub use grid::{chunk_grid, Boundary, Pos, CHUNK_SAMPLES};
pub use lanes::{LaneStop, StopKind};
use state::State;

use super::follow::{ClosedBranch, Follower, NumericContinuity, Solved};
use super::jump::JumpTest;
use super::{residual, Jump, Reach, SampleRecord, SampleSink, StartChoice, StartMethod};
use super::{WalkTotals, RECOVER_EVERY};
use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::IkOptions;
use crate::job::{Job, Motion};
use crate::plan::{Plan, Segment};
use crate::robot::{Jacobian, Joints, Robot, SingularityModel};
use crate::rotation;
use nalgebra::{Isometry3, Vector3};

/// Walks a plan and feeds the sinks.
pub struct Walker<'a> {
    robot: &'a Robot,
    job: &'a Job,
    plan: &'a Plan,
    model: SingularityModel,
    options: IkOptions,
    /// The jump test between consecutive samples.
    jump: JumpTest<'a>,
    /// How the arm is followed from sample to sample.
    follower: Box<dyn Follower + 'a>,
    /// Skip the per-sample singularity measure (feasibility walks need only reach, limits
    /// and jumps).
    light: bool,
    /// Singularity classes are computed below this measure (and at new minima).
    class_below: f64,
    /// Sphere the TCP never leaves ([`Robot::reach_bound`]): centre (base frame) and radius.
    reach_centre: Vector3<f64>,
    reach_radius: f64,
    /// Where the main walk's chunks begin ([`chunk_grid`]): the singularity screen restarts
    /// there, so that a chunk walked on its own measures what the whole walk measures.
    grid: &'a [Boundary],
    /// The closed-form solver followed, whose angles name the nearest singularity.
    closed: Option<&'a OrthoParallel>,
}

impl<'a> Walker<'a> {
    /// A walker following the arm by numerical continuity.
    pub fn new(robot: &'a Robot, job: &'a Job, plan: &'a Plan, options: IkOptions) -> Self {
        let (reach_centre, reach_radius) = robot.reach_bound();
        Walker {
            robot,
            job,
            plan,
            model: SingularityModel::new(robot),
            options,
            jump: JumpTest::new(robot, options),
            follower: Box::new(NumericContinuity::new(robot, options)),
            light: false,
            class_below: crate::robot::DEFAULT_SINGULARITY_THRESHOLD,
            reach_centre,
            reach_radius,
            grid: &[],
            closed: None,
        }
    }

    /// Restart the singularity screen at each of `grid`'s boundaries (in path order), as the
    /// main walk does whether or not it is walked in chunks ([`chunk_grid`]).
    pub fn with_grid(mut self, grid: &'a [Boundary]) -> Self {
        self.grid = grid;
        self
    }

    /// The singularity warning threshold, below which each sample's class is named.
    pub fn with_singularity_threshold(mut self, threshold: f64) -> Self {
        self.class_below = threshold;
        self
    }

    /// Follow the path with the closed-form solver, on the branch of configuration `config`
    /// (the start's, see [`StartChoice::config`]).
    pub fn with_closed_form(mut self, solver: &'a OrthoParallel, config: Config) -> Self {
        self.follower = Box::new(ClosedBranch::new(self.robot, solver, config, self.options));
        self.closed = Some(solver);
        let p = solver.parameters();
        self.jump = self
            .jump
            .with_unmeasured_residual(p.model_deviation_m, p.model_deviation_rad);
        self
    }

    /// Skip the singularity measure (for quick feasibility walks).
    pub fn light(mut self) -> Self {
        self.light = true;
        self
    }

    /// The singularity model of the walked robot.
    pub fn model(&self) -> &SingularityModel {
        &self.model
    }

    /// Walk the whole path from the given start joints (the solution at waypoint 0).
    pub fn walk(&mut self, start: &StartChoice, sink: &mut dyn SampleSink) -> WalkTotals {
        let mut state = self.begin(start, sink);
        self.walk_between(&mut state, Pos::FIRST, 0.0, None, sink);
        state.totals()
    }

    /// Set up a walk from `start` and emit its first sample (waypoint 0): the follower on the
    /// start's configuration, the sink told the plan's size.
    fn begin(&mut self, start: &StartChoice, sink: &mut dyn SampleSink) -> State {
        let mut state = State::resumed(start.joints);
        self.follower.begin(start);
        sink.begin(self.robot, self.plan.estimated_samples);
        let first_target = self.plan.first_base();
        let reach = if start.method == StartMethod::Unreachable {
            Reach::Unreachable
        } else {
            Reach::Reached
        };
        let q = start.joints;
        let (pe, oe) = residual(self.robot, &q, &first_target);
        self.emit(
            &mut state,
            sink,
            EmitArgs {
                segment: 0,
                waypoint: Some(0),
                motion: Motion::Linear,
                target: first_target,
                target_from_joints: false,
                solved: Solved {
                    reach,
                    ..Solved::reached(q, pe, oe)
                },
                dt: 0.0,
                s: 0.0,
                check_jump: false,
                tcp_speed: 0.0,
                from_rest: false,
            },
        );
        // The first sample is measured exactly: its measure is the first floor.
        state.floor = state.min_measure;
        state
    }

    /// Walk on from sample `from` (`s0`: the path distance at the start of its segment; a
    /// sample inside a joint move only once the move is begun, `state.joint`) up to, not
    /// including, sample `until`, or to the end of the path. True when it stopped at `until`.
    fn walk_between(
        &mut self,
        state: &mut State,
        from: Pos,
        s0: f64,
        until: Option<Pos>,
        sink: &mut dyn SampleSink,
    ) -> bool {
        // Path distance at each segment's start: the sum of the straight-line lengths before
        // it, joint moves included, so that the distance of every waypoint is fixed by the
        // path alone and agrees across walks in different configurations.
        let mut s0 = s0;
        for k in from.seg..self.plan.segment_count() {
            let Some(seg) = self.plan.segment(k) else {
                continue;
            };
            if sink.done() {
                return false;
            }
            let first = if k == from.seg { from.step } else { 1 };
            match seg.motion {
                Motion::Linear => {
                    if self.walk_linear(&seg, s0, first, until, state, sink) {
                        return true;
                    }
                }
                Motion::Joint => {
                    if self.walk_joint(&seg, s0, first, until, state, sink) {
                        return true;
                    }
                }
            }
            s0 += seg.length;
        }
        false
    }

    /// A linear segment starting at path distance `s0`, from its sample `first` (1 for the
    /// whole segment), stopping before sample `until` if it lies in the segment (then true).
    fn walk_linear(
        &mut self,
        seg: &Segment,
        s0: f64,
        first: usize,
        until: Option<Pos>,
        state: &mut State,
        sink: &mut dyn SampleSink,
    ) -> bool {
        let steps = seg.steps;
        if steps == 0 {
            // A repeated waypoint: the previous sample already stands there.
            return false;
        }
        // Samples stay evenly spaced in u; their times follow the segment's profile. Resumed
        // inside the segment, the previous sample's time is computed as the loop would have.
        let timing = &seg.timing;
        let mut t_prev = if first > 1 {
            timing.time_at((first - 1) as f64 / steps as f64)
        } else {
            0.0
        };
        for i in first..=steps {
            if let Some(stopped) = self.before_sample(seg.index, i, until, state, sink) {
                return stopped;
            }
            let u = i as f64 / steps as f64;
            let t_now = timing.time_at(u);
            let target = seg.run_pose_at(u);
            let solved = self.solve_sample(&target, i == steps, state);
            self.emit(
                state,
                sink,
                EmitArgs {
                    segment: seg.index,
                    waypoint: (i == steps).then_some(seg.index + 1),
                    motion: Motion::Linear,
                    target,
                    target_from_joints: false,
                    solved,
                    dt: t_now - t_prev,
                    s: s0 + seg.length * u,
                    check_jump: true,
                    tcp_speed: timing.tcp_speed(u),
                    from_rest: i == 1 && timing.blend_in().is_none(),
                },
            );
            t_prev = t_now;
        }
        false
    }

    /// How far `base_T_target` lies outside the reach sphere, if it does: then nothing needs
    /// solving, and the distance is a lower bound of the distance to any reachable TCP
    /// position.
    fn beyond_reach(&self, base_T_target: &Isometry3<f64>) -> Option<f64> {
        let excess =
            (base_T_target.translation.vector - self.reach_centre).norm() - self.reach_radius;
        (excess > 0.0).then_some(excess)
    }

    /// Joints for one linear-segment sample. `segment_end`: the segment's last sample (always
    /// fully searched).
    fn solve_sample(
        &mut self,
        base_T_target: &Isometry3<f64>,
        segment_end: bool,
        state: &mut State,
    ) -> Solved {
        if let Some(excess) = self.beyond_reach(base_T_target) {
            state.probe = (excess, 0.0);
            state.work.beyond_reach += 1;
            return Solved::unreachable(state.last_good, excess, 0.0);
        }
        let full_search = state.unreachable_run.is_multiple_of(RECOVER_EVERY) || segment_end;
        let solved = self.follower.sample(
            base_T_target,
            &state.last_good,
            full_search,
            &mut state.probe,
        );
        state.count(&solved);
        solved
    }

    /// Before sample `step` of segment `seg`: `Some(false)` when the sink wants no more,
    /// `Some(true)` when the sample is `until` (the walk stops before it); otherwise enter
    /// the chunk that begins there, if one does, and go on (`None`).
    fn before_sample(
        &self,
        seg: usize,
        step: usize,
        until: Option<Pos>,
        state: &mut State,
        sink: &dyn SampleSink,
    ) -> Option<bool> {
        if sink.done() {
            return Some(false);
        }
        let here = Pos { seg, step };
        if until == Some(here) {
            return Some(true);
        }
        if self.grid.get(state.grid_next).map(|b| b.pos) == Some(here) {
            // Boundary b begins chunk b + 1.
            state.enter_chunk(state.grid_next + 1);
            state.grid_next += 1;
        }
        None
    }

    fn emit(&mut self, state: &mut State, sink: &mut dyn SampleSink, a: EmitArgs) {
        let n = self.robot.dof();
        let Solved {
            q,
            reach,
            mut position_error,
            mut orientation_error,
            config_change,
            residual_pending,
            ..
        } = a.solved;
        let mut target = a.target;
        let (singularity, singularity_class) = if self.light {
            if a.target_from_joints {
                target = self.robot.chain().fk(&q);
            }
            (1.0, None)
        } else {
            // One forward kinematics per sample: the Jacobian's, whose pose also gives the
            // residual of an exact solution and the target of a joint move's inner sample.
            let mut jac = Jacobian::zeros();
            let base_T_tcp = self.robot.chain().fk_jacobian(&q, &mut jac);
            if a.target_from_joints {
                target = base_T_tcp;
            }
            if residual_pending {
                position_error = (base_T_tcp.translation.vector - target.translation.vector).norm();
                orientation_error = rotation::angle_between(&base_T_tcp.rotation, &target.rotation);
            }
            // Below the warning threshold or where it could be the path's smallest measure
            // the value must be exact (a finding's worst value, the path's minimum);
            // elsewhere a proven lower bound above both serves, and the plots show it. The
            // floor and the chunk's smallest are both measures of samples of the path, so
            // the path's smallest is at most either.
            let level = self.class_below.max(state.floor.min(state.min_measure));
            let m = state.screen.measure(&self.model, &jac, n, level).value;
            // The class is read where a finding or the path's minimum needs it: below the
            // warning threshold or at a new smallest measure.
            let class = if m < self.class_below || m < state.min_measure {
                match self.closed {
                    // From the closed form's angles and the pose at hand: no frames pass.
                    Some(solver) => {
                        let (w, e, s) = solver.singular_distances(&q, &base_T_tcp);
                        self.model.class_from(w, e, s)
                    }
                    None => self.model.classify(self.robot.chain(), &q),
                }
            } else {
                None
            };
            state.min_measure = state.min_measure.min(m);
            (m, class)
        };
        let mut joint_speed = Joints::zeros(n);
        let mut joint_acceleration = Joints::zeros(n);
        let mut speed_valid = false;
        let mut tool_angular_speed = 0.0;
        let mut jump = None;
        if let Some(prev) = &state.prev {
            if a.dt > 0.0 {
                tool_angular_speed =
                    rotation::angle_between(&prev.target.rotation, &target.rotation) / a.dt;
            }
            let both_reached = prev.reach == Reach::Reached && reach == Reach::Reached;
            if both_reached && a.check_jump {
                let residuals = (position_error, orientation_error);
                jump = self
                    .jump
                    .find(prev, &target, &q, residuals, &mut state.work);
                if let Some(change) = config_change {
                    // A change of configuration is a jump whatever the midpoint test says.
                    jump = Some(Jump {
                        delta: q.map(|k, v| v - prev.joints[k]),
                        config_change: Some(change),
                    });
                }
            }
            if both_reached && jump.is_none() && a.dt > 0.0 {
                for ((v, qk), q_prev) in joint_speed.iter_mut().zip(&q).zip(&prev.joints) {
                    *v = (qk - q_prev) / a.dt;
                }
                speed_valid = true;
                joint_acceleration = acceleration_between(
                    prev,
                    &joint_speed,
                    a.dt,
                    a.from_rest,
                    state.prev_speed_valid,
                );
            }
        }
        state.prev_speed_valid = speed_valid;
        state.s = a.s;
        state.t += a.dt;
        let rec = SampleRecord {
            index: state.index,
            segment: a.segment,
            waypoint: a.waypoint,
            motion: a.motion,
            s: state.s,
            t: state.t,
            dt: a.dt,
            target,
            reach,
            position_error,
            orientation_error,
            joints: q,
            joint_speed,
            joint_acceleration,
            tcp_speed: a.tcp_speed,
            tool_angular_speed,
            singularity,
            singularity_class,
            jump,
        };
        sink.sample(self.robot, &rec);
        state.index += 1;
        if reach == Reach::Reached {
            state.last_good = q;
            state.unreachable_run = 0;
        } else {
            state.unreachable_run += 1;
        }
        self.follower.settle(&state.last_good);
        state.prev = Some(rec);
    }
}

/// Joint accelerations (rad/s² or m/s²) at a sample from the joint speeds of the interval
/// ending there (`speed`, over `dt`) and the previous interval's (`prev`). Interval speeds
/// are average speeds, i.e. speeds at interval midpoints, so the difference is taken over
/// the midpoints' distance `(dt + prev.dt)/2`: exact for constant acceleration. After a stop
/// (`from_rest`) the previous speed is 0 at the start of the interval, half an interval
/// before its midpoint. Without a valid previous speed (first sample, a jump, an unreachable
/// sample) the acceleration is not known and is reported as 0.
fn acceleration_between(
    prev: &SampleRecord,
    speed: &Joints,
    dt: f64,
    from_rest: bool,
    prev_valid: bool,
) -> Joints {
    let mut acc = Joints::zeros(speed.len());
    if from_rest {
        for (a, v) in acc.iter_mut().zip(speed.iter()) {
            *a = v / (0.5 * dt);
        }
    } else if prev_valid && prev.dt > 0.0 {
        let span = 0.5 * (dt + prev.dt);
        for ((a, v), v_prev) in acc
            .iter_mut()
            .zip(speed.iter())
            .zip(prev.joint_speed.iter())
        {
            *a = (v - v_prev) / span;
        }
    }
    acc
}

/// One sample to emit: where it is on the path and what was solved there.
struct EmitArgs {
    segment: usize,
    waypoint: Option<usize>,
    motion: Motion,
    target: Isometry3<f64>,
    /// The target is the pose of the joints (`target` is ignored): a joint move's inner
    /// samples.
    target_from_joints: bool,
    solved: Solved,
    dt: f64,
    /// Path distance of the sample (m).
    s: f64,
    check_jump: bool,
    /// Commanded TCP speed at the sample (m/s; 0 in joint moves).
    tcp_speed: f64,
    /// The interval ending at this sample starts from rest (a stop before it).
    from_rest: bool,
}
