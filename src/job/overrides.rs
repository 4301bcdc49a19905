//! Command-line values that replace a path file's settings.

use super::units::{AngleUnit, LengthUnit, Units};
use crate::error::Error;
use std::path::PathBuf;

/// Command-line values that replace the path file's. All optional; an override wins over the
/// file's value (the file's value is still checked, so the file stays valid on its own).
///
/// Units: override values are in the units given by `units_length` / `units_angle` (default
/// mm and deg), **not** in the path file's `units:`; a YAML file's own values keep the file's
/// units, so `--units` never changes the meaning of a file. When a CSV file is loaded
/// directly, `units_length` / `units_angle` are also the units of the CSV values.
///
/// Error locations for bad override values name the option as `--speed`, `--tool`, ... (the
/// field name in kebab case; `--units` for both unit fields).
#[derive(Debug, Clone, Default)]
pub struct Overrides {
    /// URDF of the robot, used as given (relative to the working directory).
    pub robot: Option<PathBuf>,
    /// Tip link of the chain.
    pub tip: Option<String>,
    /// `mm` or `m`.
    pub units_length: Option<String>,
    /// `deg` or `rad`.
    pub units_angle: Option<String>,
    /// TCP speed, length unit per second, > 0.
    pub speed: Option<f64>,
    /// Programmed reorientation speed, angle unit per second, > 0.
    pub orientation_speed: Option<f64>,
    /// TCP in the tip-link frame: x, y, z (length unit), roll, pitch, yaw (angle unit). Replaces
    /// the file's tool pose; the file's `free_spin`, `spin_range` and `spin_rate` are kept.
    pub tool: Option<[f64; 6]>,
    /// Work frame in the robot base frame: x, y, z, roll, pitch, yaw as for `tool`.
    pub work_frame: Option<[f64; 6]>,
    /// Joints at the first waypoint (angle unit; length unit for prismatic joints).
    pub start_joints: Option<Vec<f64>>,
    /// Use the start joints (from the file or the option) only as a starting guess.
    pub start_joints_seed: bool,
    /// Largest tool angular speed, angle unit per second, > 0.
    pub tool_angular_speed: Option<f64>,
    /// Fraction of each URDF joint velocity limit that may be used, in (0, 1].
    pub joint_speed_scale: Option<f64>,
    /// Largest TCP step between samples, length unit, > 0.
    pub step: Option<f64>,
    /// Largest orientation step between samples, angle unit, > 0.
    pub angle_step: Option<f64>,
    /// Largest TCP acceleration, length unit/s², replaces `limits.tcp_acceleration`.
    pub tcp_acceleration: Option<f64>,
    /// Largest tool angular acceleration, angle unit/s², replaces
    /// `limits.tool_angular_acceleration`.
    pub tool_angular_acceleration: Option<f64>,
    /// Factor on the default joint accelerations, replaces `limits.joint_acceleration_scale`.
    pub joint_acceleration_scale: Option<f64>,
    /// Share of the programmed speed a process segment may lose, in [0, 1), replaces
    /// `limits.process_speed_tolerance`.
    pub process_speed_tolerance: Option<f64>,
    /// Smallest gap kept between bodies of the cell model, length unit, replaces
    /// `limits.clearance`.
    pub clearance: Option<f64>,
    /// Cell file, used as given (relative to the working directory); replaces `cell:`.
    pub cell: Option<PathBuf>,
}

impl Overrides {
    /// The units of the override values (and of a directly loaded CSV file).
    pub fn units(&self) -> Result<Units, Error> {
        let mut u = Units::default();
        if let Some(s) = &self.units_length {
            u.length = LengthUnit::parse(s).map_err(|m| Error::usage("--units", m))?;
        }
        if let Some(s) = &self.units_angle {
            u.angle = AngleUnit::parse(s).map_err(|m| Error::usage("--units", m))?;
        }
        Ok(u)
    }
}
