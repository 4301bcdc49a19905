//! How close the arm is to a singularity, as one dimensionless number, and which kind of
//! singularity it is for arms with a spherical wrist.
//!
//! The measure is the inverse condition number `σ_min / σ_max` of the Jacobian whose linear
//! rows are divided by the arm's reach (so a metre of TCP motion weighs like a radian of tool
//! rotation): 1 for an isotropic pose, 0 at a singularity, independent of the arm's size. For
//! arms with fewer than six joints, `σ_min` is the smallest of the `dof` singular values.

use super::{scaled_jjt, spherical_wrist, Chain, Jacobian, Joints, Robot, MAX_DOF};
use nalgebra::{Isometry3, Vector3};

/// Singularity-measure threshold below which a `singularity` warning is raised. On the demo
/// arm 0.01 corresponds to the wrist within about 3.5° of alignment (axes 4 and 6), where
/// joints 4 and 6 turn about 16 times faster than the tool.
pub const DEFAULT_SINGULARITY_THRESHOLD: f64 = 0.01;

/// The three classic singularities of a 6-axis arm with a spherical wrist.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SingularityClass {
    /// Axes 4 and 6 aligned (θ5 = 0): the wrist loses a rotation.
    Wrist,
    /// The arm stretched out or folded back: the wrist centre cannot move along the arm.
    Elbow,
    /// The wrist centre on axis 1: axis 1 cannot move it.
    Shoulder,
}

impl SingularityClass {
    /// Lower-case name as written in reports (the same word as the JSON value).
    pub fn name(self) -> &'static str {
        match self {
            SingularityClass::Wrist => "wrist",
            SingularityClass::Elbow => "elbow",
            SingularityClass::Shoulder => "shoulder",
        }
    }
}

/// Everything needed to compute the measure and the class quickly per sample.
#[derive(Debug, Clone)]
pub struct SingularityModel {
    length_scale: f64,
    /// Wrist centre in the frame of joint 4 (index 3), when the arm is a 6R arm with a
    /// spherical wrist and parallel axes 2 and 3 (the family the classes are defined for).
    wrist_centre_in_j4: Option<Vector3<f64>>,
}

impl SingularityModel {
    /// Prepares the measure for `robot` (scaled by its reach) and, for a 6R arm with a
    /// spherical wrist and parallel axes 2 and 3, the data to classify; otherwise
    /// [`Self::classifies`] is false.
    pub fn new(robot: &Robot) -> Self {
        let chain = robot.chain();
        let mut wrist_centre_in_j4 = None;
        let all_revolute = chain.joints().iter().all(|j| !j.kind.is_prismatic());
        if chain.dof() == 6 && all_revolute {
            let w = spherical_wrist(robot);
            if let (true, Some(c)) = (w.spherical, w.centre_at_zero) {
                let mut frames = [Isometry3::identity(); MAX_DOF];
                chain.joint_frames(&Joints::zeros(6), &mut frames[..6]);
                let z2 = frames[1].rotation * chain.joints()[1].axis.into_inner();
                let z3 = frames[2].rotation * chain.joints()[2].axis.into_inner();
                // Axes 2 and 3 parallel within the tolerance the closed-form detection uses.
                if z2.cross(&z3).norm() < super::AXIS_ANGLE_TOLERANCE {
                    wrist_centre_in_j4 = Some(frames[3].inverse_transform_point(&c.into()).coords);
                }
            }
        }
        SingularityModel {
            length_scale: robot.reach(),
            wrist_centre_in_j4,
        }
    }

    /// True when the singularity classes are defined for this arm.
    pub fn classifies(&self) -> bool {
        self.wrist_centre_in_j4.is_some()
    }

    /// The inverse condition number of the reach-scaled Jacobian (see the module doc).
    #[inline]
    pub fn measure(&self, jac: &Jacobian, dof: usize) -> f64 {
        let (min_sq, max_sq) = self.extreme_squares(jac, dof);
        if max_sq <= 0.0 {
            return 0.0;
        }
        (min_sq / max_sq).sqrt()
    }

    /// `(σ_min², σ_max²)` of the reach-scaled Jacobian's first `dof` columns (`σ_min` the
    /// `min(dof, 6)`-th singular value), from the eigenvalues of `J·Jᵀ` clamped at 0.
    #[inline]
    fn extreme_squares(&self, jac: &Jacobian, dof: usize) -> (f64, f64) {
        let m = scaled_jjt(jac, dof, self.length_scale);
        // Eigenvalues only: no eigenvectors are accumulated, which halves the cost.
        let eig = m.symmetric_eigenvalues();
        let mut ev = [0.0f64; 6];
        for (slot, v) in ev.iter_mut().zip(eig.iter()) {
            *slot = v.max(0.0);
        }
        ev.sort_unstable_by(|a, b| b.total_cmp(a));
        (ev[dof.min(6) - 1], ev[0])
    }

