//! Orientation math in one place.
//!
//! Conventions (stated once, used everywhere):
//! - Rotations are `UnitQuaternion<f64>` with `R * v` rotating a vector of the child frame into
//!   the parent frame; composition `a_R_c = a_R_b * b_R_c`.
//! - `rpy` follows URDF / REP 103: fixed axes, roll about X, then pitch about Y, then yaw about
//!   Z, so `R = Rz(yaw) * Ry(pitch) * Rx(roll)`.
//! - A rotation vector is axis × angle (rad), angle in [0, π].
//! - The geodesic between `R_a` and `R_b` is `R(u) = R_a * exp(u * log(R_a⁻¹ R_b))`: constant
//!   angular speed about a fixed axis of the moving frame, the short arc.

use nalgebra::{Unit, UnitQuaternion, Vector3};

/// Below this rotation angle (rad) the log/exp maps use their Taylor series: the exact
/// formulas divide by sin(θ/2), which loses all precision near zero. At 1e-8 the series error
/// (θ³/48) is far below f64 resolution of the result.
const SMALL_ANGLE: f64 = 1e-8;

/// Relative rotations within this distance (rad) of a half turn are flagged (5°: turns above
/// 175°). At exactly 180° there is no unique shortest arc (q and −q are equally short; see
/// [`log`]); just below it the short arc is unique but a touch-up of a few degrees on the cell
/// moves the end orientation across 180° and reverses the direction the tool turns in.
pub const HALF_TURN_TOLERANCE: f64 = 5.0 * std::f64::consts::PI / 180.0;

/// Rotation from URDF / REP 103 roll-pitch-yaw (rad): `Rz(yaw) * Ry(pitch) * Rx(roll)`.
pub fn from_rpy(roll: f64, pitch: f64, yaw: f64) -> UnitQuaternion<f64> {
    // nalgebra's from_euler_angles uses exactly this fixed-axis X-Y-Z convention; the unit
    // test below checks it against the explicit matrix product.
    UnitQuaternion::from_euler_angles(roll, pitch, yaw)
}

/// Roll, pitch, yaw (rad) of a rotation, the inverse of [`from_rpy`]. At pitch = ±90° (gimbal
/// lock) roll and yaw are not unique: nalgebra returns yaw = 0 there.
pub fn to_rpy(r: &UnitQuaternion<f64>) -> (f64, f64, f64) {
    r.euler_angles()
}

/// Rotation from a rotation vector (axis × angle, rad): the exponential map of SO(3).
pub fn exp(rotvec: &Vector3<f64>) -> UnitQuaternion<f64> {
    let theta = rotvec.norm();
    let half = 0.5 * theta;
    // q = [cos(θ/2), sin(θ/2)/θ · v]
    let k = if theta < SMALL_ANGLE {
        0.5 - theta * theta / 48.0
    } else {
        half.sin() / theta
    };
    UnitQuaternion::new_unchecked(nalgebra::Quaternion::new(
        half.cos(),
        k * rotvec.x,
        k * rotvec.y,
        k * rotvec.z,
    ))
}

/// Rotation vector of a rotation (the log map of SO(3)), angle in [0, π].
///
/// The quaternion sign is chosen so that the angle is the smallest (w ≥ 0). At exactly a half
/// turn (w = 0) the rotation vectors `±π·axis` describe the same rotation; the result then has
/// its largest-magnitude axis component positive, a deterministic choice.
pub fn log(r: &UnitQuaternion<f64>) -> Vector3<f64> {
    let q = r.quaternion();
    let (mut w, mut v) = (q.w, q.imag());
    if w < 0.0 {
        w = -w;
        v = -v;
    }
    let s = v.norm();
    if s < SMALL_ANGLE {
        // θ = 2·atan2(s, w) ≈ 2s/w; v/s · θ ≈ 2v/w
        return v * (2.0 / w);
    }
    let theta = 2.0 * s.atan2(w);
    let mut rotvec = v * (theta / s);
    if w < 1e-15 {
        let i = rotvec.iamax();
        if rotvec[i] < 0.0 {
            rotvec = -rotvec;
        }
    }
    rotvec
}

