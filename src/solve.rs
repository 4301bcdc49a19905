//! The solver walks the plan sample by sample: inverse kinematics warm-started from the
//! previous sample, derived quantities (speeds, singularity measure), jump detection, and a
//! hand-off of each sample to the sinks (assessment, joint CSV, plots). It keeps only the
//! previous sample, so memory does not grow with the path; the loop allocates nothing.
//!
//! Continuity. Along the path the arm is followed by a solver that ignores the position
//! limits: the joint path a controller would produce by running the motion continuously. Where
//! that path leaves a joint's range the assessment reports `joint_limit`; the tracker does not
//! stall at the limit. When the warm-started solve fails, a search from other seeds (inside the
//! limits) tells a pose that is reachable only in another arm configuration (the path then
//! continues there and the change is reported as a jump) from one that is not reachable at
//! all (`unreachable`, and the walk continues from the last reached joints).

use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::{IkOptions, NumericIk, WarmStart};
use crate::job::{Job, Motion};
use crate::plan::{Plan, Segment};
use crate::robot::{Jacobian, Robot, SingularityClass, SingularityModel, MAX_DOF};
use crate::rotation;
use nalgebra::Isometry3;

/// Random seeds tried for the first pose and after a failed warm start. 32 finds every
/// branch of a 6-axis arm with high probability (8 branches); more only costs time on
/// targets that are truly out of reach.
pub const RESTARTS: usize = 32;

/// Depth of the jump search: each level halves the Cartesian step. After 16 halvings the step
/// is 1/65536 of a sample step; a continuous joint path shrinks with it, a jump does not.
const JUMP_DEPTH: u32 = 16;

/// A joint step that still holds more than this fraction of the original step after
/// [`JUMP_DEPTH`] halvings did not shrink with the Cartesian step: a discontinuity. A
/// continuous path keeps about 2⁻¹⁶ of it; any fraction far between the two works.
const JUMP_KEEP_FRACTION: f64 = 0.25;

/// How the joints of a sample were obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reach {
    /// IK converged within tolerance.
    Reached,
    /// No solution within tolerance and limits: the joints are the last reached ones.
    Unreachable,
}

/// A discontinuity in the joint path between the previous sample and this one.
#[derive(Debug, Clone, Copy)]
pub struct Jump {
    /// Joint change across the jump (rad or m), per joint.
    pub delta: [f64; MAX_DOF],
    /// With the closed-form solver: the arm configuration ended here and the walk went on in
    /// another one, (from, to).
    pub config_change: Option<(Config, Config)>,
}

/// One solved sample, as the sinks see it. All SI.
#[derive(Debug, Clone, Copy)]
pub struct SampleRecord {
    pub index: usize,
    /// Segment index; the first sample belongs to segment 0.
    pub segment: usize,
    /// `Some(i)` when the sample is waypoint `i`.
    pub waypoint: Option<usize>,
    pub motion: Motion,
    /// Path distance of the TCP from the start (m).
    pub s: f64,
    /// Time from the start (s).
    pub t: f64,
    /// Time since the previous sample (s); 0 for the first.
    pub dt: f64,
    /// Commanded TCP pose (base frame).
    pub target: Isometry3<f64>,
    pub reach: Reach,
    /// Remaining IK error (m, rad).
    pub position_error: f64,
    pub orientation_error: f64,
    /// Joints (first `dof` entries meaningful).
    pub joints: [f64; MAX_DOF],
    /// Joint speeds since the previous sample (rad/s or m/s; 0 for the first and across a
    /// jump or an unreachable sample, where a speed has no meaning).
    pub joint_speed: [f64; MAX_DOF],
    /// Tool angular speed since the previous sample (rad/s).
    pub tool_angular_speed: f64,
    /// Singularity measure (see [`SingularityModel::measure`]).
    pub singularity: f64,
    /// Nearest singularity class, for arms where classes are defined.
    pub singularity_class: Option<SingularityClass>,
    /// A discontinuity between the previous sample and this one.
    pub jump: Option<Jump>,
}

/// Receives every solved sample in path order.
pub trait SampleSink {
    /// Called once before the first sample with the plan's estimate of the sample count
    /// (exact for linear segments, a lower bound for joint segments).
    fn begin(&mut self, _robot: &Robot, _estimated_samples: u64) {}
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord);
    /// True when the sink needs no more samples: the walk may stop early (used by the
    /// configuration table, which only wants the first stopping error).
    fn done(&self) -> bool {
        false
    }
}

