//! The validated job: everything `check` needs besides the robot, in SI units and nalgebra
//! types. Built once from a path file (YAML or CSV) plus command-line overrides; nothing
//! downstream re-validates or sees mm, degrees or file syntax.

use crate::error::Error;
use crate::ik::analytic::{Config, Elbow, Shoulder, Wrist};
use crate::robot::{Joints, MAX_DOF};
use nalgebra::Isometry3;
use std::path::{Path, PathBuf};
use std::sync::Arc;

// The readers form a chain without circles (each uses only the ones listed before it, and
// the types here): names, units; read (file checks); schema (the YAML keys); yaml (parse into
// the schema); validate (waypoint checks); csv_file (read, validate); overrides; assemble
// (schema + overrides -> Job, uses csv_file for `waypoints: <file.csv>`).
mod assemble;
mod csv_file;
mod motion_keys;
mod names;
mod overrides;
mod read;
pub mod schema;
#[cfg(test)]
mod tests_load;
mod units;
mod validate;
mod yaml;

pub use motion_keys::{TCP_ACCELERATION_RANGE_M_S2, TOOL_ANGULAR_ACCELERATION_RANGE_RAD_S2};
pub use names::{NamesBuilder, WaypointNames};
pub use overrides::Overrides;
pub use units::{AngleUnit, LengthUnit, Units};
pub use units::{
    ANGLE_STEP_RANGE_RAD, ANGULAR_SPEED_RANGE_RAD_S, MAX_ABS_ANGLE_RAD, MAX_ABS_LENGTH_M,
    MAX_ABS_QUAT_COMPONENT, MIN_JOINT_SPEED_SCALE, SPEED_RANGE_M_S, STEP_RANGE_M,
};

/// Reads the job in `path`: a YAML path file, or a CSV waypoint file when the extension is
/// `.csv` (any case), then applies `overrides` (see [`Overrides`] for units and precedence).
///
/// Errors name the file and the line (syntax, unknown keys, wrong types) or the field path
/// (`waypoints[2].quat`, 0-based indices) and say what to change. Problems armpath can work
/// around (quaternion off unit length, repeated waypoints, settings that have no effect)
/// become [`InputWarning`]s in the job.
pub fn load(path: &Path, overrides: &Overrides) -> Result<Job, Error> {
    let what = if read::is_csv(path) {
        "CSV waypoint file"
    } else {
        "path file"
    };
    read::check_file(path, what, "")?;
    let bytes = read::read_file(path, what)?;
    if !read::is_csv(path) {
        return load_bytes(&bytes, path, overrides);
    }
    let override_units = overrides.units()?;
    let mut warnings = Vec::new();
    let loaded = csv_file::parse_waypoints(&bytes, path, &override_units, &mut warnings)?;
    // The file's text is no longer needed: free it before the job is assembled, so that it
    // does not add to the peak memory of a long path.
    drop(bytes);
    assemble::from_csv(path, overrides, override_units, loaded, warnings)
}

/// As [`load`], for file contents already in memory (the fuzz targets use it). `path` picks
/// the format by its extension, names the file in messages, and is the base against which a
/// `robot:` and a `waypoints: <file.csv>` are resolved; a CSV file named that way is still
/// read from disk.
pub fn load_bytes(bytes: &[u8], path: &Path, overrides: &Overrides) -> Result<Job, Error> {
    let override_units = overrides.units()?;
    if read::is_csv(path) {
        let mut warnings = Vec::new();
        let loaded = csv_file::parse_waypoints(bytes, path, &override_units, &mut warnings)?;
        assemble::from_csv(path, overrides, override_units, loaded, warnings)
    } else {
        let spec = yaml::parse_yaml(bytes, path)?;
        assemble::from_spec(path, spec, overrides, override_units)
    }
}

/// How the TCP moves from the previous waypoint to this one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Motion {
    /// Straight line in position, geodesic in orientation (the default).
    Linear,
    /// Joint-space interpolation to the IK solution nearest the previous joints.
    Joint,
}

