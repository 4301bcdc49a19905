//! The family's geometry: its seven lengths, the model's forward kinematics and the
//! parameters shown to the user.

use nalgebra::{Isometry3, UnitQuaternion, Vector3};

/// The seven lengths of the family (m) and the two derived from them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Geometry {
    pub(super) a1: f64,
    pub(super) a2: f64,
    pub(super) b: f64,
    pub(super) c1: f64,
    pub(super) c2: f64,
    pub(super) c3: f64,
    pub(super) c4: f64,
    /// Distance from axis 3 to the wrist centre, √(a2² + c3²).
    pub(super) k: f64,
    /// Angle of the elbow-to-wrist-centre line against axis 4: atan2(a2, c3).
    pub(super) psi: f64,
}

impl Geometry {
    pub(super) fn new(a1: f64, a2: f64, b: f64, c1: f64, c2: f64, c3: f64, c4: f64) -> Self {
        Geometry {
            a1,
            a2,
            b,
            c1,
            c2,
            c3,
            c4,
            k: a2.hypot(c3),
            psi: a2.atan2(c3),
        }
    }
}

/// Forward kinematics of the family model: pose of the canonical flange frame in the
/// canonical base frame at canonical angles `t` (see the module documentation).
pub(super) fn model_fk(g: &Geometry, t: &[f64; 6]) -> Isometry3<f64> {
    let t23 = t[1] + t[2];
    let (s2, c2) = t[1].sin_cos();
    let (s23, c23) = t23.sin_cos();
    let xp = g.a1 + g.c2 * s2 + g.c3 * s23 + g.a2 * c23;
    let zp = g.c2 * c2 + g.c3 * c23 - g.a2 * s23;
    let rz = |a: f64| UnitQuaternion::from_axis_angle(&Vector3::z_axis(), a);
    let ry = |a: f64| UnitQuaternion::from_axis_angle(&Vector3::y_axis(), a);
    let rz1 = rz(t[0]);
    let wrist_centre = rz1 * Vector3::new(xp, g.b, zp) + Vector3::new(0.0, 0.0, g.c1);
    let r = rz1 * ry(t23) * rz(t[3]) * ry(t[4]) * rz(t[5]);
    let flange = wrist_centre + r * Vector3::new(0.0, 0.0, g.c4);
    Isometry3::from_parts(flange.into(), r)
}

/// What detection found, for display (`armpath robot`) and for the record. Lengths in m,
/// angles in rad.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Parameters {
    /// Shoulder offset, axis 1 to axis 2 (≥ 0).
    pub a1: f64,
    /// Elbow offset, axis 3 to axis 4 (signed: positive toward +x at the reference pose).
    pub a2: f64,
    /// Lateral offset of the arm plane from axis 1, along axis 2 (signed).
    pub b: f64,
    /// Height of axis 2 above joint 1's frame origin, along axis 1 (≥ 0).
    pub c1: f64,
    /// Upper arm length, axis 2 to axis 3 (> 0).
    pub c2: f64,
    /// Forearm length along axis 4 up to the wrist centre (≥ 0).
    pub c3: f64,
    /// Wrist centre to the tip-link origin along axis 6 (≥ 0); the tool comes on top.
    pub c4: f64,
    /// Canonical angle = `axis_signs[i]·q_i + joint_offsets[i]` (rad). The canonical zero has
    /// the upper arm and forearm along axis 1 and the wrist straight.
    pub joint_offsets: [f64; 6],
    /// +1 when the URDF axis turns the same way as the canonical one, −1 when opposite.
    pub axis_signs: [i8; 6],
    /// Origin of the canonical frame (joint 1's frame origin, on axis 1) in the base frame (m).
    pub canonical_origin_in_base: [f64; 3],
    /// Orientation of the canonical frame in the base frame, URDF roll-pitch-yaw (rad).
    pub canonical_rpy_in_base: [f64; 3],
    /// Largest deviation of the family model from the URDF chain found at the check
    /// configurations: position (m) and orientation (rad). Rounding level (≈1e-15) for an
    /// exact member; larger when the URDF writes angles rounded. Solutions are exact for the
    /// model, so their forward kinematics on the URDF is off by about this much.
    pub model_deviation_m: f64,
    /// Orientation part of the deviation above (rad).
    pub model_deviation_rad: f64,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn model_reference_pose_is_straight_up() {
        // source: Brandstötter, Angerer & Hofbaur 2014, the family's zero pose: arm straight
        // up, flange at (a1 + a2, b, c1 + c2 + c3 + c4)
        let g = Geometry::new(0.15, 0.12, 0.05, 0.45, 0.6, 0.68, 0.1);
        let f = model_fk(&g, &[0.0; 6]);
        let p = f.translation.vector;
        assert!((p - Vector3::new(0.27, 0.05, 1.83)).norm() < 1e-15);
        assert!(f.rotation.angle() < 1e-15);
    }
}
