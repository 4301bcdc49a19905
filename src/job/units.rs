//! Units of a path file and the one-time conversion of its raw numbers to SI.
//!
//! A path file (or a CSV waypoint file, or the command-line overrides) is written in one length
//! unit and one angle unit. Everything here turns those raw numbers into metres, radians and
//! nalgebra poses, so that nothing downstream ever sees millimetres or degrees.

use crate::rotation;
use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};
use std::fmt;

/// Length unit of a path file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum LengthUnit {
    /// Millimetre, the default: robot programs and part drawings are usually dimensioned in mm.
    #[serde(rename = "mm")]
    Mm,
    /// Metre, the unit of URDF files.
    #[serde(rename = "m")]
    M,
}

/// Angle unit of a path file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum AngleUnit {
    /// Degree, the default: what teach pendants and drawings show.
    #[serde(rename = "deg")]
    Deg,
    /// Radian, the unit of URDF files.
    #[serde(rename = "rad")]
    Rad,
}

impl LengthUnit {
    /// The accepted spellings, for messages.
    pub const ALLOWED: &'static str = "mm or m";

    /// Parses `mm` or `m`; the error message lists the allowed spellings.
    pub fn parse(s: &str) -> Result<Self, String> {
        match s.trim() {
            "mm" => Ok(LengthUnit::Mm),
            "m" => Ok(LengthUnit::M),
            other => Err(format!(
                "unknown length unit `{other}`: use {}",
                Self::ALLOWED
            )),
        }
    }

    /// Metres per unit.
    pub fn to_m(self) -> f64 {
        match self {
            LengthUnit::Mm => 1e-3,
            LengthUnit::M => 1.0,
        }
    }

    /// The spelling used in files.
    pub fn name(self) -> &'static str {
        match self {
            LengthUnit::Mm => "mm",
            LengthUnit::M => "m",
        }
    }
}

impl AngleUnit {
    /// The accepted spellings, for messages.
    pub const ALLOWED: &'static str = "deg or rad";

    /// Parses `deg` or `rad`; the error message lists the allowed spellings.
    pub fn parse(s: &str) -> Result<Self, String> {
        match s.trim() {
            "deg" => Ok(AngleUnit::Deg),
            "rad" => Ok(AngleUnit::Rad),
            other => Err(format!(
                "unknown angle unit `{other}`: use {}",
                Self::ALLOWED
            )),
        }
    }

    /// Radians per unit.
    pub fn to_rad(self) -> f64 {
        match self {
            AngleUnit::Deg => std::f64::consts::PI / 180.0,
            AngleUnit::Rad => 1.0,
        }
    }

    /// The spelling used in files.
    pub fn name(self) -> &'static str {
        match self {
            AngleUnit::Deg => "deg",
            AngleUnit::Rad => "rad",
        }
    }
}

/// The units a file (or the command-line overrides) is written in. Default: mm and deg.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct Units {
    pub length: LengthUnit,
    pub angle: AngleUnit,
}

impl Default for Units {
    fn default() -> Self {
        Units {
            length: LengthUnit::Mm,
            angle: AngleUnit::Deg,
        }
    }
}

impl fmt::Display for Units {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}, {}", self.length.name(), self.angle.name())
    }
}

impl Units {
    /// Metres per length unit.
    pub fn length_to_m(&self) -> f64 {
        self.length.to_m()
    }

    /// Radians per angle unit.
    pub fn angle_to_rad(&self) -> f64 {
        self.angle.to_rad()
    }

    /// A length (in this unit) in metres.
    pub fn length(&self, v: f64) -> f64 {
        v * self.length_to_m()
    }

    /// An angle (in this unit) in radians.
    pub fn angle(&self, v: f64) -> f64 {
        v * self.angle_to_rad()
    }

    /// Name of the speed unit, e.g. `mm/s`, for messages.
    pub fn speed_name(&self) -> String {
        format!("{}/s", self.length.name())
    }

    /// Name of the angular speed unit, e.g. `deg/s`, for messages.
    pub fn angular_speed_name(&self) -> String {
        format!("{}/s", self.angle.name())
    }
}

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
        match self {
            RawOrientation::Rpy(v) => {
                check_finite_array(&v)?;
                let [r, p, y] = v.map(|a| units.angle(a));
                Ok(Converted {
                    rotation: rotation::from_rpy(r, p, y),
                    renormalised_from: None,
                })
            }
            RawOrientation::Rotvec(v) => {
                check_finite_array(&v)?;
                let v = v.map(|a| units.angle(a));
                Ok(Converted {
                    rotation: rotation::exp(&Vector3::new(v[0], v[1], v[2])),
                    renormalised_from: None,
                })
            }
            RawOrientation::Quat(q) => {
                check_finite_array(&q)?;
                match rotation::quat_from_wxyz(q) {
                    Some((rotation, norm)) => Ok(Converted {
                        rotation,
                        renormalised_from: ((norm - 1.0).abs() > QUAT_NORM_TOLERANCE)
                            .then_some(norm),
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
                }
            }
        }
    }
}

/// A pose from `xyz` (length unit) and an orientation (identity when `None`).
pub(super) fn pose(
    xyz: [f64; 3],
    orientation: Option<&RawOrientation>,
    units: &Units,
) -> Result<(Isometry3<f64>, Option<f64>), PoseError> {
    check_finite_array(&xyz).map_err(PoseError::Xyz)?;
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

/// `[a, b, c]` with Rust's shortest round-trip float formatting.
pub(super) fn fmt_list(v: &[f64]) -> String {
    let parts: Vec<String> = v.iter().map(|x| format!("{x}")).collect();
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
