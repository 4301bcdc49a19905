//! The jump test between two consecutive samples, and the second-order bound that settles
//! most steps without it.
//!
//! Bound. Let the step run from joints `qa` to `qb` (both solving their targets up to the
//! residuals `pe`, `oe`), `Δq = qb − qa`, `A = Σ|Δq_i|` over the (all revolute) joints, and
//! `q(u) = qa + u·Δq`. The test compares the pose at `q(½)` with the Cartesian midpoint of
//! the two targets; it declares the step smooth when both deviations are within the IK
//! tolerances. Along `q(u)`:
//!
//! - Position. `p(u)` has `p'' = Σ_ij ∂²p/∂q_i∂q_j Δq_i Δq_j`. For revolute joints every
//!   second derivative is a double cross product of unit axes with the lever from a joint
//!   axis to the TCP (`z_j × (z_i × (p − o_i))` and its like), so its norm is at most
//!   `R`, the largest distance from a joint origin to the TCP, and `|p''| ≤ R·A²`. The
//!   interpolation remainder of a C² curve at the midpoint is `|p(½) − (p(0) + p(1))/2| ≤
//!   max|p''|/8`. `R` is bounded by the sum of the chain's fixed offsets after the first joint
//!   and the tool (the radius of [`crate::robot::Robot::reach_bound`], triangle inequality).
//!   The targets differ from `p(0)`, `p(1)` by the position residuals, which add at most
//!   their mean: `dev_p ≤ R·A²/8 + (pe_a + pe_b)/2`.
//! - Orientation. As a unit quaternion `Q(u)`, `Q' = ½ ω Q` with the angular velocity
//!   `ω = Σ z_i Δq_i` (`|ω| ≤ A`), `ω' = Σ_{j<i} (z_j × z_i) Δq_j Δq_i` (`|ω'| ≤ A²/2`), so
//!   `Q'' = ½ ω' Q − ¼ |ω|² Q` and `|Q''| ≤ A²/2`: the chord from `Q(½)` to the chord
//!   midpoint `M` of `Q(0)`, `Q(1)` is at most `A²/16`. Each target quaternion lies within the
//!   chord `oe/2` of its sample's (a rotation by `oe` moves a unit quaternion by the chord
//!   `2 sin(oe/4)`), which moves `M` by at most their mean: `δ = A²/16 + (oe_a + oe_b)/4`.
//!   The geodesic midpoint of the targets is their chord midpoint normalised, at most `δ`
//!   further (its norm is at least `1 − δ`), so the chord to it is at most `2δ` and the
//!   rotation angle at most `4·asin(δ)`, about `A²/4`. The argument needs the two targets in
//!   one hemisphere (the geodesic is the short arc), which holds whenever `δ` is small:
//!   the bound is used only where it is far below the tolerances anyway.
//!
//! When both bounds are within the tolerances (less [`BOUND_ROUNDING_MARGIN`]) the test would
//! find the step smooth at its first midpoint: it is skipped, with the same answer.
//! Chains with a prismatic joint always run the test.

use super::SampleRecord;
use super::{Jump, WalkTotals};
use crate::ik::{IkOptions, NumericIk};
use crate::robot::{Chain, Joints, Robot};
use crate::rotation;
use nalgebra::Isometry3;

/// Depth of the jump search: each level halves the Cartesian step. After 16 halvings the step
/// is 1/65536 of a sample step; a continuous joint path shrinks with it, a jump does not.
const JUMP_DEPTH: u32 = 16;

/// A joint step that still holds more than this fraction of the original step after
/// [`JUMP_DEPTH`] halvings did not shrink with the Cartesian step: a discontinuity. A
/// continuous path keeps about 2⁻¹⁶ of it; any fraction far between the two works.
const JUMP_KEEP_FRACTION: f64 = 0.25;

/// The bound must clear the tolerances by this much (m for position, rad for orientation)
/// before the test is skipped: the test's own deviations are computed in floating point
/// (forward kinematics and `atan2`, errors near 1e-15), and a bound a hair under the
/// tolerance must not skip a step the computed test would have examined further.
pub const BOUND_ROUNDING_MARGIN: f64 = 1e-9;

