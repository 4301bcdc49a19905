//! Joint moves in the walk: the move's end solved once at its start, its samples interpolated
//! in joint space on one shared profile, resumable inside (a chunk may begin there) and
//! passing the chunk boundaries the plan put inside a move whose end is out of reach.

use super::super::follow::Solved;
use super::super::{Reach, SampleSink};
use super::state::{JointMove, State};
use super::{EmitArgs, Pos, Walker};
use crate::job::Motion;
use crate::motion::SyncedMove;
use crate::plan::Segment;
use crate::robot::Joints;

impl Walker<'_> {
    /// Samples and profile of a joint move from `q0` to `q1`: no joint moves more than one
    /// angle step (or length step for a prismatic joint) between samples; all joints follow
    /// one acceleration-limited profile at the programmed share of their allowed speed
    /// ([`SyncedMove`]). Without a programmed share the move runs at the joints' full allowed
    /// speed and lasts at least the segment's straight-line length at the TCP speed.
    fn joint_move_timing(&self, seg: &Segment, q0: &Joints, q1: &Joints) -> JointMoveTiming {
        let limits = &self.job.limits;
        let steps = self.joint_move_steps(seg, q0, q1);
        let n = self.robot.dof();
        let mut delta = Joints::zeros(n);
        let mut speed = Joints::zeros(n);
        let mut accel = Joints::zeros(n);
        for (i, j) in self.robot.joints().iter().enumerate() {
            delta[i] = q1[i] - q0[i];
            speed[i] = j.velocity * limits.joint_speed_scale;
            accel[i] = j.acceleration_limit(limits.joint_acceleration_scale);
        }
        let (fraction, min_duration) = match self.plan.joint_speed_fraction(seg.index + 1) {
            Some(f) => (f, 0.0),
            None => (1.0, seg.duration),
        };
        let synced = SyncedMove::new(&delta, &speed, &accel, fraction, min_duration);
        JointMoveTiming { steps, synced }
    }

    /// Samples of a joint move from `q0` to `q1`: the segment's own count, raised so that no
    /// joint moves more than one angle step (or length step, prismatic) between samples.
    pub(super) fn joint_move_steps(&self, seg: &Segment, q0: &Joints, q1: &Joints) -> usize {
        let mut steps = seg.steps.max(1);
        for (i, j) in self.robot.joints().iter().enumerate() {
            let step = if j.kind.is_prismatic() {
                self.job.sampling.step
            } else {
                self.job.sampling.angle_step
            };
            steps = steps.max(((q1[i] - q0[i]).abs() / step).ceil() as usize);
        }
        steps
    }

    /// The boundaries inside segment `seg` that no sample reached (a joint move whose end
    /// is out of reach has one sample): entered here, in order, unless one is `until`
    /// (then true: the walk stops there).
    pub(super) fn pass_boundaries(
        &self,
        seg: usize,
        until: Option<Pos>,
        state: &mut State,
    ) -> bool {
        while let Some(b) = self.grid.get(state.grid_next).filter(|b| b.pos.seg == seg) {
            if until == Some(b.pos) {
                return true;
            }
            state.enter_chunk(state.grid_next + 1);
            state.grid_next += 1;
        }
        false
    }

    /// Start the joint move `seg` from the last reached joints: solve its end and fix its
    /// samples and profile (`state.joint`). Where the end is out of reach, emit the one
    /// sample that stands for the move and return false.
    pub(super) fn begin_joint_move(
        &mut self,
        seg: &Segment,
        s0: f64,
        state: &mut State,
        sink: &mut dyn SampleSink,
    ) -> bool {
        let q0 = state.last_good;
        let end = match self.beyond_reach(&seg.end) {
            Some(excess) => {
                state.work.beyond_reach += 1;
                Solved::unreachable(q0, excess, 0.0)
            }
            None => {
                let end = self.follower.move_end(&seg.end, &q0);
                state.count(&end);
                end
            }
        };
        if end.reach == Reach::Unreachable {
            state.joint = None;
            self.emit(
                state,
                sink,
                EmitArgs {
                    segment: seg.index,
                    waypoint: Some(seg.index + 1),
                    motion: Motion::Joint,
                    target: seg.end,
                    target_from_joints: false,
                    solved: end,
                    dt: seg.duration,
                    s: s0 + seg.length,
                    check_jump: false,
                    tcp_speed: 0.0,
                    from_rest: true,
                },
            );
            return false;
        }
        let q1 = end.q;
        let JointMoveTiming { steps, synced } = self.joint_move_timing(seg, &q0, &q1);
        state.joint = Some(JointMove {
            seg: seg.index,
            q0,
            q1,
            end_errors: (end.position_error, end.orientation_error),
            steps,
            synced,
        });
        true
    }

    /// A joint move starting at path distance `s0`, from its sample `first` (1 for the whole
    /// move; a later one only inside a move begun by [`Self::begin_joint_move`]), stopping
    /// before sample `until` if it lies in the move (then true). It counts as its
    /// straight-line length, spread evenly over its joint-space steps: the TCP's route
    /// depends on the configuration and is not the programmed path.
    pub(super) fn walk_joint(
        &mut self,
        seg: &Segment,
        s0: f64,
        first: usize,
        until: Option<Pos>,
        state: &mut State,
        sink: &mut dyn SampleSink,
    ) -> bool {
        if first == 1 && !self.begin_joint_move(seg, s0, state, sink) {
            return self.pass_boundaries(seg.index, until, state);
        }
        let Some(m) = state.joint.filter(|m| m.seg == seg.index) else {
            // Resumed at a boundary of a move whose end was out of reach: its one sample is
            // behind.
            return self.pass_boundaries(seg.index, until, state);
        };
        let JointMove { q0, q1, steps, .. } = m;
        let mut t_prev = if first > 1 {
            m.synced.ramp.t_at((first - 1) as f64 / steps as f64)
        } else {
            0.0
        };
        for i in first..=steps {
            if let Some(stopped) = self.before_sample(seg.index, i, until, state, sink) {
                return stopped;
            }
            let u = i as f64 / steps as f64;
            let t_now = m.synced.ramp.t_at(u);
            let dt = t_now - t_prev;
            t_prev = t_now;
            let q = q0.map(|k, v| v + (q1[k] - v) * u);
            let last = i == steps;
            let (pe, oe) = if last { m.end_errors } else { (0.0, 0.0) };
            self.emit(
                state,
                sink,
                EmitArgs {
                    segment: seg.index,
                    waypoint: last.then_some(seg.index + 1),
                    motion: Motion::Joint,
                    // Between the ends the target is where the joints put the TCP: the
                    // emitter's forward kinematics.
                    target: seg.end,
                    target_from_joints: !last,
                    solved: Solved::reached(q, pe, oe),
                    dt,
                    s: s0 + seg.length * u,
                    check_jump: false,
                    // The TCP's route in a joint move is not the programmed path: its
                    // speed is not the programmed speed's business.
                    tcp_speed: 0.0,
                    from_rest: i == 1,
                },
            );
        }
        state.joint = None;
        false
    }
}

/// Samples and shared profile of a joint move (see [`Walker::joint_move_timing`]).
struct JointMoveTiming {
    steps: usize,
    synced: SyncedMove,
}