/// How the first pose's joints were chosen.
#[derive(Debug, Clone, serde::Serialize)]
pub struct StartChoice {
    /// `start_joints`, `search` or `unreachable`.
    pub method: &'static str,
    /// Joints at the first waypoint (rad / m).
    pub joints: Vec<f64>,
    /// Distinct in-range solutions the search found for the first pose (0 when given).
    pub alternatives: usize,
    /// The arm configuration followed, when the closed-form solver is used.
    #[serde(skip)]
    pub config: Option<Config>,
}

/// Totals of a walk.
#[derive(Debug, Clone, Copy, Default)]
pub struct WalkTotals {
    pub samples: usize,
    pub length: f64,
    pub duration: f64,
}

/// Score of a configuration for the start-pose choice: the smaller of the normalised margin to
/// the joint limits (margin over half the range, 1 at mid-range) and the singularity measure
/// scaled to the same order (measure / 0.1, the measure of a well-conditioned pose of the demo
/// arms). Larger is better.
pub fn configuration_score(robot: &Robot, model: &SingularityModel, q: &[f64]) -> f64 {
    let mut limit_term: f64 = 1.0;
    for (j, &v) in robot.joints().iter().zip(q) {
        let half = 0.5 * (j.upper - j.lower);
        if half.is_finite() && half > 0.0 {
            limit_term = limit_term.min(j.margin(v) / half);
        }
    }
    let mut jac = Jacobian::zeros();
    robot.chain().fk_jacobian(q, &mut jac);
    let sing_term = (model.measure(&jac, robot.dof()) / 0.1).min(1.0);
    limit_term.min(sing_term)
}

/// Choose the joints at the first pose: the given `start_joints` (refined by IK onto the
/// pose), else the best-scoring ([`configuration_score`]) of the distinct solutions found from
/// [`RESTARTS`] seeds.
pub fn choose_start(
    robot: &Robot,
    model: &SingularityModel,
    target: &Isometry3<f64>,
    start_joints: Option<&[f64]>,
    options: IkOptions,
) -> StartChoice {
    let n = robot.dof();
    let ik = NumericIk::new(robot, options);
    let mut q = [0.0; MAX_DOF];
    if let Some(seed) = start_joints {
        let out = ik.solve(target, seed, &mut q[..n]);
        return StartChoice {
            method: if out.converged {
                "start_joints"
            } else {
                "unreachable"
            },
            joints: if out.converged {
                q[..n].to_vec()
            } else {
                seed.to_vec()
            },
            alternatives: 0,
            config: None,
        };
    }
    let mut rng = crate::rng::SplitMix64::new(0x57a7_7001);
    let mut found: Vec<Vec<f64>> = Vec::new();
    let mut seed = [0.0; MAX_DOF];
    for k in 0..RESTARTS * 2 {
        if k == 0 {
            // Mid-range first: the natural "home" guess.
            seed[..n].copy_from_slice(&robot.mid_range());
        } else {
            robot.random_config(&mut rng, &mut seed[..n]);
        }
        let out = ik.solve(target, &seed[..n], &mut q[..n]);
        if out.converged
            && !found
                .iter()
                .any(|f| f.iter().zip(&q[..n]).all(|(a, b)| (a - b).abs() < 1e-4))
        {
            found.push(q[..n].to_vec());
        }
    }
    match found
        .iter()
        .max_by(|a, b| {
            configuration_score(robot, model, a).total_cmp(&configuration_score(robot, model, b))
        })
        .cloned()
    {
        Some(best) => StartChoice {
            method: "search",
            joints: best,
            alternatives: found.len(),
            config: None,
        },
        None => StartChoice {
            method: "unreachable",
            joints: robot.mid_range(),
            alternatives: 0,
            config: None,
        },
    }
}

/// The best-scoring in-range solution of configuration `config` at `target` (all in-range
/// windings considered), or `None` when that configuration cannot reach the pose within the
/// joint ranges.
pub fn best_in_config(
    robot: &Robot,
    model: &SingularityModel,
    solver: &OrthoParallel,
    target: &Isometry3<f64>,
    config: Config,
) -> Option<[f64; 6]> {
    solver
        .solve(target)
        .iter()
        .filter(|s| s.config == config)
        .map(|s| (configuration_score(robot, model, &s.joints), s.joints))
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, q)| q)
}