/// Upper bounds (m, rad) on the deviation of the pose at the joint-space midpoint of a step
/// from the Cartesian midpoint of its two targets (see the module doc). `lever`: the largest
/// distance from a joint origin to the TCP (m); `step_sum`: `Σ|Δq_i|` over the step (rad, all
/// joints revolute); `residuals`: (position m, orientation rad) of each end's joints against
/// its target. Infinite where the argument does not apply (δ ≥ 1).
pub fn midpoint_deviation_bound(
    lever: f64,
    step_sum: f64,
    residuals: [(f64, f64); 2],
) -> (f64, f64) {
    let a2 = step_sum * step_sum;
    let position = lever * a2 / 8.0 + 0.5 * (residuals[0].0 + residuals[1].0);
    let delta = a2 / 16.0 + 0.25 * (residuals[0].1 + residuals[1].1);
    let orientation = if delta < 1.0 {
        4.0 * delta.asin()
    } else {
        f64::INFINITY
    };
    (position, orientation)
}

/// The jump test of a walk: the chain's data the bound needs and the midpoint solver.
pub(super) struct JumpTest<'a> {
    robot: &'a Robot,
    options: IkOptions,
    /// Solves the Cartesian midpoints (position limits not applied).
    ik: NumericIk<'a>,
    /// Largest distance from a joint origin to the TCP (m), for all-revolute chains; `None`
    /// when a joint is prismatic (the bound is not used).
    lever: Option<f64>,
    /// Residual (m, rad) assumed for a solution whose residual was not measured (0 from the
    /// walk): the closed form's model-vs-chain deviation, 0 otherwise.
    unmeasured: (f64, f64),
}

impl<'a> JumpTest<'a> {
    /// The test for `robot` with the IK `options`.
    pub fn new(robot: &'a Robot, options: IkOptions) -> Self {
        let all_revolute = robot.joints().iter().all(|j| !j.kind.is_prismatic());
        JumpTest {
            robot,
            options,
            ik: NumericIk::unlimited(robot, options),
            lever: all_revolute.then(|| robot.reach_bound().1),
            unmeasured: (0.0, 0.0),
        }
    }

    /// Solutions whose residual the walk reports as 0 may in truth be off by up to
    /// (`position` m, `orientation` rad): the closed form's model deviation.
    pub fn with_unmeasured_residual(mut self, position: f64, orientation: f64) -> Self {
        self.unmeasured = (position, orientation);
        self
    }

    /// True when the bound proves that the step from `prev` to `q` (residuals `pe`, `oe`)
    /// passes the test's first midpoint comparison.
    fn bound_settles(&self, prev: &SampleRecord, q: &Joints, pe: f64, oe: f64) -> bool {
        let Some(lever) = self.lever else {
            return false;
        };
        let step_sum: f64 = q.iter().zip(&prev.joints).map(|(a, b)| (a - b).abs()).sum();
        let (up, uo) = self.unmeasured;
        let ends = [
            (prev.position_error.max(up), prev.orientation_error.max(uo)),
            (pe.max(up), oe.max(uo)),
        ];
        let (dev_p, dev_r) = midpoint_deviation_bound(lever, step_sum, ends);
        dev_p <= self.options.position_tolerance - BOUND_ROUNDING_MARGIN
            && dev_r <= self.options.orientation_tolerance - BOUND_ROUNDING_MARGIN
    }

