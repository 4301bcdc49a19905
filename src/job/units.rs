//! Units of a path file and the one-time conversion of its raw numbers to SI.
//!
//! A path file (or a CSV waypoint file, or the command-line overrides) is written in one length
//! unit and one angle unit. Everything here turns those raw numbers into metres, radians and
//! nalgebra poses, so that nothing downstream ever sees millimetres or degrees.

use crate::rotation;
use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};

pub use crate::units::{AngleUnit, LengthUnit, Units};

/// An orientation as written in a file, in the file's angle unit (quaternions are unitless).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum RawOrientation {
    /// Roll, pitch, yaw (URDF / REP 103, `R = Rz(yaw)·Ry(pitch)·Rx(roll)`).
    Rpy([f64; 3]),
    /// `[w, x, y, z]`, normalised on conversion.
    Quat([f64; 4]),
    /// Rotation vector: axis × angle.
    Rotvec([f64; 3]),
}

/// A quaternion whose norm is further than this from 1 is normalised with a warning: an input
/// quaternion written with 9 significant digits is within ~1e-9 of unit length, so 1e-6 only
/// flags quaternions that were really not normalised (or were mistyped).
pub(super) const QUAT_NORM_TOLERANCE: f64 = 1e-6;

/// Result of converting a [`RawOrientation`].
#[derive(Debug, Clone, Copy)]
pub(super) struct Converted {
    pub rotation: UnitQuaternion<f64>,
    /// Norm of a quaternion input that was off unit length by more than
    /// [`QUAT_NORM_TOLERANCE`]; the caller turns it into an [`super::InputWarning`].
    pub renormalised_from: Option<f64>,
}

impl RawOrientation {
    /// The key (YAML) or column set (CSV) of this form, for messages.
    pub fn key(self) -> &'static str {
        match self {
            RawOrientation::Rpy(_) => "rpy",
            RawOrientation::Quat(_) => "quat",
            RawOrientation::Rotvec(_) => "rotvec",
        }
    }

    /// The rotation in SI. Errors (as a message) on non-finite numbers and on quaternions that
    /// are zero or too short to normalise.
    pub fn to_rotation(self, units: &Units) -> Result<Converted, String> {
        check_orientation_bounded(self, units)?;
        match self {
            RawOrientation::Rpy(v) => {
                let [r, p, y] = v.map(|a| units.angle(a));
                Ok(Converted {
                    rotation: rotation::from_rpy(r, p, y),
                    renormalised_from: None,
                })
            }
            RawOrientation::Rotvec(v) => {
                let v = v.map(|a| units.angle(a));
                Ok(Converted {
                    rotation: rotation::exp(&Vector3::new(v[0], v[1], v[2])),
                    renormalised_from: None,
                })
            }
            RawOrientation::Quat(q) => match rotation::quat_from_wxyz(q) {
                Some((rotation, norm)) => Ok(Converted {
                    rotation,
                    renormalised_from: ((norm - 1.0).abs() > QUAT_NORM_TOLERANCE).then_some(norm),
                }),
                None => {
                    let what = if q.iter().all(|c| *c == 0.0) {
                        "has zero length"
                    } else {
                        "is too short to normalise (length below 1e-9)"
                    };
                    Err(format!(
                        "the quaternion {} {what}: give a unit quaternion [w, x, y, z], \
                             e.g. [1, 0, 0, 0] for no rotation",
                        fmt_list(&q)
                    ))
                }
            },
        }
    }
}

/// A pose from `xyz` (length unit) and an orientation (identity when `None`).
pub(super) fn pose(
    xyz: [f64; 3],
    orientation: Option<&RawOrientation>,
    units: &Units,
) -> Result<(Isometry3<f64>, Option<f64>), PoseError> {
    check_bounded(
        &xyz,
        MAX_ABS_LENGTH_M,
        units.length_to_m(),
        "position",
        units.length.name(),
    )
    .map_err(PoseError::Xyz)?;
    let t = xyz.map(|v| units.length(v));
    let (rotation, renormalised_from) = match orientation {
        None => (UnitQuaternion::identity(), None),
        Some(o) => {
            let c = o.to_rotation(units).map_err(PoseError::Orientation)?;
            (c.rotation, c.renormalised_from)
        }
    };
    Ok((
        Isometry3::from_parts(Translation3::new(t[0], t[1], t[2]), rotation),
        renormalised_from,
    ))
}