/// One programmed pose: 80 bytes, nothing on the heap. Its name lives in [`Job::names`]
/// and its location text is made from `line` when a message needs it
/// ([`Job::waypoint_origin`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Waypoint {
    /// Pose of the TCP in the work frame.
    pub work_T_tcp: Isometry3<f64>,
    /// TCP speed (m/s) of the segment ending here; `None` = the job's speed.
    pub speed: Option<f64>,
    /// Line of the CSV file the waypoint was read from (1-based), or 0 for a waypoint of a
    /// YAML `waypoints:` list (located by its index).
    pub line: u32,
    /// Motion of the segment that ends at this waypoint (ignored on the first waypoint).
    pub motion: Motion,
    /// The segment ending here is a process segment (constant speed required).
    pub process: bool,
}

/// The tool mounted on the tip link.
#[derive(Debug, Clone)]
pub struct Tool {
    /// Pose of the TCP in the tip-link frame.
    pub tip_T_tcp: Isometry3<f64>,
    /// The process does not care about rotation about the tool z axis.
    pub free_spin: bool,
    /// Allowed spin about tool z (rad), `[min, max]`.
    pub spin_range: (f64, f64),
    /// Largest allowed rate of spin change (rad/s), `None` = unlimited.
    pub spin_rate: Option<f64>,
    /// The tool's bodies in the tip-link frame (SI), empty when not modelled.
    pub geometry: Vec<crate::cell::BodySpec>,
}

/// Limits the assessment applies.
#[derive(Debug, Clone, Copy)]
pub struct Limits {
    /// Largest tool angular speed (rad/s).
    pub tool_angular_speed: f64,
    /// Fraction of each URDF joint velocity limit that may be used (0, 1].
    pub joint_speed_scale: f64,
    /// Margin to a revolute joint's limit that raises `near_joint_limit` (rad).
    pub near_limit_margin_angle: f64,
    /// Margin to a prismatic joint's limit that raises `near_joint_limit` (m).
    pub near_limit_margin_length: f64,
    /// Largest TCP acceleration on straight-line moves (m/s², > 0).
    pub tcp_acceleration: f64,
    /// Largest tool angular acceleration on straight-line moves (rad/s², > 0).
    pub tool_angular_acceleration: f64,
    /// Multiplies each joint's default acceleration limit
    /// ([`crate::motion::joint_acceleration_limit`]), > 0.
    pub joint_acceleration_scale: f64,
    /// Share of the programmed speed a process segment may lose before a `process_speed`
    /// warning, in [0, 1).
    pub process_speed_tolerance: f64,
    /// Distance between bodies (m) below which `clearance` is raised.
    pub clearance: f64,
}

/// An acceleration limit the path file gives one joint (`limits.joint_accelerations`). The
/// joint's kind, and so the value's unit, is known only with the robot: the value stays in
/// the job's [`Units`] until [`Job::apply_joint_accelerations`].
#[derive(Debug, Clone, PartialEq)]
pub struct GivenAcceleration {
    /// The joint's name as written.
    pub joint: String,
    /// The value as written, > 0, in the job's angle unit/s² (revolute) or length unit/s²
    /// (prismatic).
    pub value: f64,
}

/// Sampling density along the path.
#[derive(Debug, Clone, Copy)]
pub struct Sampling {
    /// Largest TCP distance between consecutive samples (m).
    pub step: f64,
    /// Largest orientation change between consecutive samples (rad).
    pub angle_step: f64,
}

/// Requested arm configuration for the first pose (analytic solvers), each `None` = free.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct ConfigRequest {
    /// Shoulder side asked for; `None` leaves it to armpath.
    pub shoulder: Option<Shoulder>,
    /// Elbow side asked for; `None` leaves it to armpath.
    pub elbow: Option<Elbow>,
    /// Wrist sense asked for; `None` leaves it to armpath.
    pub wrist: Option<Wrist>,
}

impl ConfigRequest {
    /// A request for exactly configuration `c`.
    pub fn exactly(c: Config) -> Self {
        ConfigRequest {
            shoulder: Some(c.shoulder),
            elbow: Some(c.elbow),
            wrist: Some(c.wrist),
        }
    }