/// Angle (rad, in [0, π]) of the rotation taking `a` to `b`: |log(a⁻¹ b)|.
pub fn angle_between(a: &UnitQuaternion<f64>, b: &UnitQuaternion<f64>) -> f64 {
    let q = (a.inverse() * b).into_inner();
    // 2·atan2(|v|, |w|) is accurate at every angle, unlike 2·acos(|w|) near zero.
    2.0 * crate::arctan::atan2(q.imag().norm(), q.w.abs())
}

/// The shortest rotation path from `start` to `end`, precomputed for repeated evaluation.
#[derive(Debug, Clone, Copy)]
pub struct Geodesic {
    start: UnitQuaternion<f64>,
    /// Rotation vector of `start⁻¹ end`, in the start frame.
    rotvec: Vector3<f64>,
}

impl Geodesic {
    /// Geodesic from `start` to `end`.
    pub fn new(start: &UnitQuaternion<f64>, end: &UnitQuaternion<f64>) -> Self {
        Geodesic {
            start: *start,
            rotvec: log(&(start.inverse() * end)),
        }
    }

    /// Total rotation angle (rad), in [0, π].
    pub fn angle(&self) -> f64 {
        self.rotvec.norm()
    }

    /// True when the relative rotation is within [`HALF_TURN_TOLERANCE`] of a half turn, so the
    /// direction of travel is a choice (see [`log`]) or turns on a few degrees of touch-up.
    pub fn is_near_half_turn(&self) -> bool {
        self.angle() > std::f64::consts::PI - HALF_TURN_TOLERANCE
    }

    /// Axis of rotation in the start frame, or `None` for no rotation.
    pub fn axis(&self) -> Option<Unit<Vector3<f64>>> {
        Unit::try_new(self.rotvec, SMALL_ANGLE)
    }

    /// Orientation at parameter `u` in [0, 1]: `start * exp(u * log(start⁻¹ end))`.
    /// `u = 0` returns `start` exactly; `u = 1` returns `end` up to rounding.
    pub fn at(&self, u: f64) -> UnitQuaternion<f64> {
        if u == 0.0 {
            return self.start;
        }
        self.start * exp(&(self.rotvec * u))
    }
}

/// Quaternion from `[w, x, y, z]`, normalised. Returns the unit quaternion and the norm of the
/// input so that callers can warn when it was off. `None` when the norm is not finite or below
/// 1e-9 (nothing meaningful to normalise).
pub fn quat_from_wxyz(wxyz: [f64; 4]) -> Option<(UnitQuaternion<f64>, f64)> {
    let q = nalgebra::Quaternion::new(wxyz[0], wxyz[1], wxyz[2], wxyz[3]);
    let n = q.norm();
    if !n.is_finite() || n < 1e-9 {
        return None;
    }
    Some((UnitQuaternion::new_normalize(q), n))
}