/// Which part of a pose was wrong, so the caller can name the field.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum PoseError {
    Xyz(String),
    Orientation(String),
}

/// Every number must be finite: NaN or infinity in a pose would poison every later computation.
pub(super) fn check_finite_array(v: &[f64]) -> Result<(), String> {
    if let Some(i) = v.iter().position(|x| !x.is_finite()) {
        return Err(format!(
            "value {} of {} is {}: give finite numbers only",
            i + 1,
            fmt_list(v),
            v[i]
        ));
    }
    Ok(())
}

// Sane ranges. A finite but absurd number (1e308 mm, a speed of 1e-320 mm/s) passes the
// finiteness check yet overflows or underflows later (an infinite duration, a pose that loses
// every digit of its position); these bounds refuse such numbers where they are read, so that
// nothing non-finite can reach the plan or a report. Each bound is far outside any real cell.

/// Largest |length| (m) of a position, offset or prismatic joint value: 10 km. The largest
/// gantry and track robots span tens of metres, so a factor of 100 remains; and sums and
/// products of such lengths stay far from overflow and keep sub-micrometre resolution
/// (an f64 resolves 1e4 m to about 2e-12 m).
pub const MAX_ABS_LENGTH_M: f64 = 1e4;

/// Largest |angle| (rad) of an rpy, rotation-vector or revolute joint value: 100 turns. No
/// robot joint or program needs more, and an f64 still resolves such an angle to about 1e-13
/// rad; at 1e16 rad it could no longer tell one turn from the next.
pub const MAX_ABS_ANGLE_RAD: f64 = 200.0 * std::f64::consts::PI;

/// Largest |component| of a quaternion before normalisation: a unit quaternion's components
/// are at most 1, so anything beyond a million is a typing error, and the bound keeps the norm
/// computation far from overflow.
pub const MAX_ABS_QUAT_COMPONENT: f64 = 1e6;

/// TCP speeds (m/s) accepted: 1 µm/s to 1 km/s. At the lower bound a 10 km segment still
/// takes a finite 1e10 s; the upper bound is about three times the speed of sound, a hundred
/// times faster than any arm's TCP.
pub const SPEED_RANGE_M_S: (f64, f64) = (1e-6, 1e3);

/// Angular speeds and limits (rad/s) accepted: 1e-6 rad/s (a turn in 73 days) to 1e4 rad/s
/// (1,600 turns a second, far above any wrist), for the same reasons as the TCP speeds.
pub const ANGULAR_SPEED_RANGE_RAD_S: (f64, f64) = (1e-6, 1e4);

/// Sample steps (m) accepted: 1 pm (a hundredth of an atom's width, so only a typing error or
/// a wrong unit falls below it) up to [`MAX_ABS_LENGTH_M`]. Any finer step that is merely
/// impractical is left to the sample cap (`--max-samples`), which says how to raise it; a
/// 10 km path at 1 pm still counts a finite 1e16 samples.
pub const STEP_RANGE_M: (f64, f64) = (1e-12, MAX_ABS_LENGTH_M);

/// Orientation sample steps (rad) accepted: 1e-12 rad up to [`MAX_ABS_ANGLE_RAD`], as for the
/// TCP step.
pub const ANGLE_STEP_RANGE_RAD: (f64, f64) = (1e-12, MAX_ABS_ANGLE_RAD);

/// Smallest joint speed scale: 0.1 % of the rated joint speeds. Below it no check is
/// meaningful, and the ratio of a joint speed to its scaled limit could overflow.
pub const MIN_JOINT_SPEED_SCALE: f64 = 1e-3;