/// Walks a plan and feeds the sinks.
pub struct Walker<'a> {
    robot: &'a Robot,
    job: &'a Job,
    plan: &'a Plan,
    model: SingularityModel,
    tracker: NumericIk<'a>,
    limited: NumericIk<'a>,
    closed: Option<&'a OrthoParallel>,
    /// Skip the per-sample singularity measure (feasibility walks need only reach, limits
    /// and jumps).
    light: bool,
    /// Singularity classes are computed below this measure (and at new minima).
    class_below: f64,
}

impl<'a> Walker<'a> {
    pub fn new(robot: &'a Robot, job: &'a Job, plan: &'a Plan, options: IkOptions) -> Self {
        Walker {
            robot,
            job,
            plan,
            model: SingularityModel::new(robot),
            tracker: NumericIk::unlimited(robot, options),
            limited: NumericIk::new(robot, options),
            closed: None,
            light: false,
            class_below: crate::assess::DEFAULT_SINGULARITY_THRESHOLD,
        }
    }

    /// The singularity warning threshold, below which each sample's class is named.
    pub fn with_singularity_threshold(mut self, threshold: f64) -> Self {
        self.class_below = threshold;
        self
    }

    /// Follow the path with the closed-form solver, on the branch of the start's
    /// configuration (see [`StartChoice::config`]).
    pub fn with_closed_form(mut self, solver: &'a OrthoParallel) -> Self {
        self.closed = Some(solver);
        self
    }

    /// Skip the singularity measure (for quick feasibility walks).
    pub fn light(mut self) -> Self {
        self.light = true;
        self
    }

    pub fn model(&self) -> &SingularityModel {
        &self.model
    }

    /// Walk the whole path from the given start joints (the solution at waypoint 0).
    pub fn walk(&self, start: &StartChoice, sink: &mut dyn SampleSink) -> WalkTotals {
        let n = self.robot.dof();
        let mut state = State {
            prev: None,
            warm: WarmStart::new(),
            config: start.config,
            min_measure: f64::INFINITY,
            index: 0,
            s: 0.0,
            t: 0.0,
            last_good: [0.0; MAX_DOF],
        };
        state.last_good[..n].copy_from_slice(&start.joints);
        state.warm.reset(&start.joints);
        sink.begin(self.robot, self.plan.estimated_samples);
        // The first sample: waypoint 0.
        let first_target = self.plan.first_base();
        let reach = if start.method == "unreachable" {
            Reach::Unreachable
        } else {
            Reach::Reached
        };
        let mut q = [0.0; MAX_DOF];
        q[..n].copy_from_slice(&start.joints);
        let (pe, oe) = residual(self.robot, &q[..n], &first_target);
        self.emit(
            &mut state,
            sink,
            EmitArgs {
                segment: 0,
                waypoint: Some(0),
                motion: Motion::Linear,
                target: first_target,
                reach,
                q,
                pe,
                oe,
                dt: 0.0,
                ds: 0.0,
                check_jump: false,
                config_change: None,
            },
        );
        for seg in self.plan.segments() {
            if sink.done() {
                break;
            }
            match seg.motion {
                Motion::Linear => self.walk_linear(&seg, &mut state, sink),
                Motion::Joint => self.walk_joint(&seg, &mut state, sink),
            }
        }
        WalkTotals {
            samples: state.index,
            length: state.s,
            duration: state.t,
        }
    }

    fn walk_linear(&self, seg: &Segment, state: &mut State, sink: &mut dyn SampleSink) {
        let steps = seg.steps;
        if steps == 0 {
            // A repeated waypoint: the previous sample already stands there.
            return;
        }
        let dt = seg.duration / steps as f64;
        let ds = seg.length / steps as f64;
        for i in 1..=steps {
            if sink.done() {
                return;
            }
            let u = i as f64 / steps as f64;
            let target = seg.pose_at(u);
            let (q, reach, pe, oe, change) = self.solve_sample(&target, state);
            self.emit(
                state,
                sink,
                EmitArgs {
                    segment: seg.index,
                    waypoint: (i == steps).then_some(seg.index + 1),
                    motion: Motion::Linear,
                    target,
                    reach,
                    q,
                    pe,
                    oe,
                    dt,
                    ds,
                    check_jump: true,
                    config_change: change,
                },
            );
        }
    }