    /// Does configuration `c` satisfy the request?
    pub fn admits(&self, c: Config) -> bool {
        self.shoulder.is_none_or(|s| s == c.shoulder)
            && self.elbow.is_none_or(|e| e == c.elbow)
            && self.wrist.is_none_or(|w| w == c.wrist)
    }
}

impl std::fmt::Display for ConfigRequest {
    /// The requested parts, e.g. `elbow down, wrist flip` (empty when nothing is asked).
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let parts = [
            self.shoulder.map(|s| format!("shoulder {s}")),
            self.elbow.map(|e| format!("elbow {e}")),
            self.wrist.map(|w| format!("wrist {w}")),
        ];
        let parts: Vec<String> = parts.into_iter().flatten().collect();
        f.write_str(&parts.join(", "))
    }
}

/// Joint values given by the user, kept in file units until the robot says which joints are
/// prismatic (see [`StartJoints::to_si`]).
#[derive(Debug, Clone)]
pub struct StartJoints {
    /// One value per joint of the chain, in the units they were given in (revolute values in
    /// the angle unit, prismatic ones in the length unit).
    pub values: Vec<f64>,
    /// Multiply a revolute value by this to get rad.
    pub angle_to_rad: f64,
    /// Multiply a prismatic value by this to get m.
    pub length_to_m: f64,
    /// Field name for messages (`start_joints`).
    pub origin: String,
    /// Use the values only as a starting guess for the first pose (`start_joints_seed: true`
    /// or `--start-joints-as-seed`); otherwise they must put the TCP on the first waypoint.
    pub seed: bool,
}

impl StartJoints {
    /// Values in SI given each joint's kind (`true` = prismatic). Errors (as a message) when the
    /// count differs from the robot's DOF, or a value lies outside
    /// [`units::MAX_ABS_ANGLE_RAD`] (revolute) or [`units::MAX_ABS_LENGTH_M`] (prismatic).
    pub fn to_si(&self, prismatic: &[bool]) -> Result<Joints, String> {
        if self.values.len() != prismatic.len() || prismatic.len() > MAX_DOF {
            return Err(format!(
                "has {} values but the robot has {} joints: give one value per joint",
                self.values.len(),
                prismatic.len()
            ));
        }
        let mut q = Joints::zeros(prismatic.len());
        for (k, (v, &p)) in self.values.iter().zip(prismatic).enumerate() {
            let (si, max, kind, unit) = if p {
                let unit = if self.length_to_m == 1.0 { "m" } else { "mm" };
                (self.length_to_m, units::MAX_ABS_LENGTH_M, "prismatic", unit)
            } else {
                let unit = if self.angle_to_rad == 1.0 {
                    "rad"
                } else {
                    "deg"
                };
                (
                    self.angle_to_rad,
                    units::MAX_ABS_ANGLE_RAD,
                    "revolute",
                    unit,
                )
            };
            if !(v * si).is_finite() || (v * si).abs() > max {
                return Err(format!(
                    "value {} ({}) is outside the range of a {kind} joint, ±{} {unit}: \
                     give a joint value within it (check the units: {unit})",
                    k + 1,
                    units::fmt_exact(*v),
                    units::fmt_sci(max / si)
                ));
            }
            q[k] = v * si;
        }
        Ok(q)
    }
}

/// A problem in the input that armpath could work around (reported as an `input` finding).
#[derive(Debug, Clone, PartialEq)]
pub struct InputWarning {
    /// Field path or `file line N`.
    pub location: String,
    /// What was done, and what to change to silence it.
    pub message: String,
    /// Index of the waypoint concerned, if any.
    pub waypoint: Option<usize>,
}

