//! How the arm is followed from one sample to the next: on one configuration's branch of the
//! closed form ([`ClosedBranch`]) or by numerical continuity from the previous joints
//! ([`NumericContinuity`]). The walker holds one [`Follower`] and asks it for each linear
//! sample and each joint move's end; everything else (reach sphere, jump test, speeds) is the
//! walker's.

use super::{residual, StartChoice, RESTARTS};
use crate::ik::analytic::{AnalyticSolution, Config, OrthoParallel, Solutions};
use crate::ik::{IkOptions, NumericIk, WarmStart};
use crate::robot::{Joints, Robot};
use nalgebra::Isometry3;

use super::Reach;

/// The joints found for one target.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Solved {
    /// The joints; the last reached ones when the target is unreachable.
    pub q: Joints,
    pub reach: Reach,
    /// Remaining position (m) and orientation (rad) error.
    pub position_error: f64,
    pub orientation_error: f64,
    /// The configuration's branch ended and the walk went on in another, (from, to).
    pub config_change: Option<(Config, Config)>,
    /// The solve ran a full search after failing: a random-restart search or the closed
    /// form's numerical distance probe.
    pub full_search: bool,
    /// Random restarts the full search ran.
    pub restarts: u32,
    /// The residuals are not measured yet (0 here): an exact closed-form solution, whose
    /// residual the walker reads off the forward kinematics it runs anyway, and only where
    /// it reports it.
    pub residual_pending: bool,
}

impl Solved {
    /// Solved at joints `q` with the residuals given.
    pub fn reached(q: Joints, position_error: f64, orientation_error: f64) -> Self {
        Solved {
            q,
            reach: Reach::Reached,
            position_error,
            orientation_error,
            config_change: None,
            full_search: false,
            restarts: 0,
            residual_pending: false,
        }
    }

    /// An exact solution at `q` whose residuals are left to the walker (see
    /// `residual_pending`).
    pub fn exact(q: Joints) -> Self {
        Solved {
            residual_pending: true,
            ..Solved::reached(q, 0.0, 0.0)
        }
    }

    /// The same solve, marked as having run a full search with `restarts` random restarts.
    fn searched(self, restarts: u32) -> Self {
        Solved {
            full_search: true,
            restarts,
            ..self
        }
    }

    /// Not solved: the joints stay at `last_good`, the residuals say how far the pose is.
    pub fn unreachable(last_good: Joints, position_error: f64, orientation_error: f64) -> Self {
        Solved {
            reach: Reach::Unreachable,
            ..Solved::reached(last_good, position_error, orientation_error)
        }
    }
}

/// One way of following the arm along the path. Implementations allocate nothing per call.
pub(crate) trait Follower {
    /// Set up for a walk from `start`.
    fn begin(&mut self, start: &StartChoice);

    /// Joints for a linear-segment sample at `base_T_target`, continuing from `last_good`.
    /// `full_search`: try hard (restarts, probes) on failure. `probe`: the distance of the
    /// last measured unreachable sample, carried between full searches.
    fn sample(
        &mut self,
        base_T_target: &Isometry3<f64>,
        last_good: &Joints,
        full_search: bool,
        probe: &mut (f64, f64),
    ) -> Solved;

    /// Joints at the end `base_T_end` of a joint move starting at `q0`.
    fn move_end(&mut self, base_T_end: &Isometry3<f64>, q0: &Joints) -> Solved;

    /// A sample was emitted; `last_good` are the last reached joints.
    fn settle(&mut self, _last_good: &Joints) {}

    /// The configuration followed now, for a follower on the closed form's branches.
    fn branch(&self) -> Option<Config> {
        None
    }

    /// Follow configuration `config` from here on (a walk resumed mid-path); a follower
    /// without branches ignores it.
    fn set_branch(&mut self, _config: Config) {}
}

/// Numerical continuity: the position-unlimited tracker warm-started from the previous
/// sample; a restart search inside the limits when it fails.
pub(crate) struct NumericContinuity<'a> {
    n: usize,
    tracker: NumericIk<'a>,
    limited: NumericIk<'a>,
    /// Always the last reached joints, evaluated (see [`Follower::settle`]).
    warm: WarmStart,
}

impl<'a> NumericContinuity<'a> {
    /// A follower for `robot` with the IK `options`.
    pub fn new(robot: &'a Robot, options: IkOptions) -> Self {
        NumericContinuity {
            n: robot.dof(),
            tracker: NumericIk::unlimited(robot, options),
            limited: NumericIk::new(robot, options),
            warm: WarmStart::new(),
        }
    }
}

impl Follower for NumericContinuity<'_> {
    fn begin(&mut self, start: &StartChoice) {
        self.warm.reset(&start.joints);
    }

    fn sample(
        &mut self,
        base_T_target: &Isometry3<f64>,
        last_good: &Joints,
        full_search: bool,
        _probe: &mut (f64, f64),
    ) -> Solved {
        let mut q = Joints::zeros(self.n);
        let out = self
            .tracker
            .solve_warm(base_T_target, &mut self.warm, &mut q);
        if out.converged {
            return Solved::reached(q, out.position_error, out.orientation_error);
        }
        if !full_search {
            return Solved::unreachable(*last_good, out.position_error, out.orientation_error);
        }
        let alt = self
            .limited
            .solve_with_restarts(base_T_target, last_good, RESTARTS, &mut q);
        let solved = if alt.converged {
            Solved::reached(q, alt.position_error, alt.orientation_error)
        } else {
            Solved::unreachable(*last_good, alt.position_error, alt.orientation_error)
        };
        solved.searched(alt.restarts)
    }

    fn move_end(&mut self, base_T_end: &Isometry3<f64>, q0: &Joints) -> Solved {
        let mut q1 = Joints::zeros(self.n);
        let out = self
            .limited
            .solve_with_restarts(base_T_end, q0, RESTARTS, &mut q1);
        let solved = if out.converged {
            Solved::reached(q1, out.position_error, out.orientation_error)
        } else {
            Solved::unreachable(*q0, out.position_error, out.orientation_error)
        };
        if out.restarts > 0 {
            solved.searched(out.restarts)
        } else {
            solved
        }
    }

    fn settle(&mut self, last_good: &Joints) {
        // Keep the warm start on the last reached joints (a failed or restarted solve, or a
        // joint segment, leaves it elsewhere).
        if self.warm.joints() != last_good {
            self.warm.reset(last_good);
        }
    }
}