    /// Joints for one linear-segment sample: (joints, reach, residuals, configuration change).
    #[allow(clippy::type_complexity)]
    fn solve_sample(
        &self,
        target: &Isometry3<f64>,
        state: &mut State,
    ) -> ([f64; MAX_DOF], Reach, f64, f64, Option<(Config, Config)>) {
        let n = self.robot.dof();
        let mut q = [0.0; MAX_DOF];
        if let (Some(solver), Some(config)) = (self.closed, state.config) {
            // Stay on the configuration's branch, windings nearest the previous joints.
            if let Some(sol) = solver.solve_near(target, &state.last_good[..n], config) {
                q[..6].copy_from_slice(&sol);
                // Closed-form solutions are exact to rounding (see `Parameters`' model
                // deviation); the residual is measured only when it will be reported.
                let (pe, oe) = if self.light {
                    (0.0, 0.0)
                } else {
                    residual(self.robot, &q[..n], target)
                };
                return (q, Reach::Reached, pe, oe, None);
            }
            // The branch ends here (reach boundary of this configuration). Go on in the
            // configuration whose solution is nearest, if any reaches the pose.
            let next = solver
                .solve_all(target)
                .iter()
                .map(|s| {
                    let d = (0..6).fold(0.0f64, |m, k| {
                        m.max((s.joints[k] - state.last_good[k]).abs())
                    });
                    (d, s.config)
                })
                .min_by(|a, b| a.0.total_cmp(&b.0))
                .map(|(_, c)| c);
            if let Some(other) = next {
                if let Some(sol) = solver.solve_near(target, &state.last_good[..n], other) {
                    q[..6].copy_from_slice(&sol);
                    state.config = Some(other);
                    let (pe, oe) = residual(self.robot, &q[..n], target);
                    return (q, Reach::Reached, pe, oe, Some((config, other)));
                }
            }
            // Out of reach in every configuration: how far, from a local numerical solve.
            let mut probe = [0.0; MAX_DOF];
            let out = self
                .limited
                .solve(target, &state.last_good[..n], &mut probe[..n]);
            return (
                state.last_good,
                Reach::Unreachable,
                out.position_error,
                out.orientation_error,
                None,
            );
        }
        let out = self
            .tracker
            .solve_warm(target, &mut state.warm, &mut q[..n]);
        if out.converged {
            return (
                q,
                Reach::Reached,
                out.position_error,
                out.orientation_error,
                None,
            );
        }
        let alt =
            self.limited
                .solve_with_restarts(target, &state.last_good[..n], RESTARTS, &mut q[..n]);
        if alt.converged {
            (
                q,
                Reach::Reached,
                alt.position_error,
                alt.orientation_error,
                None,
            )
        } else {
            (
                state.last_good,
                Reach::Unreachable,
                alt.position_error,
                alt.orientation_error,
                None,
            )
        }
    }

