//! Sane ranges for the numbers of a robot description and of joint values and poses given on
//! the command line. Every bound lies far outside what an industrial arm uses, so it refuses
//! only placeholders (`1e308` for "no limit"), unit slips and values that would overflow;
//! inside the bounds forward kinematics and the speed checks stay finite.

use super::{JointKind, Joints, Robot};
use crate::error::{Error, Result};
use std::f64::consts::PI;

/// Largest length accepted (m): a joint origin offset, a prismatic joint's limit or value, a
/// target position. Industrial arms measure a few metres and tracks or gantries some tens; a
/// value beyond 100 m is a unit slip (mm written as m) or a placeholder, and values near the
/// top of the `f64` range overflow to infinity in forward kinematics.
pub const MAX_LENGTH_M: f64 = 100.0;

/// Largest |angle| in a joint origin's rpy (rad): two turns. Any orientation is written within
/// ±π, so more than two turns is almost surely degrees written where URDF wants radians
/// (`rpy="0 0 90"`); very large angles also lose all precision in sine and cosine.
pub const MAX_ORIGIN_ANGLE_RAD: f64 = 4.0 * PI;

/// Largest |position| of a revolute or continuous joint, in a URDF limit or a joint value
/// (turns). Tool axes are sometimes given ranges of several turns; 32 turns leaves ample room,
/// while a larger value is a placeholder for "unlimited" (give the joint type `continuous`)
/// or a unit slip.
pub const MAX_REVOLUTE_TURNS: f64 = 32.0;

/// Smallest joint speed limit accepted (rad/s or m/s). Joint speeds are divided by the limit;
/// 1e-4 rad/s is a turn in 17 hours and 1e-4 m/s is 0.1 mm/s, slower than any working axis, so
/// a smaller value is a unit slip or a placeholder (and a subnormal one divides to infinity).
pub const MIN_JOINT_SPEED: f64 = 1e-4;

/// Largest joint speed limit accepted (rad/s or m/s). The fastest industrial axes turn below
/// 40 rad/s (about 2,300 °/s) and linear axes move a few m/s; a larger value is a placeholder
/// for "no limit", which would hide every joint-speed finding.
pub const MAX_JOINT_SPEED: f64 = 100.0;

/// Largest joint effort limit accepted (N m or N). armpath does not use the effort, but URDF
/// requires it; the largest arms hold some tens of kN m at the base, so a negative value or
/// one beyond 1e6 marks a broken description.
pub const MAX_EFFORT: f64 = 1e6;

/// Largest |component| of a command-line quaternion. A rotation's unit quaternion has
/// components within ±1; armpath normalises small length errors (rounded values), but a
/// component beyond 10 is a wrong value in the quaternion's place (an angle, a position).
const MAX_QUATERNION_COMPONENT: f64 = 10.0;

/// Largest |position| of a joint of this kind (rad or m).
pub fn max_position(kind: JointKind) -> f64 {
    if kind.is_prismatic() {
        MAX_LENGTH_M
    } else {
        MAX_REVOLUTE_TURNS * 2.0 * PI
    }
}