/// A validated job.
#[derive(Debug, Clone)]
pub struct Job {
    /// The path file (YAML or CSV) the job was read from.
    pub source: PathBuf,
    /// The file the waypoints were read from: `source` itself, or the CSV file a path file
    /// names in `waypoints:`.
    pub waypoints_file: PathBuf,
    /// URDF of the robot: the `--robot` override, else the file's `robot:` resolved against the
    /// path file's folder.
    pub robot: PathBuf,
    /// Tip link of the chain, if chosen.
    pub tip: Option<String>,
    /// The tool mounted on the tip link (default: TCP at the tip-link frame).
    pub tool: Tool,
    /// Pose of the work frame in the robot base frame; waypoints are given in the work frame.
    pub base_T_work: Isometry3<f64>,
    /// Joints at the first waypoint, if given (file or command line).
    pub start_joints: Option<StartJoints>,
    /// Arm configuration asked for at the first pose (each part `None` = free).
    pub config: ConfigRequest,
    /// Programmed TCP speed (m/s), > 0.
    pub speed: f64,
    /// Programmed reorientation speed (rad/s), > 0, if set.
    pub orientation_speed: Option<f64>,
    /// Limits the assessment applies, in SI.
    pub limits: Limits,
    /// Sampling density along the path, in SI.
    pub sampling: Sampling,
    /// The units the file was written in (for echoing values back to the user).
    pub units: Units,
    /// At least two waypoints (a path needs a start and an end). Shared with the plan,
    /// which reads the poses from here instead of keeping a copy; change them through
    /// `Arc::make_mut`.
    pub waypoints: Arc<Vec<Waypoint>>,
    /// One name per waypoint (shared with the report).
    pub names: WaypointNames,
    /// Blend radii and joint-move speeds per waypoint: empty when no waypoint sets one, else
    /// one per waypoint (kept apart from `waypoints` so that paths without them pay nothing).
    pub move_keys: Arc<Vec<crate::motion::MoveKey>>,
    /// Problems in the input that armpath worked around, in the order found.
    pub warnings: Vec<InputWarning>,
    /// Acceleration limits the path file gives single joints (`limits.joint_accelerations`),
    /// sorted by name; apply them with [`Job::apply_joint_accelerations`]. Empty: every joint
    /// follows the default rule.
    pub joint_accelerations: Vec<GivenAcceleration>,
    /// The cell file, when the path file names one (`cell:`) or `--cell` is given.
    pub cell: Option<std::sync::Arc<crate::cell::CellFile>>,
}

impl Job {
    /// Give `robot`'s joints the accelerations of `limits.joint_accelerations`, each by its
    /// kind (angle or length unit/s²). A name the robot lacks is an error at
    /// `limits.joint_accelerations.<name>` listing the robot's joint names, and so is a value
    /// outside the accepted range of its kind.
    pub fn apply_joint_accelerations(&self, robot: &mut crate::robot::Robot) -> Result<(), Error> {
        motion_keys::apply_joint_accelerations(self, robot)
    }

    /// Name of waypoint `i` (given or `wp<i + 1>`), empty past the last.
    pub fn waypoint_name(&self, i: usize) -> String {
        self.names
            .get(i)
            .map(|n| n.into_owned())
            .unwrap_or_default()
    }

    /// Where waypoint `i` came from, for messages: `seam.csv line 5` or `waypoints[3]`.
    pub fn waypoint_origin(&self, i: usize) -> String {
        origin(
            &self.waypoints_file,
            self.waypoints.get(i).map_or(0, |w| w.line),
            i,
        )
    }
}

/// `file line N` for a CSV line (`line > 0`), else `waypoints[index]`.
pub(crate) fn origin(file: &std::path::Path, line: u32, index: usize) -> String {
    if line == 0 {
        return format!("waypoints[{index}]");
    }
    let name = file
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| file.display().to_string());
    format!("{name} line {line}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn waypoint_record_fits_the_memory_budget() {
        // Budget per waypoint for the whole check: 100 bytes (source: common practice, the
        // project's stated budget). The record takes the pose (7 f64 = 56 B), the speed
        // (`Option<f64>`, 16 B), the line (4 B), motion and process (1 B each), padded to 80 B;
        // unnamed waypoints store nothing else (the plan and report share these records and
        // the name store), named ones add their name bytes and a 4 B offset.
        assert_eq!(std::mem::size_of::<Isometry3<f64>>(), 56);
        assert_eq!(std::mem::size_of::<Waypoint>(), 80);
        assert!(std::mem::size_of::<Waypoint>() + std::mem::size_of::<u32>() <= 100);
    }
}
