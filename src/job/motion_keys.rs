//! The path-file keys of the timing model (see [`crate::motion`]): the accelerations and the
//! process speed tolerance in `limits:`, a waypoint's `blend` radius and a joint move's share
//! of the joints' allowed speed (`speed: 50%`). Values arrive in the file's units and leave
//! in SI; every refusal names its field and the accepted range.

use super::schema::LimitsSpec;
use super::units::{self, Units};
use super::{GivenAcceleration, Job, Overrides};
use crate::error::Error;
use crate::motion::{
    DEFAULT_PROCESS_SPEED_TOLERANCE, DEFAULT_TCP_ACCELERATION, DEFAULT_TOOL_ANGULAR_ACCELERATION,
};
use crate::robot::Robot;
use std::path::Path;

/// Accepted TCP accelerations (m/s²): 1 mm/s² (anything slower is a unit mistake: a 100 mm/s
/// move would need 5 s to start) to 1000 m/s² (about 100 g, beyond any arm).
pub const TCP_ACCELERATION_RANGE_M_S2: (f64, f64) = (1e-3, 1e3);

/// Accepted tool angular accelerations (rad/s²): 0.001 to 100,000 (the fastest wrists reach
/// a few hundred; the upper bound leaves room for switching the ramps off in tests).
pub const TOOL_ANGULAR_ACCELERATION_RANGE_RAD_S2: (f64, f64) = (1e-3, 1e5);

/// Accepted `joint_acceleration_scale`: 0.001 to 1000 times the default accelerations (the
/// default is a guess that real controllers exceed or undercut by an order of magnitude or
/// two either way).
pub const JOINT_ACCELERATION_SCALE_RANGE: (f64, f64) = (1e-3, 1e3);

/// The timing keys of `limits:` in SI: (TCP acceleration m/s², tool angular acceleration
/// rad/s², joint acceleration scale, process speed tolerance), defaults where absent.
///
/// File values (in the file's units `fu`) are checked even when an override replaces them, so
/// the file stays valid on its own; override values (`--tcp-acceleration`, ... in the
/// override units `ou`) win. Both go through the same validator, so a refusal reads the same
/// and only its location differs (`limits.<key>` or `--<key>`).
pub(super) fn limits(
    spec: Option<&LimitsSpec>,
    fu: &Units,
    path: &Path,
    ov: &Overrides,
    ou: &Units,
) -> Result<(f64, f64, f64, f64), Error> {
    // One key: the file's value checked at `limits.<field>`, the override's at `--<option>`;
    // `check` turns a value in the given units into SI or says what to give instead.
    let pick = |file: Option<f64>,
                field: &str,
                over: Option<f64>,
                option: &str,
                check: &dyn Fn(f64, &Units) -> Result<f64, String>,
                default: f64|
     -> Result<f64, Error> {
        let from_file = file
            .map(|v| check(v, fu).map_err(|m| Error::input(path, format!("limits.{field}"), m)))
            .transpose()?;
        let from_option = over
            .map(|v| check(v, ou).map_err(|m| Error::usage(option, m)))
            .transpose()?;
        Ok(from_option.or(from_file).unwrap_or(default))
    };
    let tcp = pick(
        spec.and_then(|s| s.tcp_acceleration),
        "tcp_acceleration",
        ov.tcp_acceleration,
        "--tcp-acceleration",
        &|v, u| {
            let what = "the largest TCP acceleration";
            let range = TCP_ACCELERATION_RANGE_M_S2;
            acceleration(v, u.length_to_m(), u.length.name(), what, range)
        },
        DEFAULT_TCP_ACCELERATION,
    )?;
    let tool = pick(
        spec.and_then(|s| s.tool_angular_acceleration),
        "tool_angular_acceleration",
        ov.tool_angular_acceleration,
        "--tool-angular-acceleration",
        &|v, u| {
            let what = "the largest tool angular acceleration";
            let range = TOOL_ANGULAR_ACCELERATION_RANGE_RAD_S2;
            acceleration(v, u.angle_to_rad(), u.angle.name(), what, range)
        },
        DEFAULT_TOOL_ANGULAR_ACCELERATION,
    )?;
    let scale = pick(
        spec.and_then(|s| s.joint_acceleration_scale),
        "joint_acceleration_scale",
        ov.joint_acceleration_scale,
        "--joint-acceleration-scale",
        &|v, _| joint_acceleration_scale(v),
        1.0,
    )?;
    let tolerance = pick(
        spec.and_then(|s| s.process_speed_tolerance),
        "process_speed_tolerance",
        ov.process_speed_tolerance,
        "--process-speed-tolerance",
        &|v, _| process_speed_tolerance(v),
        DEFAULT_PROCESS_SPEED_TOLERANCE,
    )?;
    Ok((tcp, tool, scale, tolerance))
}

/// A positive acceleration `v` in `unit`/s² (`si` SI per `unit`), in SI, within `range_si`;
/// `what` names it in the message.
fn acceleration(
    v: f64,
    si: f64,
    unit: &str,
    what: &str,
    range_si: (f64, f64),
) -> Result<f64, String> {
    units::check_positive(v, si, range_si, what, &format!("{unit}/s²"))?;
    Ok(v * si)
}