    /// Frobenius norm of the difference of two Jacobians' first `dof` columns, linear rows
    /// divided by the reach as in the measure: the Weyl step between their singular values.
    fn scaled_distance(&self, a: &Jacobian, b: &Jacobian, dof: usize) -> f64 {
        let inv = 1.0 / self.length_scale;
        let mut sum = 0.0;
        for c in 0..dof {
            for r in 0..6 {
                let d = a[(r, c)] - b[(r, c)];
                let d = if r < 3 { d * inv } else { d };
                sum += d * d;
            }
        }
        sum.sqrt()
    }

    /// Which singularity the pose `q` is nearest, for arms in the classified family: the
    /// smallest of three normalised distances — wrist `|z4 × z6|` (sine of the angle between
    /// axes 4 and 6), elbow (sine of the angle between the upper arm and the line from axis 3
    /// to the wrist centre, seen along axis 2), shoulder (distance of the wrist centre from
    /// axis 1 over the reach).
    pub fn classify(&self, chain: &Chain, q: &Joints) -> Option<SingularityClass> {
        let (wrist, elbow, shoulder) = self.class_distances(chain, q)?;
        Some(nearest_class(wrist, elbow, shoulder))
    }

    /// [`classify`](Self::classify) from distances found elsewhere (the closed form's
    /// `singular_distances`): wrist and elbow sines, the wrist centre's distance from axis 1
    /// in m (divided here by the reach). `None` where the arm is not in the classified family.
    pub fn class_from(&self, wrist: f64, elbow: f64, shoulder_m: f64) -> Option<SingularityClass> {
        self.wrist_centre_in_j4?;
        Some(nearest_class(wrist, elbow, shoulder_m / self.length_scale))
    }

    /// The three normalised distances used by [`classify`](Self::classify): (wrist, elbow,
    /// shoulder), each 0 at its singularity.
    pub fn class_distances(&self, chain: &Chain, q: &Joints) -> Option<(f64, f64, f64)> {
        let c4 = self.wrist_centre_in_j4?;
        let mut f = [Isometry3::identity(); MAX_DOF];
        chain.joint_frames(q, &mut f[..6]);
        let axis = |i: usize| f[i].rotation * chain.joints()[i].axis.into_inner();
        let origin = |i: usize| f[i].translation.vector;
        let wc = f[3].transform_point(&c4.into()).coords;
        let wrist = axis(3).cross(&axis(5)).norm();
        let z2 = axis(1);
        let flat = |v: Vector3<f64>| v - z2 * z2.dot(&v);
        let a = flat(origin(2) - origin(1));
        let b = flat(wc - origin(2));
        let elbow = if a.norm() * b.norm() > 0.0 {
            a.cross(&b).norm() / (a.norm() * b.norm())
        } else {
            0.0
        };
        let z1 = axis(0);
        let r = wc - origin(0);
        let shoulder = (r - z1 * z1.dot(&r)).norm() / self.length_scale;
        Some((wrist, elbow, shoulder))
    }
}

/// The class whose normalised distance is smallest (ties: wrist, then elbow).
fn nearest_class(wrist: f64, elbow: f64, shoulder: f64) -> SingularityClass {
    if wrist <= elbow && wrist <= shoulder {
        SingularityClass::Wrist
    } else if elbow <= shoulder {
        SingularityClass::Elbow
    } else {
        SingularityClass::Shoulder
    }
}

/// The screen never reports a bound below this measure: below it every sample is measured
/// exactly. It keeps the eigen-solver's rounding small against σ_min (the computed σ_min²
/// may be off by about 1e-14·σ_max², i.e. σ_min by 1e-14·σ_max²/σ_min, which stays below
/// 1e-10·σ_max while σ_min ≥ 1e-3·σ_max), and no warning threshold of interest lies below it.
pub const SCREEN_FLOOR: f64 = 1e-3;

/// Slack added to the Weyl step, relative to the anchor's σ_max: covers the rounding of both
/// eigen-solves (see [`SCREEN_FLOOR`]) with a factor of ten to spare, so that a bound never
/// exceeds the value the exact measure would have computed.
const SCREEN_ROUNDING: f64 = 1e-9;

/// The singularity measure along a walk, with the eigen-solve skipped where a bound settles
/// what the walk needs. By Weyl's inequality each singular value moves by at most the
/// Frobenius norm of the Jacobian's change, `|σ_k(A) − σ_k(B)| ≤ ‖A − B‖_F`, so from the last
/// sample measured exactly (the anchor: σ_min, σ_max) a sample's measure is at least
/// `(σ_min − d) / (σ_max + d)` with `d` that norm on the reach-scaled Jacobians. Where this
/// lower bound is above the caller's level (the warning threshold and the smallest measure
/// so far) the sample cannot be a finding or a new minimum, and the bound is returned instead
/// of the value; everywhere else the value is exact and becomes the new anchor.
#[derive(Debug, Clone, Default)]
pub struct SingularityScreen {
    /// The last sample measured exactly: its Jacobian, σ_min and σ_max.
    anchor: Option<(Jacobian, f64, f64)>,
}