    fn walk_joint(&self, seg: &Segment, state: &mut State, sink: &mut dyn SampleSink) {
        let n = self.robot.dof();
        let q0 = state.last_good;
        let mut q1 = [0.0; MAX_DOF];
        let (converged, end_pe, end_oe) = match (self.closed, state.config) {
            // With the closed form: the in-range solution of the current configuration nearest
            // the start, else of any configuration (a joint move may change configuration;
            // the branch followed afterwards is the one the move ends in).
            (Some(solver), Some(config)) => {
                let sols = solver.solve(&seg.end);
                let dist = |s: &&crate::ik::analytic::AnalyticSolution| {
                    (0..6).fold(0.0f64, |m, k| m.max((s.joints[k] - q0[k]).abs()))
                };
                let pick = sols
                    .iter()
                    .filter(|s| s.config == config)
                    .min_by(|a, b| dist(a).total_cmp(&dist(b)))
                    .or_else(|| sols.iter().min_by(|a, b| dist(a).total_cmp(&dist(b))));
                match pick {
                    Some(sol) => {
                        q1[..6].copy_from_slice(&sol.joints);
                        state.config = Some(sol.config);
                        let (pe, oe) = residual(self.robot, &q1[..n], &seg.end);
                        (true, pe, oe)
                    }
                    None => {
                        let out = self.limited.solve(&seg.end, &q0[..n], &mut q1[..n]);
                        (false, out.position_error, out.orientation_error)
                    }
                }
            }
            _ => {
                let out =
                    self.limited
                        .solve_with_restarts(&seg.end, &q0[..n], RESTARTS, &mut q1[..n]);
                (out.converged, out.position_error, out.orientation_error)
            }
        };
        if !converged {
            let (pe, oe) = (end_pe, end_oe);
            self.emit(
                state,
                sink,
                EmitArgs {
                    segment: seg.index,
                    waypoint: Some(seg.index + 1),
                    motion: Motion::Joint,
                    target: seg.end,
                    reach: Reach::Unreachable,
                    q: q0,
                    pe,
                    oe,
                    dt: seg.duration,
                    ds: seg.length,
                    check_jump: false,
                    config_change: None,
                },
            );
            return;
        }
        // Joint-space steps: no joint moves more than one angle step (or length step for a
        // prismatic joint) between samples. Duration: the Cartesian terms, or the slowest
        // joint at its allowed speed, whichever is longer (a synchronised joint move).
        let scale = self.job.limits.joint_speed_scale;
        let mut steps = seg.steps.max(1);
        let mut duration = seg.duration;
        for (i, j) in self.robot.joints().iter().enumerate() {
            let d = (q1[i] - q0[i]).abs();
            let step = if j.kind.is_prismatic() {
                self.job.sampling.step
            } else {
                self.job.sampling.angle_step
            };
            steps = steps.max((d / step).ceil() as usize);
            duration = duration.max(d / (j.velocity * scale));
        }
        let dt = duration / steps as f64;
        let mut prev_p = seg.start.translation.vector;
        for i in 1..=steps {
            let u = i as f64 / steps as f64;
            let mut q = [0.0; MAX_DOF];
            for k in 0..n {
                q[k] = q0[k] + (q1[k] - q0[k]) * u;
            }
            let pose = self.robot.chain().fk(&q[..n]);
            let ds = (pose.translation.vector - prev_p).norm();
            prev_p = pose.translation.vector;
            let (pe, oe) = if i == steps {
                (end_pe, end_oe)
            } else {
                (0.0, 0.0)
            };
            self.emit(
                state,
                sink,
                EmitArgs {
                    segment: seg.index,
                    waypoint: (i == steps).then_some(seg.index + 1),
                    motion: Motion::Joint,
                    target: if i == steps { seg.end } else { pose },
                    reach: Reach::Reached,
                    q,
                    pe,
                    oe,
                    dt,
                    ds,
                    check_jump: false,
                    config_change: None,
                },
            );
        }
    }

    fn emit(&self, state: &mut State, sink: &mut dyn SampleSink, a: EmitArgs) {
        let n = self.robot.dof();
        let (singularity, singularity_class) = if self.light {
            (1.0, None)
        } else {
            let mut jac = Jacobian::zeros();
            self.robot.chain().fk_jacobian(&a.q[..n], &mut jac);
            let m = self.model.measure(&jac, n);
            // The class is read where a finding or the path's minimum needs it: below the
            // warning threshold or at a new smallest measure.
            let class = if m < self.class_below || m < state.min_measure {
                self.model.classify(self.robot.chain(), &a.q[..n])
            } else {
                None
            };
            state.min_measure = state.min_measure.min(m);
            (m, class)
        };
        let mut joint_speed = [0.0; MAX_DOF];
        let mut tool_angular_speed = 0.0;
        let mut jump = None;
        if let Some(prev) = &state.prev {
            if a.dt > 0.0 {
                tool_angular_speed =
                    rotation::angle_between(&prev.target.rotation, &a.target.rotation) / a.dt;
            }
            let both_reached = prev.reach == Reach::Reached && a.reach == Reach::Reached;
            if both_reached && a.check_jump {
                jump = self.find_jump(prev, &a.target, &a.q);
                if let Some(change) = a.config_change {
                    // A change of configuration is a jump whatever the midpoint test says.
                    let mut delta = [0.0; MAX_DOF];
                    for (k, d) in delta.iter_mut().enumerate().take(n) {
                        *d = a.q[k] - prev.joints[k];
                    }
                    jump = Some(Jump {
                        delta,
                        config_change: Some(change),
                    });
                }
            }
            if both_reached && jump.is_none() && a.dt > 0.0 {
                for ((v, q), q_prev) in joint_speed.iter_mut().zip(&a.q).zip(&prev.joints).take(n) {
                    *v = (q - q_prev) / a.dt;
                }
            }
        }
        state.s += a.ds;
        state.t += a.dt;
        let rec = SampleRecord {
            index: state.index,
            segment: a.segment,
            waypoint: a.waypoint,
            motion: a.motion,
            s: state.s,
            t: state.t,
            dt: a.dt,
            target: a.target,
            reach: a.reach,
            position_error: a.pe,
            orientation_error: a.oe,
            joints: a.q,
            joint_speed,
            tool_angular_speed,
            singularity,
            singularity_class,
            jump,
        };
        sink.sample(self.robot, &rec);
        state.index += 1;
        if a.reach == Reach::Reached {
            state.last_good = a.q;
        }
        // Keep the warm start on the last reached joints (a failed or restarted solve, or a
        // joint segment, leaves it elsewhere).
        if state.warm.joints()[..n] != state.last_good[..n] {
            state.warm.reset(&state.last_good[..n]);
        }
        state.prev = Some(rec);
    }