    /// Is the joint step from `prev` to (`target`, `q`, residuals `pe`, `oe`) a
    /// discontinuity? Where the bound does not settle it, compare the pose of the joint-space
    /// midpoint with the Cartesian midpoint; where they differ by more than the IK
    /// tolerance, solve the Cartesian midpoint and recurse into the half with the larger
    /// joint step. A step that keeps its size while the Cartesian step halves [`JUMP_DEPTH`]
    /// times is a jump. Midpoint solves are counted in `work`.
    pub fn find(
        &self,
        prev: &SampleRecord,
        target: &Isometry3<f64>,
        q: &Joints,
        (pe, oe): (f64, f64),
        work: &mut WalkTotals,
    ) -> Option<Jump> {
        let opts = self.options;
        let size = |a: &Joints, b: &Joints| {
            a.iter()
                .zip(b)
                .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()))
        };
        let original = size(&prev.joints, q);
        if original == 0.0 || self.bound_settles(prev, q, pe, oe) {
            return None;
        }
        let chain: &Chain = self.robot.chain();
        let (mut qa, mut qb) = (prev.joints, *q);
        let (mut pa, mut pb) = (prev.target, *target);
        for _ in 0..JUMP_DEPTH {
            let qm = qa.map(|k, v| 0.5 * (v + qb[k]));
            let cart_mid = Isometry3::from_parts(
                nalgebra::Translation3::from((pa.translation.vector + pb.translation.vector) * 0.5),
                rotation::Geodesic::new(&pa.rotation, &pb.rotation).at(0.5),
            );
            let joint_mid = chain.fk(&qm);
            let dev_p = (joint_mid.translation.vector - cart_mid.translation.vector).norm();
            let dev_r = rotation::angle_between(&joint_mid.rotation, &cart_mid.rotation);
            if dev_p <= opts.position_tolerance && dev_r <= opts.orientation_tolerance {
                return None;
            }
            let mut qs = Joints::zeros(qm.len());
            let out = self.ik.solve(&cart_mid, &qm, &mut qs);
            work.ik_solves += 1;
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
            Some(Jump {
                delta: q.map(|k, v| v - prev.joints[k]),
                config_change: None,
            })
        } else {
            None
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    fn demo_arm() -> Robot {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        crate::robot::load_urdf(&dir.join("robots/arm6.urdf"), None).unwrap()
    }

    #[test]
    fn midpoint_bound_never_below_the_true_deviation() {
        // The targets are the exact poses of both ends (residuals 0), so the Cartesian
        // midpoint is the chord midpoint of the positions and the geodesic midpoint of the
        // orientations; the bound must cover the joint midpoint's deviation from them on
        // every step, small and large (up to 0.3 rad per joint, where the bound is loose).
        // source: common practice (interpolation remainder max|f''|/8; derivation in the
        // module doc).
        let mut robot = demo_arm();
        robot.set_tool(Isometry3::translation(0.05, 0.0, 0.2));
        let chain = robot.chain();
        let lever = robot.reach_bound().1;
        let mut rng = SplitMix64::new(0xb0_u64);
        let mut tight = 0.0f64;
        for k in 0..4000 {
            let qa = robot.random_config(&mut rng);
            let scale = [1e-3, 1e-2, 0.1, 0.3][k % 4];
            let qb = qa.map(|_, v| v + scale * (2.0 * rng.next_f64() - 1.0));
            let qm = qa.map(|i, v| 0.5 * (v + qb[i]));
            let (pa, pb, pm) = (chain.fk(&qa), chain.fk(&qb), chain.fk(&qm));
            let cart = (pa.translation.vector + pb.translation.vector) * 0.5;
            let geo = rotation::Geodesic::new(&pa.rotation, &pb.rotation).at(0.5);
            let dev_p = (pm.translation.vector - cart).norm();
            let dev_r = rotation::angle_between(&pm.rotation, &geo);
            let step_sum: f64 = qa.iter().zip(&qb).map(|(a, b)| (a - b).abs()).sum();
            let (bp, br) = midpoint_deviation_bound(lever, step_sum, [(0.0, 0.0); 2]);
            assert!(dev_p <= bp, "step {k}: position {dev_p} above bound {bp}");
            assert!(dev_r <= br, "step {k}: angle {dev_r} above bound {br}");
            if dev_p > 0.0 {
                tight = tight.max(dev_p / bp);
            }
        }
        // A bound that is never approached would skip nothing useful; the true deviation
        // comes within a factor of 20 of it somewhere.
        // source: common practice.
        assert!(tight > 0.05, "position bound never approached: {tight}");
    }

    #[test]
    fn midpoint_bound_adds_the_residuals() {
        // With a zero step the joint midpoint is either end; its deviation from the targets'
        // midpoint is at most the mean position residual, and 4·asin((oe_a + oe_b)/4) in angle.
        // source: common practice (triangle inequality).
        let (p, r) = midpoint_deviation_bound(2.0, 0.0, [(1e-6, 2e-6), (3e-6, 6e-6)]);
        assert!((p - 2e-6).abs() < 1e-18);
        assert!((r - 4.0 * (2e-6f64).asin()).abs() < 1e-18);
        // Past the argument's range the bound is infinite, never a small number.
        assert_eq!(
            midpoint_deviation_bound(1.0, 5.0, [(0.0, 0.0); 2]).1,
            f64::INFINITY
        );
    }
}