/// One screened measure: the exact value or a proven lower bound of it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Screened {
    /// The measure ([`SingularityModel::measure`]) or, when `exact` is false, a lower bound of
    /// it that is above the level asked for and at least [`SCREEN_FLOOR`].
    pub value: f64,
    /// `value` is the measure itself.
    pub exact: bool,
}

impl SingularityScreen {
    /// A screen with no anchor: its first sample is measured exactly.
    pub fn new() -> Self {
        Self::default()
    }

    /// The measure of `jac` (first `dof` columns) under `model`, or a lower bound of it where
    /// the bound is above `level` (strictly) and at least [`SCREEN_FLOOR`]. The exact value is
    /// bit for bit [`SingularityModel::measure`]'s.
    pub fn measure(
        &mut self,
        model: &SingularityModel,
        jac: &Jacobian,
        dof: usize,
        level: f64,
    ) -> Screened {
        if let Some((anchor, min, max)) = &self.anchor {
            let d = model.scaled_distance(jac, anchor, dof) + SCREEN_ROUNDING * max;
            let lower = (min - d) / (max + d);
            if lower > level && lower >= SCREEN_FLOOR {
                return Screened {
                    value: lower,
                    exact: false,
                };
            }
        }
        let (min_sq, max_sq) = model.extreme_squares(jac, dof);
        let value = if max_sq <= 0.0 {
            0.0
        } else {
            (min_sq / max_sq).sqrt()
        };
        self.anchor = Some((*jac, min_sq.sqrt(), max_sq.sqrt()));
        Screened { value, exact: true }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    fn demo_arm() -> Robot {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        super::super::load_urdf(&dir.join("robots/arm6.urdf"), None).unwrap()
    }

    #[test]
    fn screen_bound_never_exceeds_the_exact_measure() {
        // Pairs of poses a small random step apart (the walk's case) and far apart: whenever
        // the screen returns a bound from the first pose's anchor, it is at most the second
        // pose's exact measure. source: Weyl's inequality for singular values (Horn & Johnson,
        // Matrix Analysis, 2nd ed., Cor. 7.3.5).
        let robot = demo_arm();
        let model = SingularityModel::new(&robot);
        let chain = robot.chain();
        let mut rng = SplitMix64::new(0x5c4ee7);
        let mut bounded = 0;
        for k in 0..3000 {
            let qa = robot.random_config(&mut rng);
            let scale = [1e-3, 1e-2, 0.1, 1.0][k % 4];
            let qb = qa.map(|_, v| v + scale * (2.0 * rng.next_f64() - 1.0));
            let (mut ja, mut jb) = (Jacobian::zeros(), Jacobian::zeros());
            chain.fk_jacobian(&qa, &mut ja);
            chain.fk_jacobian(&qb, &mut jb);
            let mut screen = SingularityScreen::new();
            let first = screen.measure(&model, &ja, 6, 0.0);
            assert!(first.exact);
            assert_eq!(first.value.to_bits(), model.measure(&ja, 6).to_bits());
            let second = screen.measure(&model, &jb, 6, 0.0);
            let exact = model.measure(&jb, 6);
            if second.exact {
                assert_eq!(second.value.to_bits(), exact.to_bits());
            } else {
                bounded += 1;
                assert!(second.value >= SCREEN_FLOOR);
                assert!(
                    second.value <= exact,
                    "pair {k}: bound {} above {exact}",
                    second.value
                );
            }
        }
        // Small steps from a well-conditioned pose are settled by the bound. source: common
        // practice (a check that the screen is not always bypassed).
        assert!(bounded > 500, "only {bounded} pairs bounded");
    }

    #[test]
    fn screen_measures_exactly_at_or_below_the_level() {
        // A bound at or below the level asked for is not good enough: the sample could be a
        // finding or a new minimum, so it is measured exactly and becomes the anchor.
        // source: common practice.
        let robot = demo_arm();
        let model = SingularityModel::new(&robot);
        let q = Joints::from_slice(&[0.1, -0.4, 0.6, 0.3, 0.8, -0.2]).unwrap();
        let mut jac = Jacobian::zeros();
        robot.chain().fk_jacobian(&q, &mut jac);
        let exact = model.measure(&jac, 6);
        let mut screen = SingularityScreen::new();
        screen.measure(&model, &jac, 6, 0.0);
        // The same Jacobian again: the bound is the value less the rounding slack.
        let again = screen.measure(&model, &jac, 6, 0.0);
        assert!(!again.exact && again.value <= exact && again.value > exact - 1e-8);
        let at_level = screen.measure(&model, &jac, 6, exact);
        assert!(at_level.exact);
        assert_eq!(at_level.value.to_bits(), exact.to_bits());
    }
}
