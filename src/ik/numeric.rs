//! Numerical IK: damped least squares with an adaptive damping factor (Levenberg–Marquardt)
//! on the 6-D pose error, joint limits enforced inside the iteration.
//!
//! Each step solves `(Jₛ Jₛᵀ + λ² I) y = eₛ` and moves `Δq = Jₛᵀ y`, where `Jₛ` is the
//! geometric Jacobian with its linear rows divided by the arm's reach (so metres and radians
//! weigh alike) and `eₛ` the pose error scaled the same way. Far from singularities λ shrinks
//! and the step becomes Gauss–Newton (fast, quadratic convergence); near them λ grows and the
//! step stays bounded (the singularity-robust inverse). The new joints are clamped into their
//! ranges before the pose is evaluated, so every iterate, and the result, is within limits.
//!
//! Redundant arms (7 axes): `Jₛᵀ (Jₛ Jₛᵀ + λ² I)⁻¹` is the minimum-norm step, so each iteration
//! moves the joints as little as possible; started from a seed, the solution is the one the
//! iteration reaches with least joint motion from that seed. That is the documented secondary
//! objective: least motion from the seed.

use super::pose_error;
use crate::robot::{Jacobian, Joints, Robot, MAX_DOF};
use nalgebra::{Isometry3, Matrix6, Vector6};

/// Tolerances and effort of the numerical solver.
#[derive(Debug, Clone, Copy)]
pub struct IkOptions {
    /// Largest TCP position error accepted as solved (m). Default 1e-5 m (0.01 mm): an order
    /// below the repeatability of industrial arms, so IK error never hides a real deviation.
    pub position_tolerance: f64,
    /// Largest orientation error accepted as solved (rad). Default 0.001° (1.75e-5 rad): at
    /// a 200 mm tool this moves the tip by 3.5 µm, matching the position tolerance.
    pub orientation_tolerance: f64,
    /// Iteration cap. Warm-started path samples converge in 2–4 iterations; 100 leaves room
    /// for cold starts while bounding the cost of an unreachable target.
    pub max_iterations: u32,
    /// Largest change of any joint in one iteration (rad or m). Keeps a warm-started solve on
    /// the branch it started on instead of leaping across the workspace. 0.5 rad.
    pub max_step: f64,
}

impl Default for IkOptions {
    fn default() -> Self {
        IkOptions {
            position_tolerance: 1e-5,
            orientation_tolerance: 0.001_f64.to_radians(),
            max_iterations: 100,
            max_step: 0.5,
        }
    }
}

/// The state a warm-started solve begins from and leaves behind: joints with their pose and
/// Jacobian already evaluated. Plain data on the stack; one per followed path.
#[derive(Debug, Clone, Copy)]
pub struct WarmStart {
    q: Joints,
    pose: Isometry3<f64>,
    jac: Jacobian,
    ready: bool,
}

impl Default for WarmStart {
    fn default() -> Self {
        Self::new()
    }
}

impl WarmStart {
    /// An empty state (joints zero, not evaluated).
    pub fn new() -> Self {
        WarmStart {
            q: Joints::default(),
            pose: Isometry3::identity(),
            jac: Jacobian::zeros(),
            ready: false,
        }
    }

    /// Start over from joints `q` (evaluated on the next solve).
    pub fn reset(&mut self, q: &Joints) {
        self.q = *q;
        self.ready = false;
    }

    /// True when pose and Jacobian of the stored joints are evaluated.
    pub fn is_ready(&self) -> bool {
        self.ready
    }

    /// The stored joints.
    pub fn joints(&self) -> &Joints {
        &self.q
    }
}

