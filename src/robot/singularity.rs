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
        let m = scaled_jjt(jac, dof, self.length_scale);
        // Eigenvalues only: no eigenvectors are accumulated, which halves the cost.
        let eig = m.symmetric_eigenvalues();
        let mut ev = [0.0f64; 6];
        for (slot, v) in ev.iter_mut().zip(eig.iter()) {
            *slot = v.max(0.0);
        }
        ev.sort_unstable_by(|a, b| b.total_cmp(a));
        let rank = dof.min(6);
        if ev[0] <= 0.0 {
            return 0.0;
        }
        (ev[rank - 1] / ev[0]).sqrt()
    }

    /// Which singularity the pose `q` is nearest, for arms in the classified family: the
    /// smallest of three normalised distances — wrist `|z4 × z6|` (sine of the angle between
    /// axes 4 and 6), elbow (sine of the angle between the upper arm and the line from axis 3
    /// to the wrist centre, seen along axis 2), shoulder (distance of the wrist centre from
    /// axis 1 over the reach).
    pub fn classify(&self, chain: &Chain, q: &Joints) -> Option<SingularityClass> {
        let (wrist, elbow, shoulder) = self.class_distances(chain, q)?;
        let class = if wrist <= elbow && wrist <= shoulder {
            SingularityClass::Wrist
        } else if elbow <= shoulder {
            SingularityClass::Elbow
        } else {
            SingularityClass::Shoulder
        };
        Some(class)
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