/// A number for a message: plain for ordinary magnitudes, in scientific notation otherwise
/// (1e308 would print as 309 digits, 1e-320 as 320 zeros).
pub(crate) fn show(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 || (1e-4..1e7).contains(&a) || !a.is_finite() {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// The bounds of a joint kind in words, in URDF units.
fn position_bound(kind: JointKind) -> String {
    if kind.is_prismatic() {
        format!("±{MAX_LENGTH_M} m")
    } else {
        format!(
            "±{} rad ({MAX_REVOLUTE_TURNS} turns)",
            show((max_position(kind) * 100.0).round() / 100.0)
        )
    }
}

/// Why a joint origin is out of range, if it is (xyz in m, rpy in rad, both finite).
pub(super) fn origin_problem(xyz: &[f64; 3], rpy: &[f64; 3]) -> Option<String> {
    if let Some(v) = xyz.iter().find(|v| v.abs() > MAX_LENGTH_M) {
        return Some(format!(
            "xyz holds {} m, beyond the ±{MAX_LENGTH_M} m armpath accepts for a link offset: \
             URDF lengths are metres, check the value and its unit",
            show(*v)
        ));
    }
    if let Some(v) = rpy.iter().find(|v| v.abs() > MAX_ORIGIN_ANGLE_RAD) {
        return Some(format!(
            "rpy holds {} rad, more than two turns: URDF angles are radians (a value like 90 is \
             degrees), write the angle within ±π",
            show(*v)
        ));
    }
    None
}

/// Why a joint's position limits are out of range, if they are (finite, lower <= upper).
pub(super) fn limit_problem(kind: JointKind, lower: f64, upper: f64) -> Option<String> {
    let bound = max_position(kind);
    [lower, upper]
        .into_iter()
        .zip(["lower", "upper"])
        .find(|(v, _)| v.abs() > bound)
        .map(|(v, name)| {
            format!(
                "{name} = {} lies beyond the {} armpath accepts: give the joint's real range{}",
                show(v),
                position_bound(kind),
                if kind.is_prismatic() {
                    " in metres"
                } else {
                    ", or type=\"continuous\" for a joint that turns without end"
                }
            )
        })
}

/// Why a joint's velocity limit is unusable, if it is.
pub(super) fn velocity_problem(kind: JointKind, v: f64) -> Option<String> {
    let unit = if kind.is_prismatic() { "m/s" } else { "rad/s" };
    if !(v.is_finite() && v > 0.0) {
        Some(format!(
            "is {}: armpath checks joint speeds against it, give the joint's maximum speed \
             (rad/s or m/s, > 0)",
            show(v)
        ))
    } else if !(MIN_JOINT_SPEED..=MAX_JOINT_SPEED).contains(&v) {
        Some(format!(
            "is {} {unit}, outside the {} … {} {unit} armpath accepts: give the joint's \
             maximum speed in {unit}",
            show(v),
            show(MIN_JOINT_SPEED),
            show(MAX_JOINT_SPEED)
        ))
    } else {
        None
    }
}

/// Why a joint's effort limit is unusable, if it is.
pub(super) fn effort_problem(e: f64) -> Option<String> {
    (!(e.is_finite() && (0.0..=MAX_EFFORT).contains(&e))).then(|| {
        format!(
            "is {}, outside the 0 … {} (N m or N) armpath accepts: give the joint's maximum \
             torque or force",
            show(e),
            show(MAX_EFFORT)
        )
    })
}

impl Robot {
    /// Refuse joint values `q` (SI: rad or m) that lie beyond `max_position`; `option`
    /// names where they came from (`--joints`, `--seed`).
    pub fn check_joint_values(&self, option: &str, q: &Joints) -> Result<()> {
        for (i, (j, &v)) in self.joints().iter().zip(q).enumerate() {
            let ok = v.is_finite() && v.abs() <= max_position(j.kind);
            if !ok {
                let (unit, shown) = if j.kind.is_prismatic() {
                    ("mm", v * 1e3)
                } else {
                    ("deg", v.to_degrees())
                };
                let bound = if j.kind.is_prismatic() {
                    format!("±{} mm", show(MAX_LENGTH_M * 1e3))
                } else {
                    format!(
                        "±{} deg ({MAX_REVOLUTE_TURNS} turns)",
                        show(360.0 * MAX_REVOLUTE_TURNS)
                    )
                };
                return Err(Error::usage(
                    option,
                    format!(
                        "value {} (joint '{}') is {} {unit}, beyond the {bound} armpath \
                         accepts: give joint values in deg and mm (rad and m with --rad)",
                        i + 1,
                        j.name,
                        show(shown)
                    ),
                ));
            }
        }
        Ok(())
    }
}

/// The first of `values` (named by `names`) that is not finite or exceeds `bound` in size.
fn first_outside<const N: usize>(
    values: [f64; N],
    names: [&'static str; N],
    bound: f64,
) -> Option<(f64, &'static str)> {
    values
        .into_iter()
        .zip(names)
        .find(|(v, _)| !(v.is_finite() && v.abs() <= bound))
}

/// A message for a position component (m) beyond [`MAX_LENGTH_M`], shown in mm.
fn too_far(name: &str, v: f64, what: &str) -> String {
    format!(
        "{name} = {} mm lies beyond the ±{} mm armpath accepts: give the {what} in mm",
        show(v * 1e3),
        show(MAX_LENGTH_M * 1e3)
    )
}

/// Refuse a mounting offset (a tool: xyz in m, rpy in rad) beyond [`MAX_LENGTH_M`] or
/// [`MAX_ORIGIN_ANGLE_RAD`]; `option` names where it came from (`--tool`). Messages give mm
/// and deg, the command line's units.
pub fn check_offset(option: &str, xyz_m: [f64; 3], rpy_rad: [f64; 3]) -> Result<()> {
    if let Some((v, name)) = first_outside(xyz_m, ["x", "y", "z"], MAX_LENGTH_M) {
        return Err(Error::usage(option, too_far(name, v, "offset")));
    }
    let rpy = ["roll", "pitch", "yaw"];
    if let Some((v, name)) = first_outside(rpy_rad, rpy, MAX_ORIGIN_ANGLE_RAD) {
        return Err(Error::usage(
            option,
            format!(
                "{name} = {} deg is more than two turns: give the angle in degrees within ±180",
                show(v.to_degrees())
            ),
        ));
    }
    Ok(())
}

/// Refuse a target pose whose position (m, base frame) lies beyond [`MAX_LENGTH_M`] or whose
/// quaternion (w, x, y, z) has a component beyond what a rotation can have.
pub fn check_pose(option: &str, xyz_m: [f64; 3], wxyz: [f64; 4]) -> Result<()> {
    if let Some((v, name)) = first_outside(xyz_m, ["x", "y", "z"], MAX_LENGTH_M) {
        return Err(Error::usage(
            option,
            too_far(name, v, "position in the base frame"),
        ));
    }
    let q = ["qw", "qx", "qy", "qz"];
    if let Some((v, name)) = first_outside(wxyz, q, MAX_QUATERNION_COMPONENT) {
        return Err(Error::usage(
            option,
            format!(
                "{name} = {} is no part of a rotation (a unit quaternion has components \
                 within ±1): give qw,qx,qy,qz of a unit quaternion",
                show(v)
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn show_keeps_ordinary_numbers_plain_and_extremes_short() {
        // source: common practice (Rust's `{}` and `{:e}` formats of f64)
        assert_eq!(show(1.0), "1");
        assert_eq!(show(-1.5), "-1.5");
        assert_eq!(show(0.0), "0");
        assert_eq!(show(1e308), "1e308");
        assert_eq!(show(1e-320), "1e-320");
        assert_eq!(show(f64::INFINITY), "inf");
    }

    #[test]
    fn values_at_the_bounds_pass_and_beyond_them_fail() {
        // source: the named constants; one value on each bound, one just past it
        let z = [0.0; 3];
        assert_eq!(
            origin_problem(&[MAX_LENGTH_M, -MAX_LENGTH_M, 0.0], &z),
            None
        );
        assert!(origin_problem(&[0.0, 0.0, MAX_LENGTH_M * 1.001], &z).is_some());
        assert_eq!(origin_problem(&z, &[MAX_ORIGIN_ANGLE_RAD, 0.0, 0.0]), None);
        assert!(origin_problem(&z, &[0.0, 90.0, 0.0])
            .unwrap()
            .contains("degrees"));
        let turns = MAX_REVOLUTE_TURNS * 2.0 * PI;
        assert_eq!(limit_problem(JointKind::Revolute, -turns, turns), None);
        assert!(limit_problem(JointKind::Revolute, -1.0, turns * 1.001).is_some());
        assert_eq!(
            limit_problem(JointKind::Prismatic, -MAX_LENGTH_M, 1.0),
            None
        );
        assert!(limit_problem(JointKind::Prismatic, -101.0, 1.0).is_some());
        assert_eq!(velocity_problem(JointKind::Revolute, MIN_JOINT_SPEED), None);
        assert_eq!(velocity_problem(JointKind::Revolute, MAX_JOINT_SPEED), None);
        assert!(velocity_problem(JointKind::Revolute, 1e-320).is_some());
        assert!(velocity_problem(JointKind::Prismatic, 101.0)
            .unwrap()
            .contains("m/s"));
        assert_eq!(effort_problem(0.0), None);
        assert_eq!(effort_problem(MAX_EFFORT), None);
        assert!(effort_problem(-1.0).is_some());
        assert!(effort_problem(1e308).is_some());
        assert!(check_pose("--pose", [MAX_LENGTH_M; 3], [1.0, 0.0, 0.0, 0.0]).is_ok());
        assert!(check_pose("--pose", [0.0, 0.0, 101.0], [1.0, 0.0, 0.0, 0.0]).is_err());
        assert!(check_pose("--pose", [0.0; 3], [1e308, 0.0, 0.0, 0.0]).is_err());
        assert!(check_offset("--tool", [MAX_LENGTH_M; 3], [MAX_ORIGIN_ANGLE_RAD; 3]).is_ok());
        assert!(check_offset("--tool", [1e305, 0.0, 0.0], [0.0; 3]).is_err());
        assert!(check_offset("--tool", [0.0; 3], [0.0, 0.0, 1e3]).is_err());
    }
}