/// The closed form on one configuration's branch: windings nearest the previous joints,
/// limits not applied (a branch running into a limit is reported). Where the branch ends the
/// walk goes on in the nearest configuration that reaches the pose.
pub(crate) struct ClosedBranch<'a> {
    robot: &'a Robot,
    solver: &'a OrthoParallel,
    /// Numerical solve inside the limits: how far an unreachable pose is.
    limited: NumericIk<'a>,
    /// The configuration a walk starts in.
    start_config: Config,
    /// The configuration followed now.
    config: Config,
}

impl<'a> ClosedBranch<'a> {
    /// A follower on `solver`'s branch `config` (the start's configuration).
    pub fn new(
        robot: &'a Robot,
        solver: &'a OrthoParallel,
        config: Config,
        options: IkOptions,
    ) -> Self {
        ClosedBranch {
            robot,
            solver,
            limited: NumericIk::new(robot, options),
            start_config: config,
            config,
        }
    }
}

/// Largest joint difference between `s` and `q`.
fn distance(s: &AnalyticSolution, q: &Joints) -> f64 {
    (0..6).fold(0.0f64, |m, k| m.max((s.joints[k] - q[k]).abs()))
}

/// Where a configuration's branch ends at `base_T_target`: the configuration whose
/// closed-form solution lies nearest `last_good`, if any reaches the pose.
pub(super) fn nearest_config(
    solver: &OrthoParallel,
    base_T_target: &Isometry3<f64>,
    last_good: &Joints,
) -> Option<Config> {
    solver
        .solve_all(base_T_target)
        .iter()
        .map(|s| (distance(s, last_good), s.config))
        .min_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, c)| c)
}

/// The solution a joint move from `q0` ends in, among the in-range solutions `sols` of its
/// end: of configuration `config` nearest `q0`, else of any configuration nearest `q0` (a
/// joint move may change configuration).
pub(super) fn move_end_pick<'s>(
    sols: &'s Solutions,
    config: Config,
    q0: &Joints,
) -> Option<&'s AnalyticSolution> {
    let nearest =
        |a: &&AnalyticSolution, b: &&AnalyticSolution| distance(a, q0).total_cmp(&distance(b, q0));
    sols.iter()
        .filter(|s| s.config == config)
        .min_by(nearest)
        .or_else(|| sols.iter().min_by(nearest))
}

impl Follower for ClosedBranch<'_> {
    fn begin(&mut self, start: &StartChoice) {
        self.config = start.config.unwrap_or(self.start_config);
    }

    fn branch(&self) -> Option<Config> {
        Some(self.config)
    }

    fn set_branch(&mut self, config: Config) {
        self.config = config;
    }

    fn sample(
        &mut self,
        base_T_target: &Isometry3<f64>,
        last_good: &Joints,
        full_search: bool,
        probe: &mut (f64, f64),
    ) -> Solved {
        let config = self.config;
        // Stay on the configuration's branch, windings nearest the previous joints.
        if let Some(q) = self.solver.solve_near(base_T_target, last_good, config) {
            // Closed-form solutions are exact to rounding (see `Parameters`' model
            // deviation); the residual is measured only when it will be reported, from the
            // walker's own forward kinematics.
            return Solved::exact(q);
        }
        // The branch ends here (reach boundary of this configuration). Go on in the
        // configuration whose solution is nearest, if any reaches the pose.
        if let Some(other) = nearest_config(self.solver, base_T_target, last_good) {
            if let Some(q) = self.solver.solve_near(base_T_target, last_good, other) {
                self.config = other;
                let (pe, oe) = residual(self.robot, &q, base_T_target);
                return Solved {
                    config_change: Some((config, other)),
                    ..Solved::reached(q, pe, oe)
                };
            }
        }
        // Out of reach in every configuration: how far, from a local numerical solve.
        if full_search {
            let mut probe_q = Joints::zeros(self.robot.dof());
            let out = self.limited.solve(base_T_target, last_good, &mut probe_q);
            *probe = (out.position_error, out.orientation_error);
            return Solved::unreachable(*last_good, probe.0, probe.1).searched(0);
        }
        Solved::unreachable(*last_good, probe.0, probe.1)
    }

    fn move_end(&mut self, base_T_end: &Isometry3<f64>, q0: &Joints) -> Solved {
        // The in-range solution of the current configuration nearest the start, else of any
        // configuration (a joint move may change configuration; the branch followed
        // afterwards is the one the move ends in).
        let mut q1 = Joints::zeros(self.robot.dof());
        let sols = self.solver.solve(base_T_end);
        match move_end_pick(&sols, self.config, q0) {
            Some(sol) => {
                self.config = sol.config;
                let (pe, oe) = residual(self.robot, &sol.joints, base_T_end);
                Solved::reached(sol.joints, pe, oe)
            }
            None => {
                let out = self.limited.solve(base_T_end, q0, &mut q1);
                Solved::unreachable(*q0, out.position_error, out.orientation_error).searched(0)
            }
        }
    }
}
