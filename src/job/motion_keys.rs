//! The path-file keys of the timing model (see [`crate::motion`]): the accelerations and the
//! process speed tolerance in `limits:`, a waypoint's `blend` radius and a joint move's share
//! of the joints' allowed speed (`speed: 50%`). Values arrive in the file's units and leave
//! in SI; every refusal names its field and the accepted range.

use super::schema::LimitsSpec;
use super::units::{self, Units};
use crate::error::Error;
use crate::motion::{
    DEFAULT_PROCESS_SPEED_TOLERANCE, DEFAULT_TCP_ACCELERATION, DEFAULT_TOOL_ANGULAR_ACCELERATION,
};
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
pub(super) fn limits(
    spec: Option<&LimitsSpec>,
    fu: &Units,
    path: &Path,
) -> Result<(f64, f64, f64, f64), Error> {
    let at = |field: &str, m: String| Error::input(path, format!("limits.{field}"), m);
    // A positive acceleration in the file's `unit`/s² (`si` converts it), or `default`.
    let acceleration =
        |v: Option<f64>, field: &str, what: &str, unit: &str, si: f64, range, default| {
            let Some(v) = v else { return Ok(default) };
            units::check_positive(v, si, range, what, &format!("{unit}/s²"))
                .map_err(|m| at(field, m))?;
            Ok::<f64, Error>(v * si)
        };
    let tcp = acceleration(
        spec.and_then(|s| s.tcp_acceleration),
        "tcp_acceleration",
        "the largest TCP acceleration",
        fu.length.name(),
        fu.length_to_m(),
        TCP_ACCELERATION_RANGE_M_S2,
        DEFAULT_TCP_ACCELERATION,
    )?;
    let tool = acceleration(
        spec.and_then(|s| s.tool_angular_acceleration),
        "tool_angular_acceleration",
        "the largest tool angular acceleration",
        fu.angle.name(),
        fu.angle_to_rad(),
        TOOL_ANGULAR_ACCELERATION_RANGE_RAD_S2,
        DEFAULT_TOOL_ANGULAR_ACCELERATION,
    )?;
    let scale = match spec.and_then(|s| s.joint_acceleration_scale) {
        None => 1.0,
        Some(v) => {
            let (lo, hi) = JOINT_ACCELERATION_SCALE_RANGE;
            if !(v.is_finite() && (lo..=hi).contains(&v)) {
                return Err(at(
                    "joint_acceleration_scale",
                    format!(
                        "is {}: give a factor on the default joint accelerations from {lo} to {hi} \
                         (1 keeps the defaults)",
                        units::fmt_exact(v)
                    ),
                ));
            }
            v
        }
    };
    let tolerance = match spec.and_then(|s| s.process_speed_tolerance) {
        None => DEFAULT_PROCESS_SPEED_TOLERANCE,
        Some(v) if v.is_finite() && (0.0..1.0).contains(&v) => v,
        Some(v) => {
            return Err(at(
                "process_speed_tolerance",
                format!(
                    "is {}: give the share of the programmed speed a process segment may lose, \
                     from 0 up to (not including) 1, e.g. 0.05 for 5 %",
                    units::fmt_exact(v)
                ),
            ))
        }
    };
    Ok((tcp, tool, scale, tolerance))
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