/// A factor on the default joint accelerations, within [`JOINT_ACCELERATION_SCALE_RANGE`].
fn joint_acceleration_scale(v: f64) -> Result<f64, String> {
    let (lo, hi) = JOINT_ACCELERATION_SCALE_RANGE;
    if v.is_finite() && (lo..=hi).contains(&v) {
        return Ok(v);
    }
    Err(format!(
        "is {}: give a factor on the default joint accelerations from {lo} to {hi} \
         (1 keeps the defaults)",
        units::fmt_exact(v)
    ))
}

/// The share of the programmed speed a process segment may lose, in [0, 1).
fn process_speed_tolerance(v: f64) -> Result<f64, String> {
    if v.is_finite() && (0.0..1.0).contains(&v) {
        return Ok(v);
    }
    Err(format!(
        "is {}: give the share of the programmed speed a process segment may lose, \
         from 0 up to (not including) 1, e.g. 0.05 for 5 %",
        units::fmt_exact(v)
    ))
}

/// A blend radius `v` (file length unit) at `location`, in m: 0 (stop) or more, within
/// [`units::MAX_ABS_LENGTH_M`].
pub(super) fn blend(v: f64, fu: &Units, path: &Path, location: &str) -> Result<f64, Error> {
    let si = v * fu.length_to_m();
    if !v.is_finite() || v < 0.0 || si > units::MAX_ABS_LENGTH_M {
        return Err(Error::input(
            path,
            location,
            format!(
                "is {}: give a corner radius of 0 (stop here) or more, in {}, up to {}",
                units::fmt_exact(v),
                fu.length.name(),
                units::fmt_sci(units::MAX_ABS_LENGTH_M / fu.length_to_m())
            ),
        ));
    }
    Ok(si)
}

/// A joint move's share of the joints' allowed speed from `percent` (`speed: 50%`) at
/// `location`, as a fraction in (0, 1]; `joint_move` says whether the segment is one.
pub(super) fn joint_share(
    percent: f64,
    joint_move: bool,
    path: &Path,
    location: &str,
) -> Result<f64, Error> {
    if !joint_move {
        return Err(Error::input(
            path,
            location,
            format!(
                "is {}%, a share of the joints' allowed speed, which only a joint move takes: \
                 give a TCP speed (a number) or add motion: joint",
                units::fmt_exact(percent)
            ),
        ));
    }
    if !percent.is_finite() || percent <= 0.0 || percent > 100.0 {
        return Err(Error::input(
            path,
            location,
            format!(
                "is {}%: give a share of the joints' allowed speed above 0 % and up to 100 %",
                units::fmt_exact(percent)
            ),
        ));
    }
    Ok(percent / 100.0)
}

/// `limits.joint_accelerations` read from the file (values in `fu`'s units/s²), each value
/// finite and > 0; the range of its kind is checked when the robot is known.
pub(super) fn joint_accelerations(
    spec: Option<&LimitsSpec>,
    fu: &Units,
    path: &Path,
) -> Result<Vec<GivenAcceleration>, Error> {
    let Some(map) = spec.and_then(|s| s.joint_accelerations.as_ref()) else {
        return Ok(Vec::new());
    };
    let mut given = Vec::with_capacity(map.len());
    for (joint, &value) in map {
        if !(value.is_finite() && value > 0.0) {
            return Err(Error::input(
                path,
                format!("limits.joint_accelerations.{joint}"),
                format!(
                    "is {}: give the joint's largest acceleration, greater than 0, in {}/s² \
                     (revolute) or {}/s² (prismatic)",
                    units::fmt_exact(value),
                    fu.angle.name(),
                    fu.length.name()
                ),
            ));
        }
        given.push(GivenAcceleration {
            joint: joint.clone(),
            value,
        });
    }
    Ok(given)
}

/// See [`Job::apply_joint_accelerations`]: the ranges are those of the tool angular
/// acceleration (revolute) and the TCP acceleration (prismatic), the same bounds on the same
/// physical quantity.
pub(super) fn apply_joint_accelerations(job: &Job, robot: &mut Robot) -> Result<(), Error> {
    for g in &job.joint_accelerations {
        let at = |m: String| {
            Error::input(
                &job.source,
                format!("limits.joint_accelerations.{}", g.joint),
                m,
            )
        };
        let Some(index) = robot.joints().iter().position(|j| j.name == g.joint) else {
            let names: Vec<&str> = robot.joints().iter().map(|j| j.name.as_str()).collect();
            return Err(at(format!(
                "the robot has no movable joint '{}': name one of {}",
                g.joint.escape_debug(),
                names.join(", ")
            )));
        };
        let u = &job.units;
        let si = if robot.joints()[index].kind.is_prismatic() {
            let what = "a prismatic joint's largest acceleration";
            acceleration(
                g.value,
                u.length_to_m(),
                u.length.name(),
                what,
                TCP_ACCELERATION_RANGE_M_S2,
            )
        } else {
            let range = TOOL_ANGULAR_ACCELERATION_RANGE_RAD_S2;
            let what = "a revolute joint's largest acceleration";
            acceleration(g.value, u.angle_to_rad(), u.angle.name(), what, range)
        }
        .map_err(at)?;
        robot.set_joint_acceleration(index, si);
    }
    Ok(())
}