/// Every |value| of `v` (in a unit with `si` SI per unit) must be at most `max_si`. `what`
/// names the kind of value and `unit` the unit, for the message.
pub(super) fn check_bounded(
    v: &[f64],
    max_si: f64,
    si: f64,
    what: &str,
    unit: &str,
) -> Result<(), String> {
    check_finite_array(v)?;
    if let Some(i) = v.iter().position(|x| (x * si).abs() > max_si) {
        return Err(format!(
            "value {} of {} is outside the {what} range ±{} {unit}: give a value within it \
             (check the units: {unit})",
            i + 1,
            fmt_list(v),
            fmt_sci(max_si / si)
        ));
    }
    Ok(())
}

/// A setting that must be positive, given in a unit of `si` SI per unit, must lie in
/// `range_si`. `what` names the setting and `unit` the unit, for the message.
pub(super) fn check_positive(
    v: f64,
    si: f64,
    range_si: (f64, f64),
    what: &str,
    unit: &str,
) -> Result<(), String> {
    if !v.is_finite() {
        return Err(format!(
            "{v} is not a finite number: give {what} in {unit}, greater than 0"
        ));
    }
    if v <= 0.0 {
        return Err(format!(
            "must be greater than 0 (got {v}): give {what} in {unit}"
        ));
    }
    let (lo, hi) = (range_si.0 / si, range_si.1 / si);
    if v * si < range_si.0 || v * si > range_si.1 {
        return Err(format!(
            "{} is outside the accepted range {} to {} {unit}: give {what} within it \
             (check the units: {unit})",
            fmt_exact(v),
            fmt_sci(lo),
            fmt_sci(hi)
        ));
    }
    Ok(())
}

/// A range bound for messages: plain decimals between 1e-3 and 1e7, else `1e-6` style.
pub(super) fn fmt_sci(v: f64) -> String {
    if (1e-3..1e7).contains(&v.abs()) {
        fmt_num(v)
    } else {
        format!("{v:e}")
    }
}

/// The bound on an orientation's numbers: angles for rpy and rotation vectors, unitless for
/// quaternions.
fn check_orientation_bounded(o: RawOrientation, units: &Units) -> Result<(), String> {
    match o {
        RawOrientation::Rpy(v) | RawOrientation::Rotvec(v) => check_bounded(
            &v,
            MAX_ABS_ANGLE_RAD,
            units.angle_to_rad(),
            "angle",
            units.angle.name(),
        ),
        RawOrientation::Quat(q) => check_bounded(
            &q,
            MAX_ABS_QUAT_COMPONENT,
            1.0,
            "quaternion component",
            "(unitless)",
        ),
    }
}