/// Solve `a x = b` for a symmetric positive-definite 6×6 `a` by Cholesky factorisation,
/// written out for the fixed size (about three times faster here than the general routine).
/// `None` when a pivot is not positive (the matrix is not positive definite).
// Index loops mirror the textbook Cholesky recurrences, which is clearer here than iterators.
#[allow(clippy::needless_range_loop)]
#[inline]
fn solve_spd6(a: &Matrix6<f64>, b: &Vector6<f64>) -> Option<Vector6<f64>> {
    let mut l = [[0.0f64; 6]; 6];
    for j in 0..6 {
        let mut d = a[(j, j)];
        for k in 0..j {
            d -= l[j][k] * l[j][k];
        }
        if d <= 0.0 || !d.is_finite() {
            return None;
        }
        let djj = d.sqrt();
        l[j][j] = djj;
        let inv = 1.0 / djj;
        for i in j + 1..6 {
            let mut v = a[(i, j)];
            for k in 0..j {
                v -= l[i][k] * l[j][k];
            }
            l[i][j] = v * inv;
        }
    }
    let mut y = [0.0f64; 6];
    for i in 0..6 {
        let mut v = b[i];
        for k in 0..i {
            v -= l[i][k] * y[k];
        }
        y[i] = v / l[i][i];
    }
    let mut x = [0.0f64; 6];
    for i in (0..6).rev() {
        let mut v = y[i];
        for k in i + 1..6 {
            v -= l[k][i] * x[k];
        }
        x[i] = v / l[i][i];
    }
    Some(Vector6::from_column_slice(&x))
}

/// What a solve achieved. The joints are written to the caller's buffer.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IkOutcome {
    /// Both residuals are within tolerance (and the joints are within limits, always).
    pub converged: bool,
    /// Remaining TCP position error (m).
    pub position_error: f64,
    /// Remaining orientation error (rad).
    pub orientation_error: f64,
    /// Iterations used.
    pub iterations: u32,
    /// Random restarts run after the seed's solve failed
    /// ([`NumericIk::solve_with_restarts`]; 0 from the other solves).
    pub restarts: u32,
}

/// A numerical IK solver bound to one robot (with its tool). Cheap to build; holds copies of
/// the limits so that the hot loop touches only stack data.
#[derive(Debug, Clone)]
pub struct NumericIk<'r> {
    robot: &'r Robot,
    lower: [f64; MAX_DOF],
    upper: [f64; MAX_DOF],
    length_scale: f64,
    /// Tolerances and effort; may be changed between solves.
    pub options: IkOptions,
}

/// Damping bounds. λ² = 1e-12 is numerically zero next to the unit-scale entries of Jₛ Jₛᵀ
/// (pure Gauss–Newton); λ² = 1e4 makes steps vanishingly small: the solve is stuck there.
const LAMBDA_SQ_MIN: f64 = 1e-12;
const LAMBDA_SQ_MAX: f64 = 1e4;
const LAMBDA_SQ_START: f64 = 1e-6;
/// Nudged restarts after a failed descent (see [`NumericIk::solve`]).
const RETRIES: usize = 4;
/// A joint within this distance (rad or m) of a limit counts as resting on it. Far below any
/// tolerance of interest, above the rounding of a clamped value.
const LIMIT_CONTACT: f64 = 1e-12;

/// `scaled_jjt` without the columns of locked joints.
#[inline]
fn scaled_jjt_masked(
    jac: &Jacobian,
    n: usize,
    length_scale: f64,
    locked: &[bool; MAX_DOF],
) -> Matrix6<f64> {
    let mut m = Matrix6::zeros();
    let inv = 1.0 / length_scale;
    for i in (0..n).filter(|&i| !locked[i]) {
        let c = jac.column(i);
        let col = nalgebra::Vector6::new(c[0] * inv, c[1] * inv, c[2] * inv, c[3], c[4], c[5]);
        m += col * col.transpose();
    }
    m
}

impl<'r> NumericIk<'r> {
    /// A solver whose joints stay within the URDF position limits (each step is clamped into
    /// them; continuous joints are unbounded).
    pub fn new(robot: &'r Robot, options: IkOptions) -> Self {
        let mut lower = [f64::NEG_INFINITY; MAX_DOF];
        let mut upper = [f64::INFINITY; MAX_DOF];
        for (i, j) in robot.joints().iter().enumerate() {
            lower[i] = j.lower;
            upper[i] = j.upper;
        }
        Self::with_bounds(robot, options, lower, upper)
    }