/// `[w, x, y, z]` of a rotation, with w ≥ 0 (the canonical sign).
pub fn quat_to_wxyz(r: &UnitQuaternion<f64>) -> [f64; 4] {
    let q = r.quaternion();
    let s = if q.w < 0.0 { -1.0 } else { 1.0 };
    [s * q.w, s * q.i, s * q.j, s * q.k]
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use nalgebra::Matrix3;
    use std::f64::consts::{FRAC_PI_2, PI};

    fn rx(a: f64) -> Matrix3<f64> {
        Matrix3::new(1.0, 0.0, 0.0, 0.0, a.cos(), -a.sin(), 0.0, a.sin(), a.cos())
    }
    fn ry(a: f64) -> Matrix3<f64> {
        Matrix3::new(a.cos(), 0.0, a.sin(), 0.0, 1.0, 0.0, -a.sin(), 0.0, a.cos())
    }
    fn rz(a: f64) -> Matrix3<f64> {
        Matrix3::new(a.cos(), -a.sin(), 0.0, a.sin(), a.cos(), 0.0, 0.0, 0.0, 1.0)
    }

    #[test]
    fn rpy_is_fixed_axis_xyz() {
        // source: URDF specification / REP 103: R = Rz(yaw)·Ry(pitch)·Rx(roll)
        let (r, p, y) = (0.3, -0.7, 2.1);
        let expected = rz(y) * ry(p) * rx(r);
        let got = from_rpy(r, p, y).to_rotation_matrix().into_inner();
        assert_relative_eq!(got, expected, epsilon = 1e-14);
        let (r2, p2, y2) = to_rpy(&from_rpy(r, p, y));
        assert_relative_eq!(r2, r, epsilon = 1e-12);
        assert_relative_eq!(p2, p, epsilon = 1e-12);
        assert_relative_eq!(y2, y, epsilon = 1e-12);
    }

    #[test]
    fn exp_matches_rodrigues() {
        // source: Rodrigues' rotation formula, R = I + sinθ K + (1−cosθ) K² (Lynch & Park 2017, eq. 3.51)
        let axis = Vector3::new(1.0, -2.0, 0.5).normalize();
        let theta: f64 = 1.234;
        let k = axis.cross_matrix();
        let expected = Matrix3::identity() + k * theta.sin() + k * k * (1.0 - theta.cos());
        let got = exp(&(axis * theta)).to_rotation_matrix().into_inner();
        assert_relative_eq!(got, expected, epsilon = 1e-14);
    }

    #[test]
    fn log_of_small_and_half_turn() {
        // source: common practice (log is the inverse of exp on angles in [0, π])
        let tiny = Vector3::new(1e-10, -3e-10, 2e-10);
        assert_relative_eq!(log(&exp(&tiny)), tiny, epsilon = 1e-22);
        // A half turn about -y: the deterministic choice gives +π·y.
        // source: Lynch & Park 2017, §3.2.3.3: log of a 180° rotation is not unique (±axis)
        let half = exp(&Vector3::new(0.0, -PI, 0.0));
        assert_relative_eq!(log(&half), Vector3::new(0.0, PI, 0.0), epsilon = 1e-12);
    }

    #[test]
    fn geodesic_quarter_turn_midpoint() {
        // Quarter turn about z: the midpoint is the 45° rotation about z.
        // source: Shoemake 1985, slerp(q0, q1, t) = q0 (q0⁻¹ q1)^t
        let a = UnitQuaternion::identity();
        let b = UnitQuaternion::from_axis_angle(&Vector3::z_axis(), FRAC_PI_2);
        let g = Geodesic::new(&a, &b);
        assert_relative_eq!(g.angle(), FRAC_PI_2, epsilon = 1e-14);
        let mid = g.at(0.5);
        let expected = UnitQuaternion::from_axis_angle(&Vector3::z_axis(), FRAC_PI_2 / 2.0);
        assert_relative_eq!(angle_between(&mid, &expected), 0.0, epsilon = 1e-14);
        assert!(!g.is_near_half_turn());
    }

    #[test]
    fn near_half_turn_tolerance_is_five_degrees() {
        // 174° is a clear short arc; 176° and 180° are within 5° of a half turn.
        // source: common practice (a touch-up of a few degrees moves an end pose across 180°)
        let a = UnitQuaternion::identity();
        let turn = |deg: f64| {
            let b = UnitQuaternion::from_axis_angle(&Vector3::x_axis(), deg.to_radians());
            Geodesic::new(&a, &b).is_near_half_turn()
        };
        assert!(!turn(174.0));
        assert!(turn(176.0));
        assert!(turn(180.0));
    }

    #[test]
    fn geodesic_takes_short_arc_for_negated_end() {
        // q and −q are one rotation; the geodesic must be the same 30° arc for both.
        // source: Shoemake 1985, q / −q sign choice for the short arc
        let a = from_rpy(0.1, 0.2, 0.3);
        let b = a * UnitQuaternion::from_axis_angle(&Vector3::x_axis(), PI / 6.0);
        let neg_b = UnitQuaternion::new_unchecked(-b.into_inner());
        let g1 = Geodesic::new(&a, &b);
        let g2 = Geodesic::new(&a, &neg_b);
        assert_relative_eq!(g1.angle(), PI / 6.0, epsilon = 1e-13);
        assert_relative_eq!(g2.angle(), PI / 6.0, epsilon = 1e-13);
        assert_relative_eq!(
            angle_between(&g1.at(0.4), &g2.at(0.4)),
            0.0,
            epsilon = 1e-13
        );
    }

    #[test]
    fn quat_normalisation() {
        // source: common practice (a quaternion is normalised by its Euclidean norm)
        let (q, n) = quat_from_wxyz([2.0, 0.0, 0.0, 0.0]).unwrap();
        assert_relative_eq!(n, 2.0);
        assert_relative_eq!(q.angle(), 0.0);
        assert!(quat_from_wxyz([0.0; 4]).is_none());
        assert!(quat_from_wxyz([f64::NAN, 0.0, 0.0, 1.0]).is_none());
    }
}