/// A number for messages: at most 6 decimals, trailing zeros dropped (`90`, `0.125`).
pub(super) fn fmt_num(v: f64) -> String {
    let s = format!("{v:.6}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// A number as written back in messages: Rust's shortest round-trip formatting, in exponent
/// form (`1e308`, `1e-320`) when it would take more than 15 digits.
pub(super) fn fmt_exact(x: f64) -> String {
    if x == 0.0 || !x.is_finite() || (1e-4..1e15).contains(&x.abs()) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// `[a, b, c]`, each number as [`fmt_exact`] writes it.
pub(super) fn fmt_list(v: &[f64]) -> String {
    let parts: Vec<String> = v.iter().map(|&x| fmt_exact(x)).collect();
    format!("[{}]", parts.join(", "))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use nalgebra::Matrix3;
    use std::f64::consts::PI;

    #[test]
    fn unit_factors() {
        // source: SI definitions (1 mm = 1e-3 m, 1° = π/180 rad)
        assert_eq!(LengthUnit::Mm.to_m(), 1e-3);
        assert_eq!(LengthUnit::M.to_m(), 1.0);
        assert_relative_eq!(AngleUnit::Deg.to_rad() * 180.0, PI, epsilon = 1e-15);
        assert_eq!(AngleUnit::Rad.to_rad(), 1.0);
        let u = Units::default();
        assert_eq!(u.to_string(), "mm, deg");
        assert_relative_eq!(u.length(250.0), 0.25);
        assert_relative_eq!(u.angle(90.0), PI / 2.0, epsilon = 1e-15);
    }

    #[test]
    fn unit_parse_errors_list_allowed() {
        assert_eq!(LengthUnit::parse("m"), Ok(LengthUnit::M));
        assert_eq!(AngleUnit::parse("rad"), Ok(AngleUnit::Rad));
        let e = LengthUnit::parse("cm").unwrap_err();
        assert!(e.contains("`cm`") && e.contains("mm or m"), "{e}");
        let e = AngleUnit::parse("grad").unwrap_err();
        assert!(e.contains("`grad`") && e.contains("deg or rad"), "{e}");
    }

    #[test]
    fn rpy_in_degrees() {
        // Roll 90° alone maps tool y onto base z.
        // source: URDF spec / REP 103 (Rx(90°) = [[1,0,0],[0,0,-1],[0,1,0]])
        let c = RawOrientation::Rpy([90.0, 0.0, 0.0])
            .to_rotation(&Units::default())
            .unwrap();
        let expected = Matrix3::new(1.0, 0.0, 0.0, 0.0, 0.0, -1.0, 0.0, 1.0, 0.0);
        assert_relative_eq!(
            c.rotation.to_rotation_matrix().into_inner(),
            expected,
            epsilon = 1e-15
        );
    }

    #[test]
    fn rotvec_in_degrees_matches_axis_angle() {
        // 120° about (1,1,1)/√3 permutes the axes x→y→z→x.
        // source: from memory (cyclic permutation matrix is the 120° rotation about [1,1,1])
        let a = 120.0 / 3f64.sqrt();
        let c = RawOrientation::Rotvec([a, a, a])
            .to_rotation(&Units::default())
            .unwrap();
        let expected = Matrix3::new(0.0, 0.0, 1.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0);
        assert_relative_eq!(
            c.rotation.to_rotation_matrix().into_inner(),
            expected,
            epsilon = 1e-14
        );
    }

    #[test]
    fn quat_normalised_with_flag() {
        // source: common practice (a quaternion is normalised by its Euclidean norm)
        let c = RawOrientation::Quat([2.0, 0.0, 0.0, 0.0])
            .to_rotation(&Units::default())
            .unwrap();
        assert_eq!(c.renormalised_from, Some(2.0));
        assert_relative_eq!(c.rotation.angle(), 0.0);
        let c = RawOrientation::Quat([1.0 + 1e-8, 0.0, 0.0, 0.0])
            .to_rotation(&Units::default())
            .unwrap();
        assert_eq!(c.renormalised_from, None);
        let e = RawOrientation::Quat([0.0; 4])
            .to_rotation(&Units::default())
            .unwrap_err();
        assert!(
            e.contains("zero length") && e.contains("[w, x, y, z]"),
            "{e}"
        );
        let e = RawOrientation::Quat([1e-12, 0.0, 0.0, 0.0])
            .to_rotation(&Units::default())
            .unwrap_err();
        assert!(e.contains("too short"), "{e}");
        let e = RawOrientation::Quat([f64::NAN, 0.0, 0.0, 1.0])
            .to_rotation(&Units::default())
            .unwrap_err();
        assert!(e.contains("NaN") && e.contains("finite"), "{e}");
    }

    #[test]
    fn number_formatting() {
        assert_eq!(fmt_num(90.0), "90");
        assert_eq!(fmt_num(0.125), "0.125");
        assert_eq!(fmt_num(-1e-9), "0");
        assert_eq!(fmt_num(1.0 / 3.0), "0.333333");
        assert_eq!(fmt_list(&[0.0, -2.5]), "[0, -2.5]");
    }

    #[test]
    fn pose_converts_length() {
        let (p, w) = pose([100.0, -20.0, 5.0], None, &Units::default()).unwrap();
        assert_eq!(w, None);
        // source: SI definitions (1 mm = 1e-3 m)
        assert_relative_eq!(p.translation.vector, Vector3::new(0.1, -0.02, 0.005));
        let e = pose([f64::INFINITY, 0.0, 0.0], None, &Units::default()).unwrap_err();
        assert!(matches!(e, PoseError::Xyz(m) if m.contains("inf")));
    }
}