    /// A solver that ignores the position limits: it follows the arm's motion by continuity
    /// so that the path checker can tell where, and by how much, that motion would leave a
    /// joint's range (a `joint_limit` finding) rather than stalling at the limit.
    pub fn unlimited(robot: &'r Robot, options: IkOptions) -> Self {
        Self::with_bounds(
            robot,
            options,
            [f64::NEG_INFINITY; MAX_DOF],
            [f64::INFINITY; MAX_DOF],
        )
    }

    fn with_bounds(
        robot: &'r Robot,
        options: IkOptions,
        lower: [f64; MAX_DOF],
        upper: [f64; MAX_DOF],
    ) -> Self {
        NumericIk {
            robot,
            lower,
            upper,
            length_scale: robot.reach(),
            options,
        }
    }

    /// The robot solved for.
    pub fn robot(&self) -> &'r Robot {
        self.robot
    }

    #[inline]
    fn scaled(&self, e: &Vector6<f64>) -> Vector6<f64> {
        let s = 1.0 / self.length_scale;
        Vector6::new(e[0] * s, e[1] * s, e[2] * s, e[3], e[4], e[5])
    }

    #[inline]
    fn converged(&self, e: &Vector6<f64>) -> bool {
        e.fixed_rows::<3>(0).norm() <= self.options.position_tolerance
            && e.fixed_rows::<3>(3).norm() <= self.options.orientation_tolerance
    }

    /// Solve for `base_T_tcp = target`, starting at `seed` (`dof` joints, clamped into the
    /// limits; missing ones start at zero). Writes the best joints found to `q_out` (`dof`
    /// joints) whether or not it converged. Allocation-free.
    pub fn solve(&self, target: &Isometry3<f64>, seed: &Joints, q_out: &mut Joints) -> IkOutcome {
        let n = self.robot.dof();
        let first = self.descend(target, seed, q_out);
        if first.converged {
            return first;
        }
        // A local minimum, typically a joint driven onto its limit near a wrist singularity
        // (where a small change of seed decides between two wrist branches). Retry from the
        // seed nudged by a fixed pattern of ±0.25 rad, keeping the best: still local to the
        // seed, deterministic, and paid only on failure.
        let mut best = first;
        let mut best_q = *q_out;
        let mut rng = crate::rng::SplitMix64::new(0x6e75_6467);
        let mut nudged = Joints::zeros(n);
        let mut q = Joints::zeros(n);
        for _ in 0..RETRIES {
            for (i, v) in nudged.iter_mut().enumerate() {
                *v = seed.get(i).copied().unwrap_or(0.0) + (rng.next_f64() - 0.5) * 0.5;
            }
            let out = self.descend(target, &nudged, &mut q);
            if out.converged || self.score(&out) < self.score(&best) {
                best = out;
                best.iterations += first.iterations;
                best_q = q;
                if out.converged {
                    break;
                }
            }
        }
        *q_out = best_q;
        best
    }

    #[inline]
    fn score(&self, o: &IkOutcome) -> f64 {
        o.position_error / self.length_scale + o.orientation_error
    }

    /// One damped-least-squares descent from `seed`.
    fn descend(&self, target: &Isometry3<f64>, seed: &Joints, q_out: &mut Joints) -> IkOutcome {
        let n = self.robot.dof();
        let mut state = WarmStart::new();
        state.q = Joints::zeros(n);
        for (i, (q, s)) in state.q.iter_mut().zip(seed.iter()).enumerate() {
            *q = s.clamp(self.lower[i], self.upper[i]);
        }
        state.pose = self.robot.chain().fk_jacobian(&state.q, &mut state.jac);
        let out = self.descend_from(target, &mut state);
        *q_out = state.q;
        out
    }

    /// Solve from the state of a previous solve (its joints, pose and Jacobian), saving the
    /// first evaluation: the usual case along a path, where each sample starts at the
    /// previous sample's solution. On return `warm` holds the result (joints, pose,
    /// Jacobian), ready for the next sample; `q_out` gets the joints. A `warm` that is not
    /// [`WarmStart::is_ready`] (new, or [`WarmStart::reset`]) is evaluated first. Falls back
    /// to [`solve`](Self::solve)'s nudged retries when the descent fails.
    pub fn solve_warm(
        &self,
        target: &Isometry3<f64>,
        warm: &mut WarmStart,
        q_out: &mut Joints,
    ) -> IkOutcome {
        if !warm.ready {
            let mut q = Joints::zeros(self.robot.dof());
            for (i, (v, w)) in q.iter_mut().zip(warm.q.iter()).enumerate() {
                *v = w.clamp(self.lower[i], self.upper[i]);
            }
            warm.q = q;
            warm.pose = self.robot.chain().fk_jacobian(&warm.q, &mut warm.jac);
            warm.ready = true;
        }
        let seed = warm.q;
        let out = self.descend_from(target, warm);
        if out.converged {
            *q_out = warm.q;
            return out;
        }
        let out = self.solve(target, &seed, q_out);
        warm.reset(q_out);
        out
    }

    /// The descent proper, from an evaluated state; leaves the final state in `state`.
    fn descend_from(&self, target: &Isometry3<f64>, state: &mut WarmStart) -> IkOutcome {
        let chain = self.robot.chain();
        let n = chain.dof();
        let q = state.q.as_mut_slice();
        let mut jac = state.jac;
        let mut pose = state.pose;
        let mut err = pose_error(&pose, target);
        let mut cost = self.scaled(&err).norm_squared();
        let mut lambda_sq = LAMBDA_SQ_START;
        let mut trial = Joints::zeros(n);
        let mut trial_jac = Jacobian::zeros();
        let mut iterations = 0;
        while iterations < self.options.max_iterations && !self.converged(&err) {
            iterations += 1;
            let es = self.scaled(&err);
            // Active set: a joint resting on a limit whose step points outward is locked
            // (its column dropped) and the step recomputed, so the free joints do the work
            // instead of the clamp eating the step. At most n rounds.
            let mut locked = [false; MAX_DOF];
            let mut dq = [0.0; MAX_DOF];
            let mut singular = false;
            for _round in 0..=n {
                let jjt = scaled_jjt_masked(&jac, n, self.length_scale, &locked);
                let a = jjt + Matrix6::identity() * lambda_sq;
                let Some(y) = solve_spd6(&a, &es) else {
                    singular = true;
                    break;
                };
                let inv = 1.0 / self.length_scale;
                for i in 0..n {
                    dq[i] = if locked[i] {
                        0.0
                    } else {
                        let c = jac.column(i);
                        (c[0] * y[0] + c[1] * y[1] + c[2] * y[2]) * inv
                            + c[3] * y[3]
                            + c[4] * y[4]
                            + c[5] * y[5]
                    };
                }
                let mut newly_locked = false;
                for i in 0..n {
                    let at_lower = q[i] <= self.lower[i] + LIMIT_CONTACT && dq[i] < 0.0;
                    let at_upper = q[i] >= self.upper[i] - LIMIT_CONTACT && dq[i] > 0.0;
                    if !locked[i] && (at_lower || at_upper) {
                        locked[i] = true;
                        newly_locked = true;
                    }
                }
                if !newly_locked {
                    break;
                }
            }
            if singular {
                lambda_sq *= 10.0;
                if lambda_sq > LAMBDA_SQ_MAX {
                    break;
                }
                continue;
            }
            let biggest = dq[..n].iter().fold(0.0f64, |m, d| m.max(d.abs()));
            let shrink = if biggest > self.options.max_step {
                self.options.max_step / biggest
            } else {
                1.0
            };
            for (i, t) in trial.iter_mut().enumerate() {
                *t = (q[i] + dq[i] * shrink).clamp(self.lower[i], self.upper[i]);
            }
            let trial_pose = chain.fk_jacobian(&trial, &mut trial_jac);
            let trial_err = pose_error(&trial_pose, target);
            let trial_cost = self.scaled(&trial_err).norm_squared();
            if trial_cost < cost {
                q.copy_from_slice(&trial);
                jac = trial_jac;
                pose = trial_pose;
                err = trial_err;
                cost = trial_cost;
                lambda_sq = (lambda_sq * 0.1).max(LAMBDA_SQ_MIN);
            } else {
                lambda_sq *= 8.0;
                if lambda_sq > LAMBDA_SQ_MAX {
                    break;
                }
            }
        }
        state.pose = pose;
        state.jac = jac;
        state.ready = true;
        IkOutcome {
            converged: self.converged(&err),
            position_error: err.fixed_rows::<3>(0).norm(),
            orientation_error: err.fixed_rows::<3>(3).norm(),
            iterations,
            restarts: 0,
        }
    }

    /// Solve from `seed` first, then from up to `restarts` random in-range configurations
    /// (fixed seed, reproducible) until one converges. Returns the outcome of the converged
    /// solve, or of the best failed one (smallest scaled error) with its joints in `q_out`.
    pub fn solve_with_restarts(
        &self,
        target: &Isometry3<f64>,
        seed: &Joints,
        restarts: usize,
        q_out: &mut Joints,
    ) -> IkOutcome {
        let mut best = self.solve(target, seed, q_out);
        if best.converged {
            return best;
        }
        let mut best_q = *q_out;
        let mut rng = crate::rng::SplitMix64::new(0x1c0d_e5ee);
        let mut q = Joints::zeros(self.robot.dof());
        let mut tried = 0;
        for _ in 0..restarts {
            tried += 1;
            let start = self.robot.random_config(&mut rng);
            let out = self.solve(target, &start, &mut q);
            if out.converged || self.score(&out) < self.score(&best) {
                best = out;
                best_q = q;
                if out.converged {
                    break;
                }
            }
        }
        *q_out = best_q;
        best.restarts = tried;
        best
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spd_solve_matches_nalgebra_cholesky() {
        // source: nalgebra 0.30 Cholesky::solve as the reference
        let m = nalgebra::Matrix6::<f64>::from_fn(|i, j| ((i * 7 + j * 3) % 5) as f64 - 2.0);
        let a = m * m.transpose() + Matrix6::identity() * 0.5;
        let b = Vector6::new(1.0, -2.0, 0.5, 3.0, 0.0, -1.0);
        let reference = a.cholesky().unwrap().solve(&b);
        let ours = solve_spd6(&a, &b).unwrap();
        assert!((ours - reference).norm() < 1e-12);
        assert!(solve_spd6(&(-a), &b).is_none());
    }

    #[test]
    fn restarts_are_counted_only_after_the_seed_fails() {
        // source: common practice (a target 10 m out is beyond any 2 m arm, so every restart
        // runs; the pose of the seed itself converges at once)
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let robot = crate::robot::load_urdf(&dir.join("robots/arm6.urdf"), None).unwrap();
        let ik = NumericIk::new(&robot, IkOptions::default());
        let seed = Joints::from([0.1, 0.2, -0.3, 0.4, 0.5, 0.6]);
        let mut q = Joints::zeros(6);
        let near = robot.chain().fk(&seed);
        assert_eq!(ik.solve_with_restarts(&near, &seed, 5, &mut q).restarts, 0);
        let far = Isometry3::translation(10.0, 0.0, 0.0);
        let out = ik.solve_with_restarts(&far, &seed, 5, &mut q);
        assert!(!out.converged);
        assert_eq!(out.restarts, 5);
    }
}