    /// Is the joint step from `prev` to (`target`, `q`) a discontinuity? Compare the pose
    /// of the joint-space midpoint with the Cartesian midpoint; where they differ by more than
    /// the IK tolerance, solve the Cartesian midpoint and recurse into the half with the larger
    /// joint step. A step that keeps its size while the Cartesian step halves
    /// [`JUMP_DEPTH`] times is a jump.
    fn find_jump(
        &self,
        prev: &SampleRecord,
        target: &Isometry3<f64>,
        q: &[f64; MAX_DOF],
    ) -> Option<Jump> {
        let n = self.robot.dof();
        let opts = self.tracker.options;
        let size = |a: &[f64; MAX_DOF], b: &[f64; MAX_DOF]| {
            (0..n).fold(0.0f64, |m, k| m.max((a[k] - b[k]).abs()))
        };
        let original = size(&prev.joints, q);
        if original == 0.0 {
            return None;
        }
        let (mut qa, mut qb) = (prev.joints, *q);
        let (mut pa, mut pb) = (prev.target, *target);
        for _ in 0..JUMP_DEPTH {
            let mut qm = [0.0; MAX_DOF];
            for k in 0..n {
                qm[k] = 0.5 * (qa[k] + qb[k]);
            }
            let cart_mid = Isometry3::from_parts(
                nalgebra::Translation3::from((pa.translation.vector + pb.translation.vector) * 0.5),
                rotation::Geodesic::new(&pa.rotation, &pb.rotation).at(0.5),
            );
            let joint_mid = self.robot.chain().fk(&qm[..n]);
            let dev_p = (joint_mid.translation.vector - cart_mid.translation.vector).norm();
            let dev_r = rotation::angle_between(&joint_mid.rotation, &cart_mid.rotation);
            if dev_p <= opts.position_tolerance && dev_r <= opts.orientation_tolerance {
                return None;
            }
            let mut qs = [0.0; MAX_DOF];
            let out = self.tracker.solve(&cart_mid, &qm[..n], &mut qs[..n]);
            if !out.converged {
                // The midpoint itself cannot be solved from here: the step crosses a
                // singularity or a branch boundary.
                break;
            }
            if size(&qa, &qs) >= size(&qs, &qb) {
                qb = qs;
                pb = cart_mid;
            } else {
                qa = qs;
                pa = cart_mid;
            }
        }
        if size(&qa, &qb) > JUMP_KEEP_FRACTION * original {
            let mut delta = [0.0; MAX_DOF];
            for k in 0..n {
                delta[k] = q[k] - prev.joints[k];
            }
            Some(Jump {
                delta,
                config_change: None,
            })
        } else {
            None
        }
    }
}

struct State {
    prev: Option<SampleRecord>,
    /// The tracker's warm start: always the last reached joints, evaluated.
    warm: WarmStart,
    /// Configuration followed by the closed-form solver.
    config: Option<Config>,
    /// Smallest singularity measure so far.
    min_measure: f64,
    index: usize,
    s: f64,
    t: f64,
    last_good: [f64; MAX_DOF],
}

struct EmitArgs {
    segment: usize,
    waypoint: Option<usize>,
    motion: Motion,
    target: Isometry3<f64>,
    reach: Reach,
    q: [f64; MAX_DOF],
    pe: f64,
    oe: f64,
    dt: f64,
    ds: f64,
    check_jump: bool,
    config_change: Option<(Config, Config)>,
}

fn residual(robot: &Robot, q: &[f64], target: &Isometry3<f64>) -> (f64, f64) {
    let pose = robot.chain().fk(q);
    (
        (pose.translation.vector - target.translation.vector).norm(),
        rotation::angle_between(&pose.rotation, &target.rotation),
    )
}
