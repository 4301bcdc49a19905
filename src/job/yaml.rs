//! Path files (YAML) and the assembly of a [`Job`] from a file plus command-line overrides.
//!
//! A path file is a YAML mapping; every key is described on the `*Spec` structs below (the
//! README's format section is written from these comments). Example:
//!
//! ```yaml
//! units: {length: mm, angle: deg}
//! robot: ../robots/arm6.urdf
//! tool: {xyz: [0, 0, 180], rpy: [0, 0, 0]}
//! work_frame: {xyz: [900, 0, 250], quat: [1, 0, 0, 0]}
//! speed: 20
//! waypoints:
//!   - {name: approach, xyz: [0, 0, 60], rpy: [180, 0, 0], motion: joint}
//!   - {name: seam_a, xyz: [0, 0, 0], rpy: [180, 0, 0]}
//!   - {name: seam_b, xyz: [400, 0, 0], rpy: [180, 0, 0], speed: 8, process: true}
//! ```
//!
//! A file whose extension is `.csv` (any case) is read as CSV waypoints instead (see
//! `csv_file`); every setting then comes from [`Overrides`].
//!
//! Everything is converted to SI (m, rad, s) here, once.

use super::csv_file;
use super::units::{self, check_finite_array, fmt_list, fmt_num, AngleUnit, LengthUnit, PoseError};
use super::units::{RawOrientation, Units};
use super::{
    ConfigRequest, InputWarning, Job, Limits, Motion, NamesBuilder, Sampling, StartJoints, Tool,
    Waypoint, WaypointNames,
};
use crate::error::Error;
use crate::ik::analytic::{Elbow, Shoulder, Wrist};
use crate::rotation;
use nalgebra::Isometry3;
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde::Deserialize;
use std::fmt;
use std::path::{Path, PathBuf};

/// Input files larger than this are refused before reading: the whole YAML file is held in
/// memory together with its parsed events (several times its size), and a real path of even
/// a million waypoints takes well under 512 MiB, so a bigger file is a wrong file.
pub(super) const MAX_FILE_BYTES: u64 = 512 * 1024 * 1024;

/// Deepest bracket (flow `[`/`{`) nesting accepted in a YAML path file. A path file needs 4
/// levels at most (`{waypoints: [{xyz: [...]}]}`); 64 leaves room for any hand-written layout.
/// The limit exists because the YAML parser's work grows with the square of this depth when
/// flow collections sit inside a block mapping (20,000 levels take seconds, 200,000 minutes),
/// so a pathological file is refused by a linear pre-scan instead of hanging.
const MAX_FLOW_DEPTH: usize = 64;

/// Two consecutive waypoints closer than this (m) are at the same position. 1 nm is far below
/// any robot's repeatability, so only exact repeats (up to unit-conversion rounding) match.
const SAME_POSITION: f64 = 1e-9;

/// Two consecutive orientations closer than this (rad) are the same, for the same reason.
const SAME_ORIENTATION: f64 = 1e-9;

// Defaults. Each is in SI; the comment says why it was chosen.

/// 90 deg/s: a common process bound on tool reorientation speed in seam work (gluing,
/// welding, deburring), slow enough that the process is not disturbed by the tool turning.
const DEFAULT_TOOL_ANGULAR_SPEED_DEG_S: f64 = 90.0;
/// 1.0: the URDF velocity limits are the robot's own; use them in full unless told otherwise.
const DEFAULT_JOINT_SPEED_SCALE: f64 = 1.0;
/// 5°: leaves room to touch up taught points on the real cell and for the tolerance between
/// model and cell, without flagging ordinary use of a joint's range.
const DEFAULT_NEAR_LIMIT_MARGIN_DEG: f64 = 5.0;
/// 5 mm: the same reasoning as the angle margin, for prismatic joints.
const DEFAULT_NEAR_LIMIT_MARGIN_MM: f64 = 5.0;
/// 1 mm: finer than usual seam tolerances, yet a 1 m path is only a thousand samples.
const DEFAULT_STEP_MM: f64 = 1.0;
/// 0.5°: resolves the fast wrist motion near a wrist singularity; at a 100 mm lever it moves
/// the tool tip about as far as the 1 mm step.
const DEFAULT_ANGLE_STEP_DEG: f64 = 0.5;
/// ±180°: one full turn contains every spin angle exactly once, so a free-spin tool may take
/// any spin without the search repeating itself.
const DEFAULT_SPIN_RANGE_DEG: (f64, f64) = (-180.0, 180.0);

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

/// The top level of a path file. Every key is optional except `speed` (which `--speed` may
/// supply instead), `robot` (or `--robot`) and `waypoints`. Unknown keys are errors.
#[derive(Debug, Default, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a path file: a YAML mapping with keys such as robot, speed and waypoints"
)]
struct PathFileSpec {
    /// `units: {length: mm|m, angle: deg|rad}`: the units of every number in this file and in
    /// a CSV file named by `waypoints`. Each key is optional; default mm and deg.
    units: Option<UnitsSpec>,
    /// `robot: <file.urdf>`: the robot, relative to this file's folder. `--robot` replaces it.
    robot: Option<String>,
    /// `tip: <link name>`: the tip link of the chain (the link the tool is mounted on).
    /// Optional; the robot reader picks the tip when absent.
    tip: Option<String>,
    /// `tool: {...}`: the tool, see [`ToolSpec`]. Default: TCP at the tip-link frame.
    tool: Option<ToolSpec>,
    /// `work_frame: {xyz, rpy|quat|rotvec}`: pose of the work frame in the robot base frame;
    /// waypoints are given in the work frame. Default: the base frame.
    work_frame: Option<FrameSpec>,
    /// `start_joints: [j1, j2, ...]`: joints at the first waypoint, one per joint of the chain
    /// (angle unit; length unit for prismatic joints). Optional. They must put the TCP on the
    /// first waypoint (within the IK tolerance) unless `start_joints_seed` is true.
    start_joints: Option<Vec<f64>>,
    /// `start_joints_seed: true`: use `start_joints` only as a starting guess for the first
    /// pose (the solution nearest them in their configuration). Default false.
    start_joints_seed: Option<bool>,
    /// `config: {shoulder, elbow, wrist}`: requested arm configuration at the first pose, see
    /// [`ConfigSpec`]. Optional.
    config: Option<ConfigSpec>,
    /// `speed: <number>`: programmed TCP speed, length unit per second, > 0. Required unless
    /// `--speed` is given.
    speed: Option<f64>,
    /// `orientation_speed: <number>`: programmed reorientation speed, angle unit per second,
    /// > 0. Optional; needed for linear segments that turn the tool without moving the TCP.
    orientation_speed: Option<f64>,
    /// `limits: {...}`: see [`LimitsSpec`].
    limits: Option<LimitsSpec>,
    /// `sampling: {...}`: see [`SamplingSpec`].
    sampling: Option<SamplingSpec>,
    /// `waypoints:` either a list of waypoints (see [`WaypointSpec`]) or the name of a CSV
    /// waypoint file relative to this file's folder (`waypoints: seam.csv`), read in this
    /// file's units. At least two waypoints.
    waypoints: WaypointsSpec,
}

/// `units:` keys.
#[derive(Debug, Default, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "units: a mapping {length: mm|m, angle: deg|rad}"
)]
struct UnitsSpec {
    /// `length: mm` (default) or `m`.
    length: Option<LengthUnit>,
    /// `angle: deg` (default) or `rad`.
    angle: Option<AngleUnit>,
}

/// `tool:` keys. The pose is the TCP in the tip-link frame.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "tool: a mapping with xyz and optionally one of rpy, quat, rotvec, and free_spin, spin_range, spin_rate"
)]
struct ToolSpec {
    /// `xyz: [x, y, z]`: TCP position in the tip-link frame, length unit. Required when `tool:`
    /// is given (an omitted offset would silently put the TCP on the flange).
    xyz: [f64; 3],
    /// `rpy: [roll, pitch, yaw]`, angle unit, `R = Rz(yaw)·Ry(pitch)·Rx(roll)` (URDF).
    rpy: Option<[f64; 3]>,
    /// `quat: [w, x, y, z]`, normalised (with a warning when its length is off by > 1e-6).
    quat: Option<[f64; 4]>,
    /// `rotvec: [x, y, z]`: rotation axis × angle, angle unit.
    rotvec: Option<[f64; 3]>,
    /// `free_spin: true|false` (default false): the process does not care about rotation
    /// about the tool z axis, so armpath may choose it.
    free_spin: Option<bool>,
    /// `spin_range: [min, max]`: allowed spin about tool z, angle unit, min ≤ max. Default
    /// [-180, 180] degrees. Only used with `free_spin: true`.
    spin_range: Option<[f64; 2]>,
    /// `spin_rate: <number>`: largest rate of spin change, angle unit per second, > 0.
    /// Default unlimited. Only used with `free_spin: true`.
    spin_rate: Option<f64>,
}

/// `work_frame:` keys: `xyz` (required when `work_frame:` is given, length unit) and at most
/// one of `rpy`, `quat`, `rotvec` (none = no rotation).
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "work_frame: a mapping with xyz and optionally one of rpy, quat, rotvec"
)]
struct FrameSpec {
    /// `xyz: [x, y, z]`: origin of the work frame in the base frame, length unit.
    xyz: [f64; 3],
    /// `rpy: [roll, pitch, yaw]`, angle unit (URDF convention).
    rpy: Option<[f64; 3]>,
    /// `quat: [w, x, y, z]`, normalised.
    quat: Option<[f64; 4]>,
    /// `rotvec: [x, y, z]`: axis × angle, angle unit.
    rotvec: Option<[f64; 3]>,
}

/// `config:` keys, each optional (absent = armpath may choose).
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "config: a mapping {shoulder: front|back, elbow: up|down, wrist: flip|noflip}"
)]
struct ConfigSpec {
    /// `shoulder: front|back`.
    shoulder: Option<Shoulder>,
    /// `elbow: up|down`.
    elbow: Option<Elbow>,
    /// `wrist: flip|noflip`.
    wrist: Option<Wrist>,
}

/// `limits:` keys, each optional.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "limits: a mapping with tool_angular_speed, joint_speed_scale, near_limit_margin"
)]
struct LimitsSpec {
    /// `tool_angular_speed: <number>`: largest tool angular speed, angle unit per second, > 0.
    /// Default 90 deg/s, a common process bound.
    tool_angular_speed: Option<f64>,
    /// `joint_speed_scale: <number>`: fraction of each URDF joint velocity limit that may be
    /// used, in (0, 1]. Default 1. Values above 1 are refused: they would allow joints to move
    /// faster than the robot description permits.
    joint_speed_scale: Option<f64>,
    /// `near_limit_margin: <number>` or `{angle: <number>, length: <number>}`, ≥ 0: distance to
    /// a joint limit that raises a warning. A single number is used in the angle unit for
    /// revolute joints and in the length unit for prismatic joints; in the map form an omitted
    /// key keeps its default. Default 5 deg and 5 mm.
    near_limit_margin: Option<MarginSpec>,
}

/// `near_limit_margin`: one number for both joint kinds, or separate values.
#[derive(Debug)]
enum MarginSpec {
    Both(f64),
    Split(SplitMargin),
}

/// `near_limit_margin: {angle, length}` keys.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "near_limit_margin: a number or a mapping {angle: <number>, length: <number>}"
)]
struct SplitMargin {
    /// Margin for revolute joints, angle unit.
    angle: Option<f64>,
    /// Margin for prismatic joints, length unit.
    length: Option<f64>,
}

impl<'de> Deserialize<'de> for MarginSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = MarginSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a number, or a mapping {angle: <number>, length: <number>}")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<MarginSpec, E> {
                Ok(MarginSpec::Both(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<MarginSpec, E> {
                Ok(MarginSpec::Both(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<MarginSpec, E> {
                Ok(MarginSpec::Both(v as f64))
            }
            fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<MarginSpec, A::Error> {
                SplitMargin::deserialize(de::value::MapAccessDeserializer::new(map))
                    .map(MarginSpec::Split)
            }
        }
        d.deserialize_any(V)
    }
}

/// `sampling:` keys, each optional.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "sampling: a mapping {step: <number>, angle_step: <number>}"
)]
struct SamplingSpec {
    /// `step: <number>`: largest TCP distance between consecutive samples, length unit, > 0.
    /// Default 1 mm.
    step: Option<f64>,
    /// `angle_step: <number>`: largest orientation change between consecutive samples, angle
    /// unit, > 0. Default 0.5 deg.
    angle_step: Option<f64>,
}

/// `waypoints:` a list of waypoints or a CSV file name.
#[derive(Debug)]
enum WaypointsSpec {
    List(Vec<WaypointSpec>),
    Csv(String),
}

impl Default for WaypointsSpec {
    fn default() -> Self {
        WaypointsSpec::List(Vec::new())
    }
}

impl<'de> Deserialize<'de> for WaypointsSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = WaypointsSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a list of waypoints, or the name of a CSV waypoint file")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<WaypointsSpec, E> {
                Ok(WaypointsSpec::Csv(v.to_string()))
            }
            fn visit_seq<A: SeqAccess<'de>>(self, seq: A) -> Result<WaypointsSpec, A::Error> {
                Vec::deserialize(de::value::SeqAccessDeserializer::new(seq))
                    .map(WaypointsSpec::List)
            }
        }
        d.deserialize_any(V)
    }
}

/// One waypoint in a `waypoints:` list: the TCP pose in the work frame and the segment that
/// ends here.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a waypoint: a mapping with xyz, one of rpy/quat/rotvec, and optionally name, motion, speed, process"
)]
struct WaypointSpec {
    /// `name: <text>`: unique name. Default `wp<n>`, n the 1-based position in the list.
    name: Option<String>,
    /// `xyz: [x, y, z]`: TCP position in the work frame, length unit. Required.
    xyz: [f64; 3],
    /// `rpy: [roll, pitch, yaw]`, angle unit (URDF). Exactly one of rpy, quat, rotvec.
    rpy: Option<[f64; 3]>,
    /// `quat: [w, x, y, z]`, normalised (warning when its length is off by > 1e-6).
    quat: Option<[f64; 4]>,
    /// `rotvec: [x, y, z]`: axis × angle, angle unit.
    rotvec: Option<[f64; 3]>,
    /// `motion: linear|joint` (default linear): how the TCP gets here from the previous
    /// waypoint. Ignored on the first waypoint.
    motion: Option<MotionSpec>,
    /// `speed: <number>`: TCP speed of the segment ending here, length unit per second, > 0.
    /// Default: the job's `speed`.
    speed: Option<f64>,
    /// `process: true|false` (default false): the segment ending here is a process segment
    /// (constant TCP speed required).
    process: Option<bool>,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "lowercase")]
enum MotionSpec {
    Linear,
    Joint,
}

/// The waypoints as read from a file, in their compact form, with what later checks need
/// for their messages.
#[derive(Debug)]
pub(super) struct Loaded {
    pub waypoints: Vec<Waypoint>,
    pub names: NamesBuilder,
    /// The file gave the first waypoint's motion (`motion:` key or a non-empty `motion` cell).
    pub first_motion_given: bool,
}

/// Location of waypoint `i` in its file for errors: `waypoints[2]` or `line 5`.
fn location(w: &Waypoint, i: usize) -> String {
    if w.line == 0 {
        format!("waypoints[{i}]")
    } else {
        format!("line {}", w.line)
    }
}

/// Checks that `path` names a readable regular file of at most [`MAX_FILE_BYTES`]. `what` names
/// the kind of file ("path file"); `referenced_by` (may be empty) says where the name came from.
pub(super) fn check_file(path: &Path, what: &str, referenced_by: &str) -> Result<(), Error> {
    let from = if referenced_by.is_empty() {
        String::new()
    } else {
        format!(" ({referenced_by})")
    };
    let md = std::fs::metadata(path).map_err(|e| {
        let msg = if e.kind() == std::io::ErrorKind::NotFound {
            format!("the {what} does not exist{from}: check the file name and folder")
        } else {
            format!("the {what} cannot be read{from} ({e}): check that the file is readable")
        };
        Error::input(path, "file", msg)
    })?;
    if md.is_dir() {
        return Err(Error::input(
            path,
            "file",
            format!("is a folder, not a {what}{from}: give the path of the file itself"),
        ));
    }
    if !md.is_file() {
        // Reading a FIFO would block until some other program writes to it, and a device may
        // never end: only regular files are read.
        return Err(Error::input(
            path,
            "file",
            format!(
                "is not a regular file (a named pipe, device or socket), so it cannot be a \
                 {what}{from}: save the content to a file and give that file's path"
            ),
        ));
    }
    if md.len() > MAX_FILE_BYTES {
        return Err(Error::input(
            path,
            "file",
            format!(
                "is {} bytes ({:.1} MiB), larger than the {} MiB armpath reads: a {what} this \
                 large is almost certainly the wrong file; split a genuinely long path into \
                 several files",
                md.len(),
                md.len() as f64 / (1024.0 * 1024.0),
                MAX_FILE_BYTES / (1024 * 1024)
            ),
        ));
    }
    Ok(())
}

/// Reads a whole file of at most [`MAX_FILE_BYTES`]. The cap is applied while reading, as a
/// device or pipe (`/dev/zero`) reports length 0 and may never end. Call [`check_file`] first
/// for the friendlier messages on missing files and folders.
pub(super) fn read_file(path: &Path, what: &str) -> Result<Vec<u8>, Error> {
    use std::io::Read;
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_FILE_BYTES + 1).read_to_end(&mut bytes))
        .map_err(|e| {
            Error::input(
                path,
                "file",
                format!("the {what} cannot be read ({e}): check that the file is readable"),
            )
        })?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err(Error::input(
            path,
            "file",
            format!(
                "is larger than the {} MiB armpath reads: a {what} this large is almost \
                 certainly the wrong file; split a genuinely long path into several files",
                MAX_FILE_BYTES / (1024 * 1024)
            ),
        ));
    }
    Ok(bytes)
}

/// Reads the job in `path`: a YAML path file, or a CSV waypoint file when the extension is
/// `.csv` (any case), then applies `overrides` (see [`Overrides`] for units and precedence).
///
/// Errors name the file and the line (syntax, unknown keys, wrong types) or the field path
/// (`waypoints[2].quat`, 0-based indices) and say what to change. Problems armpath can work
/// around (quaternion off unit length, repeated waypoints, settings that have no effect)
/// become [`InputWarning`]s in the job.
pub fn load(path: &Path, overrides: &Overrides) -> Result<Job, Error> {
    let what = if is_csv(path) {
        "CSV waypoint file"
    } else {
        "path file"
    };
    check_file(path, what, "")?;
    let bytes = read_file(path, what)?;
    if !is_csv(path) {
        return load_bytes(&bytes, path, overrides);
    }
    let override_units = overrides.units()?;
    let mut warnings = Vec::new();
    let loaded = csv_file::parse_waypoints(&bytes, path, &override_units, &mut warnings)?;
    // The file's text is no longer needed: free it before the job is assembled, so that it
    // does not add to the peak memory of a long path.
    drop(bytes);
    csv_job(path, overrides, override_units, loaded, warnings)
}

/// The job of a CSV waypoint file loaded directly, from its parsed waypoints.
fn csv_job(
    path: &Path,
    overrides: &Overrides,
    override_units: Units,
    loaded: Loaded,
    warnings: Vec<InputWarning>,
) -> Result<Job, Error> {
    build(
        path,
        PathFileSpec::default(),
        override_units,
        overrides,
        override_units,
        Source::Csv(loaded, path.to_path_buf()),
        warnings,
    )
}

/// True when `path` names a CSV waypoint file (extension `.csv`, any case).
fn is_csv(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.to_string_lossy().eq_ignore_ascii_case("csv"))
}

/// As [`load`], for file contents already in memory (the fuzz targets use it). `path` picks
/// the format by its extension, names the file in messages, and is the base against which a
/// `robot:` and a `waypoints: <file.csv>` are resolved; a CSV file named that way is still
/// read from disk.
pub fn load_bytes(bytes: &[u8], path: &Path, overrides: &Overrides) -> Result<Job, Error> {
    let override_units = overrides.units()?;
    if is_csv(path) {
        let mut warnings = Vec::new();
        let loaded = csv_file::parse_waypoints(bytes, path, &override_units, &mut warnings)?;
        csv_job(path, overrides, override_units, loaded, warnings)
    } else {
        let spec = parse_yaml(bytes, path)?;
        let file_units = match &spec.units {
            None => Units::default(),
            Some(u) => Units {
                length: u.length.unwrap_or(LengthUnit::Mm),
                angle: u.angle.unwrap_or(AngleUnit::Deg),
            },
        };
        build(
            path,
            spec,
            file_units,
            overrides,
            override_units,
            Source::Yaml,
            Vec::new(),
        )
    }
}

/// Where the waypoints come from.
enum Source {
    /// From the path file's `waypoints:` (a list or a CSV file name).
    Yaml,
    /// A CSV file loaded directly (already read), and its path.
    Csv(Loaded, PathBuf),
}

/// `line L column C` (both 1-based, the column counted in characters) of byte `offset` of
/// `bytes`, whose first `offset` bytes are valid UTF-8.
pub(super) fn line_column(bytes: &[u8], offset: usize) -> String {
    let before = &bytes[..offset.min(bytes.len())];
    let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
    let start = before
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |i| i + 1);
    let column = String::from_utf8_lossy(&before[start..]).chars().count() + 1;
    format!("line {line} column {column}")
}

/// The first character YAML does not allow in a text (a NUL byte or another control
/// character other than tab, line feed and carriage return), and its byte offset.
fn first_control_char(text: &str) -> Option<(usize, char)> {
    text.char_indices().find(|&(_, c)| {
        (c.is_control() && !matches!(c, '\t' | '\n' | '\r' | '\u{85}'))
            || matches!(c, '\u{fffe}' | '\u{ffff}')
    })
}

fn parse_yaml(bytes: &[u8], path: &Path) -> Result<PathFileSpec, Error> {
    // A byte-order mark some editors save at the start of UTF-8 text carries no content.
    let bytes = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
    let text = std::str::from_utf8(bytes).map_err(|e| {
        Error::input(
            path,
            line_column(bytes, e.valid_up_to()),
            "is not UTF-8 text (a binary file, or text saved in another encoding?): give a \
             YAML path file saved as UTF-8, or a .csv waypoint file",
        )
    })?;
    if let Some((at, c)) = first_control_char(text) {
        let what = if c == '\0' {
            "a NUL byte".to_string()
        } else {
            format!("the control character U+{:04X}", c as u32)
        };
        return Err(Error::input(
            path,
            line_column(bytes, at),
            format!(
                "holds {what}, which YAML text may not contain (a binary file?): remove it, or \
                 give a YAML path file saved as UTF-8 text"
            ),
        ));
    }
    let blank = text.lines().all(|l| {
        let t = l.trim();
        t.is_empty() || t.starts_with('#') || t == "---" || t == "..."
    });
    if blank {
        return Err(Error::input(
            path,
            "file",
            "is empty: write the path file's settings and waypoints (at least `robot:`, \
             `speed:` and `waypoints:`)",
        ));
    }
    if let Err((line, depth)) = check_flow_depth(text) {
        return Err(Error::input(
            path,
            format!("line {line}"),
            format!(
                "brackets nest {depth} levels deep here, more than the {MAX_FLOW_DEPTH} \
                 armpath accepts (a path file needs at most 4): check that this is a path file"
            ),
        ));
    }
    serde_yaml::from_str(text).map_err(|e| yaml_error(path, text, e))
}

/// Linear scan of the flow (bracket) nesting depth of a YAML text. Returns the line (1-based)
/// and depth where [`MAX_FLOW_DEPTH`] is first exceeded.
///
/// The scan follows YAML's lexical rules closely enough for path files: `#` after whitespace
/// starts a comment; `'...'` and `"..."` starting a token are quoted scalars whose brackets do
/// not count; outside brackets, `[`/`{` opens a collection only at the start of a token (in
/// `a[1]` it is text); inside brackets every bracket counts. It is not a full YAML scanner:
/// brackets inside block scalars (`|`, `>`) count, which only matters for a text with more than
/// 64 unbalanced ones; and a quote character in the middle of a plain scalar (`a 'b`) is taken
/// as the start of a quoted scalar, so a file crafted that way can hide nesting from the scan
/// and reach the slow parser. Neither changes what a valid path file means.
fn check_flow_depth(text: &str) -> Result<(), (usize, usize)> {
    let b = text.as_bytes();
    let (mut i, mut line, mut depth) = (0, 1, 0usize);
    // True where a new token may begin: start of text, after whitespace or a flow indicator.
    let mut token_start = true;
    while i < b.len() {
        let c = b[i];
        match c {
            b'\n' => {
                line += 1;
                token_start = true;
            }
            b' ' | b'\t' | b'\r' => token_start = true,
            b'#' if token_start => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                continue;
            }
            b'\'' | b'"' if token_start => {
                // Skip the quoted scalar: '' is an escaped quote in single quotes, \x escapes
                // in double quotes. An unterminated quote runs to the end (the parser reports it).
                i += 1;
                while i < b.len() {
                    match b[i] {
                        b'\n' => line += 1,
                        b'\\' if c == b'"' => {
                            if b.get(i + 1) == Some(&b'\n') {
                                line += 1;
                            }
                            i += 1;
                        }
                        q if q == c => {
                            if c == b'\'' && b.get(i + 1) == Some(&b'\'') {
                                i += 1;
                            } else {
                                break;
                            }
                        }
                        _ => {}
                    }
                    i += 1;
                }
                token_start = false;
            }
            b'[' | b'{' if depth > 0 || token_start => {
                depth += 1;
                if depth > MAX_FLOW_DEPTH {
                    return Err((line, depth));
                }
                token_start = true;
            }
            b']' | b'}' if depth > 0 => {
                depth -= 1;
                token_start = false;
            }
            b',' if depth > 0 => token_start = true,
            _ => token_start = false,
        }
        i += 1;
    }
    Ok(())
}

/// Turns a serde_yaml error into an [`Error::Input`] at `line L column C` (and the field path
/// when known), adding what to do.
fn yaml_error(path: &Path, text: &str, e: serde_yaml::Error) -> Error {
    let full = e.to_string();
    if let Some(loc) = e.location() {
        let at = format!("line {} column {}", loc.line(), loc.column());
        if full.contains("unknown field `<<`") {
            return Error::input(
                path,
                at,
                "`<<` is a YAML merge key, which armpath does not expand: write the merged keys \
                 out in this mapping instead",
            );
        }
        if full.contains("invalid type: integer") {
            if let Some(m) = non_decimal_integer(text, loc.line(), loc.column()) {
                return Error::input(path, at, m);
            }
        }
    }
    let (location, message) = match e.location() {
        Some(loc) => {
            // The location moves into `location`; the parser's messages repeat it inline.
            let repeated = format!(" at line {} column {}", loc.line(), loc.column());
            let msg = full.replace(&repeated, "");
            let msg = msg.as_str();
            // serde_yaml writes `field.path: message`; a path contains no spaces.
            let (field, msg) = match msg.split_once(": ") {
                Some((head, rest)) if !head.contains(' ') && !head.is_empty() => (Some(head), rest),
                _ => (None, msg),
            };
            let at = format!("line {} column {}", loc.line(), loc.column());
            let location = match field {
                Some(f) => format!("{at}, {f}"),
                None => at,
            };
            (location, msg.to_string())
        }
        None => ("file".to_string(), full.clone()),
    };
    let message = message.replace("expected f64", "expected a number");
    let hint = if message.contains("unknown field") {
        "remove the key or correct its spelling"
    } else if message.contains("missing field") {
        "add the key (see the path file format)"
    } else if message.contains("duplicate field") {
        "give each key once"
    } else if message.contains("unknown variant") {
        "use one of the listed values"
    } else if message.contains("invalid length") {
        "give exactly that many values"
    } else if message.contains("invalid type") {
        "write the value in the form the key expects"
    } else if message.contains("recursion limit") {
        "the file nests deeper than any path file needs (limit 128 levels): check that it is a \
         path file"
    } else if message.contains("repetition limit") {
        "YAML aliases (*name) expand to far more data than the file holds: write the values out \
         instead of using anchors and aliases"
    } else if message.contains("more than one document") {
        "keep a single YAML document: remove the extra `---` separators"
    } else if message.contains("tab character") {
        "indent with spaces: YAML does not allow tabs for indentation"
    } else if message.contains("cannot start any token") {
        // Most often a tab at the start of a line, which YAML never accepts as indentation.
        "remove or quote that character; if the line is indented with a tab, indent with \
         spaces instead (YAML does not allow tabs for indentation)"
    } else {
        "fix the YAML syntax there"
    };
    Error::input(path, location, format!("{message}: {hint}"))
}

/// The message for a hexadecimal, octal or binary integer (`0x14`, `0o17`, `0b101`) at `line`
/// and `column` (1-based, characters) of `text`: YAML reads it as an integer, which armpath
/// does not accept where a number is expected. `None` when the token there is not such an
/// integer.
fn non_decimal_integer(text: &str, line: usize, column: usize) -> Option<String> {
    let rest: String = text
        .lines()
        .nth(line.checked_sub(1)?)?
        .chars()
        .skip(column.checked_sub(1)?)
        .collect();
    let token = rest.split([',', ']', '}', ' ', '\t', '#']).next()?;
    let (sign, digits) = match token.strip_prefix('-') {
        Some(rest) => (-1i128, rest),
        None => (1, token.strip_prefix('+').unwrap_or(token)),
    };
    let (radix, name) = match digits.get(..2)? {
        "0x" | "0X" => (16, "hexadecimal"),
        "0o" | "0O" => (8, "octal"),
        "0b" | "0B" => (2, "binary"),
        _ => return None,
    };
    let value = i128::from_str_radix(digits.get(2..)?, radix).ok()? * sign;
    Some(format!(
        "`{token}` is a {name} integer, which armpath does not accept for numbers: write it in \
         decimal, `{value}`"
    ))
}

/// Where a setting's value came from, for errors.
#[derive(Clone, Copy)]
enum At<'a> {
    /// A field of the path file.
    File(&'a Path, &'a str),
    /// A command-line option.
    Option(&'a str),
}

impl At<'_> {
    fn error(&self, msg: String) -> Error {
        match self {
            At::File(path, field) => Error::input(*path, *field, msg),
            At::Option(opt) => Error::usage(*opt, msg),
        }
    }
}

/// A value > 0, finite and in `range_si` (SI), given in a unit of `si` SI per unit; `what` and
/// `unit` complete the message.
fn positive(
    v: f64,
    at: At,
    what: &str,
    unit: &str,
    si: f64,
    range_si: (f64, f64),
) -> Result<f64, Error> {
    units::check_positive(v, si, range_si, what, unit).map_err(|m| at.error(m))?;
    Ok(v)
}

/// The orientation of a pose: at most one of the three forms.
fn one_orientation(
    rpy: Option<[f64; 3]>,
    quat: Option<[f64; 4]>,
    rotvec: Option<[f64; 3]>,
) -> Result<Option<RawOrientation>, String> {
    let given: Vec<RawOrientation> = [
        rpy.map(RawOrientation::Rpy),
        quat.map(RawOrientation::Quat),
        rotvec.map(RawOrientation::Rotvec),
    ]
    .into_iter()
    .flatten()
    .collect();
    match given.as_slice() {
        [] => Ok(None),
        [o] => Ok(Some(*o)),
        several => {
            let keys: Vec<&str> = several.iter().map(|o| o.key()).collect();
            Err(format!(
                "gives {}: give exactly one orientation (rpy, quat or rotvec)",
                keys.join(" and ")
            ))
        }
    }
}

/// A pose from a 6-value override `[x, y, z, roll, pitch, yaw]`.
fn override_pose(v: [f64; 6], option: &str, units: &Units) -> Result<Isometry3<f64>, Error> {
    let o = RawOrientation::Rpy([v[3], v[4], v[5]]);
    units::pose([v[0], v[1], v[2]], Some(&o), units)
        .map(|(p, _)| p)
        .map_err(|e| match e {
            PoseError::Xyz(m) | PoseError::Orientation(m) => Error::usage(option, m),
        })
}

/// Kind of a scalar setting, which fixes its unit in a [`Units`].
#[derive(Clone, Copy)]
enum Quantity {
    Length,
    Angle,
    Speed,
    AngularSpeed,
}

impl Quantity {
    /// The accepted range (SI) of a positive setting of this kind: the sample steps for
    /// lengths and angles, the speed ranges for speeds.
    fn range(self) -> (f64, f64) {
        match self {
            Quantity::Length => units::STEP_RANGE_M,
            Quantity::Angle => units::ANGLE_STEP_RANGE_RAD,
            Quantity::Speed => units::SPEED_RANGE_M_S,
            Quantity::AngularSpeed => units::ANGULAR_SPEED_RANGE_RAD_S,
        }
    }

    /// SI per unit, and the unit's name for messages.
    fn unit(self, u: &Units) -> (f64, String) {
        match self {
            Quantity::Length => (u.length_to_m(), u.length.name().to_string()),
            Quantity::Angle => (u.angle_to_rad(), u.angle.name().to_string()),
            Quantity::Speed => (u.length_to_m(), u.speed_name()),
            Quantity::AngularSpeed => (u.angle_to_rad(), u.angular_speed_name()),
        }
    }
}

/// The `rpy`, `quat` and `rotvec` keys of a pose as read (at most one may be given).
type OrientationKeys = (Option<[f64; 3]>, Option<[f64; 4]>, Option<[f64; 3]>);

/// What every part of the job assembly needs: the file, both unit systems, the warnings.
struct Ctx<'a> {
    path: &'a Path,
    /// Units of the file's values.
    fu: Units,
    /// Units of the override values.
    ou: Units,
    warnings: Vec<InputWarning>,
}

impl Ctx<'_> {
    fn err(&self, location: &str, message: impl Into<String>) -> Error {
        Error::input(self.path, location, message)
    }

    /// A setting > 0 from the file (`field`) and/or an override (`option`), in SI; the override
    /// wins, but a file value is checked either way.
    fn pick(
        &self,
        file: Option<f64>,
        field: &str,
        over: Option<f64>,
        option: &str,
        what: &str,
        q: Quantity,
    ) -> Result<Option<f64>, Error> {
        let (f_si, f_name) = q.unit(&self.fu);
        let (o_si, o_name) = q.unit(&self.ou);
        let from_file = file
            .map(|v| {
                positive(
                    v,
                    At::File(self.path, field),
                    what,
                    &f_name,
                    f_si,
                    q.range(),
                )
            })
            .transpose()?;
        let from_option = over
            .map(|v| positive(v, At::Option(option), what, &o_name, o_si, q.range()))
            .transpose()?;
        Ok(from_option
            .map(|v| v * o_si)
            .or(from_file.map(|v| v * f_si)))
    }

    fn robot_and_tip(
        &self,
        spec: &PathFileSpec,
        ov: &Overrides,
        csv_direct: bool,
    ) -> Result<(PathBuf, Option<String>), Error> {
        let base = self.path.parent().unwrap_or(Path::new(""));
        let robot =
            match (&ov.robot, &spec.robot) {
                (_, Some(r)) if r.trim().is_empty() => {
                    return Err(self.err(
                        "robot",
                        "is empty: give the URDF file, relative to this file's folder",
                    ))
                }
                (Some(r), _) => r.clone(),
                (None, Some(r)) => base.join(r),
                (None, None) if csv_direct => {
                    return Err(self.err(
                        "robot",
                        "a CSV waypoint file names no robot: pass --robot <file.urdf>",
                    ))
                }
                (None, None) => return Err(self.err(
                    "robot",
                    "no robot given: add `robot: <file.urdf>` (relative to this file's folder) \
                     or pass --robot <file.urdf>",
                )),
            };
        if spec.tip.as_deref().is_some_and(|t| t.trim().is_empty()) {
            return Err(self.err(
                "tip",
                "is empty: give the tip link's name or remove the key",
            ));
        }
        if ov.tip.as_deref().is_some_and(|t| t.trim().is_empty()) {
            return Err(Error::usage(
                "--tip",
                "is empty: give the tip link's name or leave the option out",
            ));
        }
        Ok((robot, ov.tip.clone().or(spec.tip.clone())))
    }

    fn limits(&self, spec: Option<&LimitsSpec>, ov: &Overrides) -> Result<Limits, Error> {
        let tool_angular_speed = self
            .pick(
                spec.and_then(|l| l.tool_angular_speed),
                "limits.tool_angular_speed",
                ov.tool_angular_speed,
                "--tool-angular-speed",
                "the largest tool angular speed",
                Quantity::AngularSpeed,
            )?
            .unwrap_or(DEFAULT_TOOL_ANGULAR_SPEED_DEG_S.to_radians());

        let scale = |v: f64, at: At| -> Result<f64, Error> {
            let range = (units::MIN_JOINT_SPEED_SCALE, 1.0);
            let v = positive(
                v,
                at,
                "the joint speed scale",
                "(0, 1]",
                1.0,
                (0.0, f64::MAX),
            )?;
            if v < range.0 {
                return Err(at.error(format!(
                    "is {}, below {}: give a fraction in [{}, 1]; a smaller scale leaves no \
                     meaningful joint speed check",
                    units::fmt_exact(v),
                    range.0,
                    range.0
                )));
            }
            if v > 1.0 {
                return Err(at.error(format!(
                    "is {v}, above 1: that would let joints move faster than the robot \
                     description's velocity limits; give a fraction in (0, 1]"
                )));
            }
            Ok(v)
        };
        let file_scale = spec
            .and_then(|l| l.joint_speed_scale)
            .map(|v| scale(v, At::File(self.path, "limits.joint_speed_scale")))
            .transpose()?;
        let over_scale = ov
            .joint_speed_scale
            .map(|v| scale(v, At::Option("--joint-speed-scale")))
            .transpose()?;

        let fu = &self.fu;
        let margin = |v: f64, field: &str, unit: &str| -> Result<f64, Error> {
            if !v.is_finite() || v < 0.0 {
                return Err(self.err(
                    field,
                    format!("is {v}: give a margin of 0 or more, in {unit}"),
                ));
            }
            Ok(v)
        };
        // A margin may not exceed the largest value of its kind (`Quantity::Angle` or
        // `Quantity::Length`); returns SI.
        let kind_margin = |v: f64, field: &str, q: Quantity| -> Result<f64, Error> {
            let (si, unit) = q.unit(fu);
            let max = match q {
                Quantity::Angle => units::MAX_ABS_ANGLE_RAD,
                _ => units::MAX_ABS_LENGTH_M,
            };
            let v = margin(v, field, &unit)?;
            units::check_bounded(&[v], max, si, "margin", &unit).map_err(|m| self.err(field, m))?;
            Ok(v * si)
        };
        let angle_margin = |v: f64, field: &str| kind_margin(v, field, Quantity::Angle);
        let length_margin = |v: f64, field: &str| kind_margin(v, field, Quantity::Length);
        let mut angle = DEFAULT_NEAR_LIMIT_MARGIN_DEG.to_radians();
        let mut length = DEFAULT_NEAR_LIMIT_MARGIN_MM * 1e-3;
        match spec.and_then(|l| l.near_limit_margin.as_ref()) {
            None => {}
            Some(MarginSpec::Both(v)) => {
                let unit = format!(
                    "{} (revolute) and {} (prismatic)",
                    fu.angle.name(),
                    fu.length.name()
                );
                let field = "limits.near_limit_margin";
                let v = margin(*v, field, &unit)?;
                angle = angle_margin(v, field)?;
                length = length_margin(v, field)?;
            }
            Some(MarginSpec::Split(s)) => {
                if let Some(v) = s.angle {
                    angle = angle_margin(v, "limits.near_limit_margin.angle")?;
                }
                if let Some(v) = s.length {
                    length = length_margin(v, "limits.near_limit_margin.length")?;
                }
            }
        }
        Ok(Limits {
            tool_angular_speed,
            joint_speed_scale: over_scale
                .or(file_scale)
                .unwrap_or(DEFAULT_JOINT_SPEED_SCALE),
            near_limit_margin_angle: angle,
            near_limit_margin_length: length,
        })
    }

    fn sampling(&self, spec: Option<&SamplingSpec>, ov: &Overrides) -> Result<Sampling, Error> {
        let step = self
            .pick(
                spec.and_then(|s| s.step),
                "sampling.step",
                ov.step,
                "--step",
                "the largest TCP step between samples",
                Quantity::Length,
            )?
            .unwrap_or(DEFAULT_STEP_MM * 1e-3);
        let angle_step = self
            .pick(
                spec.and_then(|s| s.angle_step),
                "sampling.angle_step",
                ov.angle_step,
                "--angle-step",
                "the largest orientation step between samples",
                Quantity::Angle,
            )?
            .unwrap_or(DEFAULT_ANGLE_STEP_DEG.to_radians());
        Ok(Sampling { step, angle_step })
    }

    fn tool(&mut self, spec: Option<&ToolSpec>, ov: &Overrides) -> Result<Tool, Error> {
        let mut tool = Tool {
            tip_T_tcp: Isometry3::identity(),
            free_spin: false,
            spin_range: (
                DEFAULT_SPIN_RANGE_DEG.0.to_radians(),
                DEFAULT_SPIN_RANGE_DEG.1.to_radians(),
            ),
            spin_rate: None,
        };
        if let Some(t) = spec {
            let o = (t.rpy, t.quat, t.rotvec);
            tool.tip_T_tcp = self.file_pose("tool", t.xyz, o, false, None)?;
            tool.free_spin = t.free_spin.unwrap_or(false);
            let fu = self.fu;
            if let Some(r) = t.spin_range {
                units::check_bounded(
                    &r,
                    units::MAX_ABS_ANGLE_RAD,
                    fu.angle_to_rad(),
                    "angle",
                    fu.angle.name(),
                )
                .map_err(|m| self.err("tool.spin_range", m))?;
                if r[0] > r[1] {
                    return Err(self.err(
                        "tool.spin_range",
                        format!(
                            "{} has min > max: write [min, max] in {}",
                            fmt_list(&r),
                            fu.angle.name()
                        ),
                    ));
                }
                tool.spin_range = (fu.angle(r[0]), fu.angle(r[1]));
            }
            tool.spin_rate = t
                .spin_rate
                .map(|v| {
                    positive(
                        v,
                        At::File(self.path, "tool.spin_rate"),
                        "the largest spin rate",
                        &fu.angular_speed_name(),
                        fu.angle_to_rad(),
                        units::ANGULAR_SPEED_RANGE_RAD_S,
                    )
                })
                .transpose()?
                .map(|v| fu.angle(v));
            if !tool.free_spin {
                for (given, key) in [
                    (t.spin_range.is_some(), "spin_range"),
                    (t.spin_rate.is_some(), "spin_rate"),
                ] {
                    if given {
                        self.warnings.push(InputWarning {
                            location: format!("tool.{key}"),
                            message: format!(
                                "has no effect without free_spin: true: add `free_spin: true` \
                                 to the tool or remove `{key}`"
                            ),
                            waypoint: None,
                        });
                    }
                }
            }
        }
        if let Some(v) = ov.tool {
            tool.tip_T_tcp = override_pose(v, "--tool", &self.ou)?;
        }
        Ok(tool)
    }

    fn start_joints(
        &self,
        file: Option<&Vec<f64>>,
        file_seed: bool,
        ov: &Overrides,
    ) -> Result<Option<StartJoints>, Error> {
        let seed = file_seed || ov.start_joints_seed;
        let joints = |values: &Vec<f64>, u: &Units, at: At, origin: &str| {
            if values.is_empty() {
                return Err(at.error("is empty: give one value per joint, or leave it out".into()));
            }
            check_finite_array(values).map_err(|m| at.error(m))?;
            Ok(StartJoints {
                values: values.clone(),
                angle_to_rad: u.angle_to_rad(),
                length_to_m: u.length_to_m(),
                origin: origin.to_string(),
                seed,
            })
        };
        let from_file = file
            .map(|v| {
                joints(
                    v,
                    &self.fu,
                    At::File(self.path, "start_joints"),
                    "start_joints",
                )
            })
            .transpose()?;
        let from_option = ov
            .start_joints
            .as_ref()
            .map(|v| joints(v, &self.ou, At::Option("--start-joints"), "--start-joints"))
            .transpose()?;
        Ok(from_option.or(from_file))
    }

    /// A pose from the file (`field` = `tool`, `work_frame`, `waypoints[3]`), with a warning
    /// when a quaternion was normalised.
    fn file_pose(
        &mut self,
        field: &str,
        xyz: [f64; 3],
        (rpy, quat, rotvec): OrientationKeys,
        orientation_required: bool,
        waypoint: Option<usize>,
    ) -> Result<Isometry3<f64>, Error> {
        let o = one_orientation(rpy, quat, rotvec).map_err(|m| self.err(field, m))?;
        if o.is_none() && orientation_required {
            return Err(self.err(
                field,
                "has no orientation: add one of rpy: [roll, pitch, yaw], quat: [w, x, y, z] \
                 or rotvec: [x, y, z]",
            ));
        }
        let (pose, renormalised) = units::pose(xyz, o.as_ref(), &self.fu).map_err(|e| match e {
            PoseError::Xyz(m) => self.err(&format!("{field}.xyz"), m),
            PoseError::Orientation(m) => self.err(
                &format!("{field}.{}", o.map(|o| o.key()).unwrap_or("orientation")),
                m,
            ),
        })?;
        if let (Some(norm), Some(q)) = (renormalised, quat) {
            self.warnings.push(InputWarning {
                location: format!("{field}.quat"),
                message: format!(
                    "the quaternion {} has length {norm}; armpath normalised it: write a unit \
                     quaternion to silence this warning",
                    fmt_list(&q)
                ),
                waypoint,
            });
        }
        Ok(pose)
    }

    /// The waypoints of a `waypoints:` list.
    fn list_waypoints(&mut self, list: Vec<WaypointSpec>) -> Result<Loaded, Error> {
        let mut out = Loaded {
            waypoints: Vec::with_capacity(list.len()),
            names: NamesBuilder::new(),
            first_motion_given: false,
        };
        for (i, w) in list.into_iter().enumerate() {
            let field = format!("waypoints[{i}]");
            let work_T_tcp =
                self.file_pose(&field, w.xyz, (w.rpy, w.quat, w.rotvec), true, Some(i))?;
            let speed = w
                .speed
                .map(|v| {
                    positive(
                        v,
                        At::File(self.path, &format!("{field}.speed")),
                        "the TCP speed of the segment ending here",
                        &self.fu.speed_name(),
                        self.fu.length_to_m(),
                        units::SPEED_RANGE_M_S,
                    )
                })
                .transpose()?
                .map(|v| self.fu.length(v));
            if w.name.as_deref().is_some_and(|n| n.trim().is_empty()) {
                return Err(self.err(
                    &format!("{field}.name"),
                    "is empty: give a name or remove the key",
                ));
            }
            if i == 0 {
                out.first_motion_given = w.motion.is_some();
            }
            out.names.push(w.name.as_deref());
            out.waypoints.push(Waypoint {
                work_T_tcp,
                speed,
                line: 0,
                motion: match w.motion {
                    Some(MotionSpec::Joint) => Motion::Joint,
                    Some(MotionSpec::Linear) | None => Motion::Linear,
                },
                process: w.process.unwrap_or(false),
            });
        }
        Ok(out)
    }
}

/// Assembles the job from the parsed file (`spec`, in units `fu`; an empty spec for a CSV file
/// loaded directly) and the overrides (in units `ou`).
fn build(
    path: &Path,
    spec: PathFileSpec,
    fu: Units,
    ov: &Overrides,
    ou: Units,
    source: Source,
    warnings: Vec<InputWarning>,
) -> Result<Job, Error> {
    let csv_direct = matches!(source, Source::Csv(..));
    let mut cx = Ctx {
        path,
        fu,
        ou,
        warnings,
    };
    let (robot, tip) = cx.robot_and_tip(&spec, ov, csv_direct)?;

    let speed = cx
        .pick(
            spec.speed,
            "speed",
            ov.speed,
            "--speed",
            "the TCP speed",
            Quantity::Speed,
        )?
        .ok_or_else(|| {
            let msg = if csv_direct {
                format!(
                    "a CSV waypoint file carries no job speed: pass --speed <{}>",
                    ou.speed_name()
                )
            } else {
                format!(
                    "no TCP speed given: add `speed: <{}>` or pass --speed",
                    fu.speed_name()
                )
            };
            cx.err("speed", msg)
        })?;
    let orientation_speed = cx.pick(
        spec.orientation_speed,
        "orientation_speed",
        ov.orientation_speed,
        "--orientation-speed",
        "the reorientation speed",
        Quantity::AngularSpeed,
    )?;
    let limits = cx.limits(spec.limits.as_ref(), ov)?;
    let sampling = cx.sampling(spec.sampling.as_ref(), ov)?;
    let tool = cx.tool(spec.tool.as_ref(), ov)?;

    let mut base_T_work = match &spec.work_frame {
        None => Isometry3::identity(),
        Some(w) => cx.file_pose("work_frame", w.xyz, (w.rpy, w.quat, w.rotvec), false, None)?,
    };
    if let Some(v) = ov.work_frame {
        base_T_work = override_pose(v, "--work-frame", &ou)?;
    }

    let start_joints = cx.start_joints(
        spec.start_joints.as_ref(),
        spec.start_joints_seed.unwrap_or(false),
        ov,
    )?;
    let config = spec
        .config
        .as_ref()
        .map(|c| ConfigRequest {
            shoulder: c.shoulder,
            elbow: c.elbow,
            wrist: c.wrist,
        })
        .unwrap_or_default();

    let (loaded, waypoint_file) = match source {
        Source::Csv(wps, p) => (wps, p),
        Source::Yaml => match spec.waypoints {
            WaypointsSpec::Csv(name) => {
                if name.trim().is_empty() {
                    return Err(cx.err(
                        "waypoints",
                        "is empty: give a list of waypoints or a CSV file name",
                    ));
                }
                let base = path.parent().unwrap_or(Path::new(""));
                let csv_path = base.join(name.trim());
                let by = format!(
                    "named by `waypoints:` in {}, relative to its folder",
                    path.display()
                );
                let wps = csv_file::read_waypoints(&csv_path, &fu, &by, &mut cx.warnings)?;
                (wps, csv_path)
            }
            WaypointsSpec::List(list) => (cx.list_waypoints(list)?, path.to_path_buf()),
        },
    };
    let mut warnings = cx.warnings;
    let (waypoints, names) = check_waypoints(
        loaded,
        &waypoint_file,
        orientation_speed,
        &fu,
        &mut warnings,
    )?;

    Ok(Job {
        source: path.to_path_buf(),
        waypoints_file: waypoint_file,
        robot,
        tip,
        tool,
        base_T_work,
        start_joints,
        config,
        speed,
        orientation_speed,
        limits,
        sampling,
        units: fu,
        waypoints: std::sync::Arc::new(waypoints),
        names,
        warnings,
    })
}

/// The warning for segment keys on the first waypoint, which ends no segment: it names the
/// keys actually given (`motion: joint`, `speed`, `process: true`), or `None` when there are
/// none. `process: false` and an absent motion change nothing and are not mentioned.
fn first_waypoint_warning(w: &Waypoint, motion_given: bool, file: &Path) -> Option<InputWarning> {
    let mut keys = Vec::new();
    if motion_given {
        keys.push(match w.motion {
            Motion::Joint => "`motion: joint`",
            Motion::Linear => "`motion: linear`",
        });
    }
    if w.speed.is_some() {
        keys.push("`speed`");
    }
    if w.process {
        keys.push("`process: true`");
    }
    let (list, verb, pronoun) = match keys.split_last()? {
        (one, []) => (one.to_string(), "describes", "it"),
        (last, init) => (
            format!("{} and {last}", init.join(", ")),
            "describe",
            "them",
        ),
    };
    let joint_hint = if motion_given && w.motion == Motion::Joint {
        "; to reach it by a joint move, put a start waypoint (a home pose, say) before it"
    } else {
        ""
    };
    Some(InputWarning {
        location: super::origin(file, w.line, 0),
        message: format!(
            "{list} {verb} the segment ending at a waypoint, and the first waypoint ends none, \
             so armpath ignores {pronoun} there: remove {pronoun} or move {pronoun} to the \
             second waypoint{joint_hint}"
        ),
        waypoint: Some(0),
    })
}

/// Checks across waypoints: count, unique names, repeated poses, turns in place.
fn check_waypoints(
    loaded: Loaded,
    file: &Path,
    orientation_speed: Option<f64>,
    units: &Units,
    warnings: &mut Vec<InputWarning>,
) -> Result<(Vec<Waypoint>, WaypointNames), Error> {
    let Loaded {
        waypoints,
        names,
        first_motion_given,
    } = loaded;
    let names = names.finish();
    if waypoints.len() < 2 {
        return Err(Error::input(
            file,
            "waypoints",
            format!(
                "has {} waypoint{}: a path needs at least two (a start and an end)",
                waypoints.len(),
                if waypoints.len() == 1 { "" } else { "s" }
            ),
        ));
    }
    check_unique_names(&waypoints, &names, file)?;
    if let Some(w) = first_waypoint_warning(&waypoints[0], first_motion_given, file) {
        warnings.push(w);
    }
    for (i, pair) in waypoints.windows(2).enumerate() {
        let (a, b) = (&pair[0], &pair[1]);
        let distance = (b.work_T_tcp.translation.vector - a.work_T_tcp.translation.vector).norm();
        if distance >= SAME_POSITION {
            continue;
        }
        let (a_name, b_name) = (
            names.get(i).unwrap_or_default(),
            names.get(i + 1).unwrap_or_default(),
        );
        let angle = rotation::angle_between(&a.work_T_tcp.rotation, &b.work_T_tcp.rotation);
        if angle < SAME_ORIENTATION {
            warnings.push(InputWarning {
                location: super::origin(file, b.line, i + 1),
                message: format!(
                    "`{b_name}` repeats the pose of `{a_name}` (the segment between them is \
                     empty): remove one of them"
                ),
                waypoint: Some(i + 1),
            });
        } else if b.motion == Motion::Linear && orientation_speed.is_none() {
            return Err(Error::input(
                file,
                location(b, i + 1),
                format!(
                    "the linear segment from `{a_name}` to `{b_name}` turns the tool by {} {} \
                     without moving the TCP, so the TCP speed gives it no duration: set \
                     orientation_speed or move the TCP (or use motion: joint)",
                    fmt_num(angle / units.angle_to_rad()),
                    units.angle.name()
                ),
            ));
        }
    }
    Ok((waypoints, names))
}

/// Refuses two waypoints of the same name. Generated names (`wp<n>`, n the 1-based position)
/// are unique among themselves, so only a given name can clash: with another given name, or
/// with the generated name of an unnamed waypoint. The pair reported is the one completed
/// first in path order. Given names are compared by sorting their indices (4 bytes each), so
/// a path of a million named waypoints needs no hash map; a path without names needs nothing.
fn check_unique_names(
    waypoints: &[Waypoint],
    names: &WaypointNames,
    file: &Path,
) -> Result<(), Error> {
    let given = |i: usize| names.given(i);
    let mut order: Vec<u32> = (0..names.len())
        .filter(|&i| given(i).is_some())
        .filter_map(|i| u32::try_from(i).ok())
        .collect();
    if order.is_empty() {
        return Ok(());
    }
    order.sort_unstable_by(|&a, &b| given(a as usize).cmp(&given(b as usize)).then(a.cmp(&b)));
    // The earliest waypoint whose name an earlier given name already has, with that one.
    let repeat = order
        .windows(2)
        .filter(|p| given(p[0] as usize) == given(p[1] as usize))
        .map(|p| (p[1] as usize, p[0] as usize))
        .min();
    drop(order);
    // The unnamed waypoint whose generated name the given name of `i` spells, if any.
    let clash = |i: usize| {
        let digits = given(i)?.strip_prefix("wp")?;
        let n = digits.parse::<usize>().ok()?;
        let j = n.checked_sub(1)?;
        let generated = n.to_string() == digits && j < names.len() && given(j).is_none();
        (generated && j != i).then_some(j)
    };
    let limit = repeat.map_or(names.len(), |(i, _)| i);
    let pair = (0..limit).find_map(|i| clash(i).map(|j| (i, j))).or(repeat);
    let Some((i, other)) = pair else {
        return Ok(());
    };
    let (first, second) = (other.min(i), other.max(i));
    let describe = |k: usize| {
        let l = location(&waypoints[k], k);
        if given(k).is_some() {
            l
        } else {
            format!("{l} (which has no name, so it got the default)")
        }
    };
    Err(Error::input(
        file,
        location(&waypoints[second], second),
        format!(
            "the name `{}` is also the name of {} and {}: give each waypoint its own name",
            names.get(second).unwrap_or_default(),
            describe(first),
            describe(second)
        ),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use nalgebra::{Matrix3, Vector3};
    use std::f64::consts::PI;
    use std::time::{Duration, Instant};

    const HEAD: &str = "robot: arm.urdf\nspeed: 20\n";
    const TWO: &str = "waypoints:\n  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0]}\n";

    fn rx(a: f64) -> Matrix3<f64> {
        Matrix3::new(1.0, 0.0, 0.0, 0.0, a.cos(), -a.sin(), 0.0, a.sin(), a.cos())
    }
    fn ry(a: f64) -> Matrix3<f64> {
        Matrix3::new(a.cos(), 0.0, a.sin(), 0.0, 1.0, 0.0, -a.sin(), 0.0, a.cos())
    }
    fn rz(a: f64) -> Matrix3<f64> {
        Matrix3::new(a.cos(), -a.sin(), 0.0, a.sin(), a.cos(), 0.0, 0.0, 0.0, 1.0)
    }
    fn matrix(p: &Isometry3<f64>) -> Matrix3<f64> {
        p.rotation.to_rotation_matrix().into_inner()
    }

    fn data(name: &str) -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/data/job")
            .join(name)
    }

    fn load_with(text: &str, ov: &Overrides) -> Result<Job, Error> {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("job.yaml");
        std::fs::write(&p, text).unwrap();
        load(&p, ov)
    }

    fn load_text(text: &str) -> Result<Job, Error> {
        load_with(text, &Overrides::default())
    }

    /// (location, message) of an input error; panics on success or another kind.
    fn input_err(r: Result<Job, Error>) -> (String, String) {
        match r {
            Err(Error::Input {
                location, message, ..
            }) => (location, message),
            Err(e) => panic!("expected an input error, got {e}"),
            Ok(_) => panic!("expected an input error, got a job"),
        }
    }

    /// (option, message) of a usage error.
    fn usage_err(r: Result<Job, Error>) -> (String, String) {
        match r {
            Err(Error::Usage { option, message }) => (option, message),
            Err(e) => panic!("expected a usage error, got {e}"),
            Ok(_) => panic!("expected a usage error, got a job"),
        }
    }

    fn assert_err(text: &str, location: &str, phrases: &[&str]) {
        let (loc, msg) = input_err(load_text(text));
        assert_eq!(loc, location, "message: {msg}");
        for p in phrases {
            assert!(msg.contains(p), "`{p}` not in `{msg}`");
        }
    }

    fn assert_line_err(text: &str, location_start: &str, phrases: &[&str]) {
        let (loc, msg) = input_err(load_text(text));
        assert!(
            loc.starts_with(location_start),
            "location `{loc}` does not start with `{location_start}` ({msg})"
        );
        for p in phrases {
            assert!(msg.contains(p), "`{p}` not in `{msg}`");
        }
    }

    #[test]
    fn example_file_loads_every_key() {
        let path = data("bracket.yaml");
        let job = load(&path, &Overrides::default()).unwrap();
        let deg = PI / 180.0;
        assert_eq!(job.source, path);
        assert_eq!(job.robot, data("../robots/arm6.urdf"));
        assert_eq!(job.tip.as_deref(), Some("flange"));
        assert_eq!(job.units, Units::default());
        // source: SI definitions (1 mm = 1e-3 m, 1° = π/180 rad) for every conversion below
        assert_relative_eq!(
            job.tool.tip_T_tcp.translation.vector,
            Vector3::new(0.0, 0.0, 0.18)
        );
        assert_relative_eq!(job.tool.tip_T_tcp.rotation.angle(), 0.0);
        assert!(job.tool.free_spin);
        assert_relative_eq!(job.tool.spin_range.0, -PI / 2.0, epsilon = 1e-15);
        assert_relative_eq!(job.tool.spin_range.1, PI / 2.0, epsilon = 1e-15);
        assert_relative_eq!(job.tool.spin_rate.unwrap(), PI / 4.0, epsilon = 1e-15);
        assert_relative_eq!(
            job.base_T_work.translation.vector,
            Vector3::new(0.9, 0.0, 0.25)
        );
        let sj = job.start_joints.as_ref().unwrap();
        assert_eq!(sj.values, vec![0.0, 30.0, -20.0, 0.0, 45.0, 0.0]);
        assert_eq!(sj.origin, "start_joints");
        let si = sj.to_si(&[false; 6]).unwrap();
        assert_relative_eq!(si[1], 30.0 * deg, epsilon = 1e-15);
        assert_eq!(
            job.config,
            ConfigRequest {
                shoulder: Some(Shoulder::Front),
                elbow: Some(Elbow::Up),
                wrist: Some(Wrist::NoFlip)
            }
        );
        assert_relative_eq!(job.speed, 0.02);
        assert_relative_eq!(job.orientation_speed.unwrap(), 60.0 * deg);
        assert_relative_eq!(job.limits.tool_angular_speed, 120.0 * deg);
        assert_eq!(job.limits.joint_speed_scale, 0.8);
        assert_relative_eq!(job.limits.near_limit_margin_angle, 3.0 * deg);
        assert_relative_eq!(job.limits.near_limit_margin_length, 0.002);
        assert_relative_eq!(job.sampling.step, 0.002);
        assert_relative_eq!(job.sampling.angle_step, deg);

        let names: Vec<String> = job.names.iter().map(|n| n.into_owned()).collect();
        assert_eq!(names, ["approach", "bead_a", "bead_b", "wp4"]);
        let motions: Vec<Motion> = job.waypoints.iter().map(|w| w.motion).collect();
        assert_eq!(
            motions,
            [
                Motion::Joint,
                Motion::Linear,
                Motion::Linear,
                Motion::Linear
            ]
        );
        assert_eq!(job.waypoints[2].speed, Some(0.008));
        assert!(job.waypoints[2].process && !job.waypoints[1].process);
        assert_eq!(job.waypoint_origin(2), "waypoints[2]");
        assert_relative_eq!(
            job.waypoints[2].work_T_tcp.translation.vector,
            Vector3::new(0.4, 0.0, 0.0)
        );
        // rpy [180, 0, 0] is Rx(π) = diag(1, −1, −1).
        // source: URDF spec / REP 103, R = Rz(yaw)·Ry(pitch)·Rx(roll)
        assert_relative_eq!(
            matrix(&job.waypoints[1].work_T_tcp),
            Matrix3::from_diagonal(&Vector3::new(1.0, -1.0, -1.0)),
            epsilon = 1e-15
        );
        // A quaternion [0, n] is the half turn about n: R = 2·n·nᵀ − I.
        // source: Rodrigues' formula at θ = π (Lynch & Park 2017, eq. 3.51)
        let n = Vector3::new(0.9659258, 0.0, 0.258819).normalize();
        assert_relative_eq!(
            matrix(&job.waypoints[2].work_T_tcp),
            2.0 * n * n.transpose() - Matrix3::identity(),
            epsilon = 1e-12
        );
        // rotvec [0, 180, 0] deg is Ry(π) = diag(−1, 1, −1).
        // source: Rodrigues' formula (Lynch & Park 2017, eq. 3.51)
        assert_relative_eq!(
            matrix(&job.waypoints[3].work_T_tcp),
            Matrix3::from_diagonal(&Vector3::new(-1.0, 1.0, -1.0)),
            epsilon = 1e-15
        );
        // The example's first waypoint gives `motion: joint`, which ends no segment: read, and
        // reported once by the key given.
        // source: common practice (a key without effect is reported, not dropped silently)
        assert_eq!(job.warnings.len(), 1, "{:?}", job.warnings);
        assert_eq!(job.warnings[0].location, "waypoints[0]");
        assert!(
            job.warnings[0]
                .message
                .starts_with("`motion: joint` describes"),
            "{:?}",
            job.warnings
        );
    }

    #[test]
    fn rpy_is_fixed_axis_xyz() {
        let job = load_text(&format!(
            "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [30, 45, 60]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"
        ))
        .unwrap();
        let d = PI / 180.0;
        // source: URDF spec / REP 103, R = Rz(yaw)·Ry(pitch)·Rx(roll)
        let expected = rz(60.0 * d) * ry(45.0 * d) * rx(30.0 * d);
        assert_relative_eq!(
            matrix(&job.waypoints[0].work_T_tcp),
            expected,
            epsilon = 1e-14
        );
    }

    #[test]
    fn units_metre_radian_apply_to_every_value() {
        let job = load_text(
            "units: {length: m, angle: rad}\nrobot: arm.urdf\nspeed: 0.05\norientation_speed: 0.5\n\
             tool: {xyz: [0, 0, 0.2], rotvec: [0, 0, 1.5707963267948966]}\n\
             start_joints: [0.1, 0.2]\n\
             limits: {tool_angular_speed: 1.0, near_limit_margin: 0.1}\n\
             sampling: {step: 0.003, angle_step: 0.01}\n\
             waypoints:\n  - {xyz: [0.4, 0, 0], rpy: [3.141592653589793, 0, 0], speed: 0.01}\n  - {xyz: [0.5, 0, 0], rpy: [3.141592653589793, 0, 0.5]}\n",
        )
        .unwrap();
        // source: SI (metres and radians pass through unchanged)
        assert_eq!(
            job.units,
            Units {
                length: LengthUnit::M,
                angle: AngleUnit::Rad
            }
        );
        assert_eq!(job.speed, 0.05);
        assert_eq!(job.orientation_speed, Some(0.5));
        assert_eq!(job.limits.tool_angular_speed, 1.0);
        assert_eq!(job.limits.near_limit_margin_angle, 0.1);
        assert_eq!(job.limits.near_limit_margin_length, 0.1);
        assert_eq!(job.sampling.step, 0.003);
        assert_eq!(job.sampling.angle_step, 0.01);
        assert_eq!(job.waypoints[0].speed, Some(0.01));
        assert_eq!(job.waypoints[0].work_T_tcp.translation.vector.x, 0.4);
        // A quarter turn about z: Rz(π/2).
        // source: Rodrigues' formula (Lynch & Park 2017, eq. 3.51)
        assert_relative_eq!(matrix(&job.tool.tip_T_tcp), rz(PI / 2.0), epsilon = 1e-15);
        // source: URDF spec / REP 103
        assert_relative_eq!(
            matrix(&job.waypoints[1].work_T_tcp),
            rz(0.5) * rx(PI),
            epsilon = 1e-15
        );
        let sj = job.start_joints.unwrap();
        assert_eq!((sj.angle_to_rad, sj.length_to_m), (1.0, 1.0));
        // A prismatic joint value stays in the length unit.
        assert_eq!(sj.to_si(&[false, true]).unwrap(), vec![0.1, 0.2]);
    }

    #[test]
    fn mm_deg_conversion_of_mixed_start_joints() {
        let job = load_text(&format!("{HEAD}start_joints: [90, 250]\n{TWO}")).unwrap();
        let si = job.start_joints.unwrap().to_si(&[false, true]).unwrap();
        // source: SI definitions (90° = π/2 rad, 250 mm = 0.25 m)
        assert_relative_eq!(si[0], PI / 2.0, epsilon = 1e-15);
        assert_relative_eq!(si[1], 0.25, epsilon = 1e-15);
    }

    #[test]
    fn defaults() {
        let job = load_text(&format!("{HEAD}{TWO}")).unwrap();
        // source: common practice; the defaults documented on the path-file keys:
        // 90 deg/s, scale 1, margins 5 deg / 5 mm, step 1 mm, angle step 0.5 deg, spin ±180 deg
        assert_relative_eq!(job.limits.tool_angular_speed, PI / 2.0, epsilon = 1e-15);
        assert_eq!(job.limits.joint_speed_scale, 1.0);
        assert_relative_eq!(job.limits.near_limit_margin_angle, 5.0 * PI / 180.0);
        assert_relative_eq!(job.limits.near_limit_margin_length, 0.005);
        assert_relative_eq!(job.sampling.step, 0.001);
        assert_relative_eq!(job.sampling.angle_step, 0.5 * PI / 180.0);
        assert_relative_eq!(job.tool.spin_range.0, -PI);
        assert_relative_eq!(job.tool.spin_range.1, PI);
        assert!(!job.tool.free_spin && job.tool.spin_rate.is_none());
        assert_eq!(job.tool.tip_T_tcp, Isometry3::identity());
        assert_eq!(job.base_T_work, Isometry3::identity());
        assert!(job.tip.is_none() && job.start_joints.is_none());
        assert!(job.orientation_speed.is_none());
        assert_eq!(job.config, ConfigRequest::default());
        assert_eq!(job.units, Units::default());
        assert_eq!(job.waypoint_name(0), "wp1");
        assert_eq!(job.waypoint_name(1), "wp2");
        assert_eq!(job.waypoints[1].motion, Motion::Linear);
        assert!(job.warnings.is_empty());
    }

    #[test]
    fn margin_map_keeps_default_for_omitted_key() {
        let job = load_text(&format!(
            "{HEAD}limits: {{near_limit_margin: {{length: 2}}}}\n{TWO}"
        ))
        .unwrap();
        // source: SI definitions; the omitted angle keeps the documented 5° default
        assert_relative_eq!(job.limits.near_limit_margin_length, 0.002);
        assert_relative_eq!(job.limits.near_limit_margin_angle, 5.0 * PI / 180.0);
    }

    #[test]
    fn overrides_win_and_use_their_own_units() {
        let ov = Overrides {
            robot: Some(PathBuf::from("/cell/other.urdf")),
            tip: Some("tool0".into()),
            units_length: Some("m".into()),
            units_angle: Some("deg".into()),
            speed: Some(0.05),
            orientation_speed: Some(30.0),
            tool: Some([0.0, 0.0, 0.2, 0.0, 0.0, 90.0]),
            work_frame: Some([1.0, 0.0, 0.5, 0.0, 0.0, 0.0]),
            start_joints: Some(vec![10.0, 20.0]),
            start_joints_seed: true,
            tool_angular_speed: Some(45.0),
            joint_speed_scale: Some(0.5),
            step: Some(0.004),
            angle_step: Some(2.0),
        };
        let text = format!(
            "robot: arm.urdf\ntip: flange\nspeed: 20\ntool: {{xyz: [0, 0, 100], free_spin: true}}\nstart_joints: [1, 2]\n{TWO}"
        );
        let job = load_with(&text, &ov).unwrap();
        // source: SI definitions; override values are in the override units (m, deg)
        assert_eq!(job.robot, PathBuf::from("/cell/other.urdf"));
        assert_eq!(job.tip.as_deref(), Some("tool0"));
        assert_eq!(job.speed, 0.05);
        assert_relative_eq!(job.orientation_speed.unwrap(), PI / 6.0, epsilon = 1e-15);
        assert_relative_eq!(
            job.tool.tip_T_tcp.translation.vector,
            Vector3::new(0.0, 0.0, 0.2)
        );
        assert_relative_eq!(matrix(&job.tool.tip_T_tcp), rz(PI / 2.0), epsilon = 1e-15);
        assert!(job.tool.free_spin, "the file's free_spin is kept");
        assert_relative_eq!(
            job.base_T_work.translation.vector,
            Vector3::new(1.0, 0.0, 0.5)
        );
        let sj = job.start_joints.unwrap();
        assert_eq!(sj.values, vec![10.0, 20.0]);
        assert_eq!(sj.length_to_m, 1.0);
        assert_eq!(sj.origin, "--start-joints");
        assert!(sj.seed, "--start-joints-as-seed marks the joints as a seed");
        assert_relative_eq!(job.limits.tool_angular_speed, PI / 4.0, epsilon = 1e-15);
        assert_eq!(job.limits.joint_speed_scale, 0.5);
        assert_eq!(job.sampling.step, 0.004);
        assert_relative_eq!(job.sampling.angle_step, PI / 90.0, epsilon = 1e-15);
        // The file's own values keep the file's units (mm): --units never rescales the file.
        assert_eq!(job.units, Units::default());
        assert_relative_eq!(job.waypoints[1].work_T_tcp.translation.vector.x, 0.1);
    }

    #[test]
    fn bad_override_values_are_usage_errors() {
        let text = format!("{HEAD}{TWO}");
        let cases: Vec<(Overrides, &str, &str)> = vec![
            (
                Overrides {
                    speed: Some(-1.0),
                    ..Default::default()
                },
                "--speed",
                "greater than 0",
            ),
            (
                Overrides {
                    joint_speed_scale: Some(2.0),
                    ..Default::default()
                },
                "--joint-speed-scale",
                "above 1",
            ),
            (
                Overrides {
                    units_length: Some("cm".into()),
                    ..Default::default()
                },
                "--units",
                "mm or m",
            ),
            (
                Overrides {
                    units_angle: Some("grad".into()),
                    ..Default::default()
                },
                "--units",
                "deg or rad",
            ),
            (
                Overrides {
                    tool: Some([0.0, f64::NAN, 0.0, 0.0, 0.0, 0.0]),
                    ..Default::default()
                },
                "--tool",
                "finite",
            ),
            (
                Overrides {
                    start_joints: Some(vec![]),
                    ..Default::default()
                },
                "--start-joints",
                "one value per joint",
            ),
            (
                Overrides {
                    step: Some(f64::INFINITY),
                    ..Default::default()
                },
                "--step",
                "finite",
            ),
            (
                Overrides {
                    tip: Some(" ".into()),
                    ..Default::default()
                },
                "--tip",
                "empty",
            ),
        ];
        for (ov, option, phrase) in cases {
            let (o, m) = usage_err(load_with(&text, &ov));
            assert_eq!(o, option);
            assert!(m.contains(phrase), "`{phrase}` not in `{m}`");
        }
    }

    #[test]
    fn orientation_forms_are_exclusive() {
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], quat: [1, 0, 0, 0]}}\n"),
            "waypoints[1]",
            &["rpy and quat", "exactly one orientation"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0]",
            &["no orientation", "rpy", "quat", "rotvec"],
        );
        assert_err(
            &format!("{HEAD}tool: {{xyz: [0, 0, 1], rpy: [0, 0, 0], rotvec: [0, 0, 0]}}\n{TWO}"),
            "tool",
            &["rpy and rotvec"],
        );
        assert_err(
            &format!("{HEAD}work_frame: {{xyz: [0, 0, 1], quat: [0, 0, 0, 0]}}\n{TWO}"),
            "work_frame.quat",
            &["zero length"],
        );
        // Tool and work frame without orientation are identity rotations.
        let job = load_text(&format!(
            "{HEAD}tool: {{xyz: [0, 0, 50]}}\nwork_frame: {{xyz: [1, 2, 3]}}\n{TWO}"
        ))
        .unwrap();
        assert_eq!(job.tool.tip_T_tcp.rotation.angle(), 0.0);
        assert_eq!(job.base_T_work.rotation.angle(), 0.0);
    }

    #[test]
    fn quaternion_checks() {
        let wp = |q: &str| {
            format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], quat: {q}}}\n")
        };
        assert_err(
            &wp("[0, 0, 0, 0]"),
            "waypoints[1].quat",
            &[
                "the quaternion [0, 0, 0, 0] has zero length",
                "give a unit quaternion [w, x, y, z]",
            ],
        );
        assert_err(
            &wp("[1.0e-12, 0, 0, 0]"),
            "waypoints[1].quat",
            &["too short"],
        );
        assert_err(
            &wp("[.nan, 0, 0, 1]"),
            "waypoints[1].quat",
            &["NaN", "finite"],
        );
        let job = load_text(&wp("[2, 0, 0, 0]")).unwrap();
        // source: common practice (normalising by the Euclidean norm: [2,0,0,0] → identity)
        assert_relative_eq!(job.waypoints[1].work_T_tcp.rotation.angle(), 0.0);
        assert_eq!(job.warnings.len(), 1);
        let w = &job.warnings[0];
        assert_eq!(w.location, "waypoints[1].quat");
        assert_eq!(w.waypoint, Some(1));
        assert!(w.message.contains("length 2") && w.message.contains("normalised"));
        // Within 1e-6 of unit length: no warning.
        let job = load_text(&wp("[1.0000001, 0, 0, 0]")).unwrap();
        assert!(job.warnings.is_empty());
    }

    #[test]
    fn non_finite_numbers_are_errors() {
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, .inf, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0].xyz",
            &["inf", "finite"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, .nan, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0].rpy",
            &["NaN"],
        );
        assert_err(
            &format!("robot: a.urdf\nspeed: .inf\n{TWO}"),
            "speed",
            &["finite", "mm/s"],
        );
        assert_err(
            &format!("{HEAD}start_joints: [0, .nan]\n{TWO}"),
            "start_joints",
            &["finite"],
        );
        assert_err(
            &format!(
                "{HEAD}tool: {{xyz: [0, 0, 1], free_spin: true, spin_range: [-.inf, 10]}}\n{TWO}"
            ),
            "tool.spin_range",
            &["finite"],
        );
    }

    #[test]
    fn settings_must_be_in_range() {
        assert_err(
            &format!("robot: a.urdf\nspeed: 0\n{TWO}"),
            "speed",
            &["greater than 0", "mm/s"],
        );
        assert_err(
            &format!("robot: a.urdf\n{TWO}"),
            "speed",
            &["add `speed:", "--speed"],
        );
        assert_err(
            &format!("{HEAD}orientation_speed: -5\n{TWO}"),
            "orientation_speed",
            &["greater than 0", "deg/s"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], speed: 0}}\n"),
            "waypoints[1].speed",
            &["greater than 0"],
        );
        assert_err(
            &format!("{HEAD}limits: {{tool_angular_speed: 0}}\n{TWO}"),
            "limits.tool_angular_speed",
            &["greater than 0"],
        );
        assert_err(
            &format!("{HEAD}limits: {{joint_speed_scale: 1.5}}\n{TWO}"),
            "limits.joint_speed_scale",
            &["above 1", "(0, 1]"],
        );
        assert_err(
            &format!("{HEAD}limits: {{joint_speed_scale: 0}}\n{TWO}"),
            "limits.joint_speed_scale",
            &["greater than 0"],
        );
        assert_err(
            &format!("{HEAD}limits: {{near_limit_margin: -1}}\n{TWO}"),
            "limits.near_limit_margin",
            &["0 or more"],
        );
        assert_err(
            &format!("{HEAD}limits: {{near_limit_margin: {{angle: -1}}}}\n{TWO}"),
            "limits.near_limit_margin.angle",
            &["0 or more", "deg"],
        );
        assert_err(
            &format!("{HEAD}sampling: {{step: 0}}\n{TWO}"),
            "sampling.step",
            &["greater than 0", "mm"],
        );
        assert_err(
            &format!("{HEAD}sampling: {{angle_step: -0.1}}\n{TWO}"),
            "sampling.angle_step",
            &["greater than 0"],
        );
        assert_err(
            &format!(
                "{HEAD}tool: {{xyz: [0, 0, 1], free_spin: true, spin_range: [10, -10]}}\n{TWO}"
            ),
            "tool.spin_range",
            &["min > max"],
        );
        assert_err(
            &format!("{HEAD}tool: {{xyz: [0, 0, 1], free_spin: true, spin_rate: 0}}\n{TWO}"),
            "tool.spin_rate",
            &["greater than 0"],
        );
        assert_err(
            &format!("{HEAD}start_joints: []\n{TWO}"),
            "start_joints",
            &["empty"],
        );
        assert_err(&format!("{HEAD}tip: ''\n{TWO}"), "tip", &["empty"]);
        assert_err(&format!("robot: ''\nspeed: 1\n{TWO}"), "robot", &["empty"]);
        // joint_speed_scale exactly 1 is allowed.
        assert!(load_text(&format!("{HEAD}limits: {{joint_speed_scale: 1}}\n{TWO}")).is_ok());
    }

    #[test]
    fn syntax_and_schema_errors_carry_the_line() {
        assert_line_err(
            &format!("{HEAD}speeed: 3\n{TWO}"),
            "line 3 column 1",
            &[
                "unknown field `speeed`",
                "`speed`",
                "`waypoints`",
                "spelling",
            ],
        );
        assert_line_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], colour: red}}\n"),
            "line 5 column",
            &["unknown field `colour`", "`rotvec`"],
        );
        let (loc, _) = input_err(load_text(&format!(
            "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], colour: red}}\n"
        )));
        assert!(loc.ends_with("waypoints[1]"), "{loc}");
        assert_line_err(
            &format!("robot: a.urdf\nspeed: fast\n{TWO}"),
            "line 2 column 8, speed",
            &["invalid type", "expected a number"],
        );
        assert_line_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0], rpy: [0, 0, 0]}}\n"),
            "line 4 column 11, waypoints[0].xyz",
            &["invalid length 2", "length 3"],
        );
        assert_line_err(
            &format!("units: {{length: cm}}\n{HEAD}{TWO}"),
            "line 1 column 17, units.length",
            &["unknown variant `cm`", "`mm` or `m`"],
        );
        assert_line_err(
            &format!("units: {{angle: grad}}\n{HEAD}{TWO}"),
            "line 1",
            &["`deg` or `rad`"],
        );
        assert_line_err(
            &format!("{HEAD}config: {{elbow: sideways}}\n{TWO}"),
            "line 3",
            &["`up` or `down`"],
        );
        assert_line_err(
            &format!("{HEAD}limits: {{near_limit_margin: {{angle: 3, lenght: 2}}}}\n{TWO}"),
            "line 3",
            &["unknown field `lenght`", "`length`"],
        );
        assert_line_err(
            &format!("{HEAD}speed: 30\n{TWO}"),
            "line 1",
            &["duplicate field `speed`", "once"],
        );
        assert_line_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0], process: yes}}\n"),
            "line 4",
            &["expected a boolean"],
        );
        assert_line_err(
            &format!("{HEAD}waypoints: 5\n"),
            "line 3",
            &["a list of waypoints, or the name of a CSV"],
        );
        assert_line_err(HEAD, "line 1", &["missing field `waypoints`"]);
        assert_line_err(
            "- a\n- b\n",
            "line 1",
            &["expected a path file: a YAML mapping"],
        );
        assert_line_err(&format!("{HEAD}waypoints: [\n"), "line", &["YAML syntax"]);
    }

    #[test]
    fn waypoint_count_and_names() {
        assert_err(
            &format!("{HEAD}waypoints: []\n"),
            "waypoints",
            &["has 0 waypoints", "at least two"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints",
            &["has 1 waypoint:", "at least two"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{name: a, xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: b, xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: a, xyz: [2, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[2]",
            &["`a`", "waypoints[0]", "waypoints[2]", "its own name"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{name: wp2, xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[1]",
            &["`wp2`", "waypoints[0]", "no name", "default"],
        );
        assert_err(
            &format!("{HEAD}waypoints:\n  - {{name: '', xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0].name",
            &["empty"],
        );
    }

    #[test]
    fn turn_in_place_needs_orientation_speed() {
        let wps = |motion: &str| {
            format!("waypoints:\n  - {{name: a, xyz: [5, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: b, xyz: [5, 0, 0], rpy: [0, 0, 90]{motion}}}\n")
        };
        assert_err(
            &format!("{HEAD}{}", wps("")),
            "waypoints[1]",
            &[
                "`a` to `b`",
                // source: URDF spec / REP 103 (yaw 0° → 90° about the same z axis is a 90° turn)
                "turns the tool by 90 deg",
                "set orientation_speed or move the TCP",
            ],
        );
        assert!(load_text(&format!("{HEAD}orientation_speed: 30\n{}", wps(""))).is_ok());
        assert!(load_text(&format!("{HEAD}{}", wps(", motion: joint"))).is_ok());
        let ov = Overrides {
            orientation_speed: Some(30.0),
            ..Default::default()
        };
        assert!(load_with(&format!("{HEAD}{}", wps("")), &ov).is_ok());
    }

    #[test]
    fn warnings_for_repeats_and_ignored_settings() {
        let job = load_text(&format!(
            "{HEAD}tool: {{xyz: [0, 0, 1], spin_range: [-90, 90], spin_rate: 10}}\nwaypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0], speed: 5}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: again, xyz: [1, 0, 0], quat: [1, 0, 0, 0]}}\n"
        ))
        .unwrap();
        let find = |loc: &str| {
            job.warnings
                .iter()
                .find(|w| w.location == loc)
                .unwrap_or_else(|| panic!("no warning at {loc}: {:?}", job.warnings))
        };
        let w = find("waypoints[2]");
        assert_eq!(w.waypoint, Some(2));
        assert!(w.message.contains("`again` repeats the pose of `wp2`"));
        assert_eq!(find("waypoints[0]").waypoint, Some(0));
        assert!(find("tool.spin_range").message.contains("free_spin: true"));
        assert!(find("tool.spin_rate").message.contains("free_spin: true"));
        assert_eq!(job.warnings.len(), 4);
    }

    #[test]
    fn robot_resolution() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::create_dir(dir.path().join("paths")).unwrap();
        let p = dir.path().join("paths/job.yaml");
        std::fs::write(&p, format!("robot: ../robots/r.urdf\nspeed: 1\n{TWO}")).unwrap();
        let job = load(&p, &Overrides::default()).unwrap();
        assert_eq!(job.robot, dir.path().join("paths/../robots/r.urdf"));
        let ov = Overrides {
            robot: Some(PathBuf::from("given.urdf")),
            ..Default::default()
        };
        assert_eq!(load(&p, &ov).unwrap().robot, PathBuf::from("given.urdf"));
        assert_err(
            &format!("speed: 1\n{TWO}"),
            "robot",
            &["add `robot:", "--robot"],
        );
        let job = load_with(&format!("speed: 1\n{TWO}"), &ov).unwrap();
        assert_eq!(job.robot, PathBuf::from("given.urdf"));
    }

    #[test]
    fn unusable_files() {
        let dir = tempfile::tempdir().unwrap();
        let none = Overrides::default();
        let (loc, msg) = input_err(load(&dir.path().join("missing.yaml"), &none));
        assert_eq!(loc, "file");
        assert!(msg.contains("does not exist"), "{msg}");
        let (_, msg) = input_err(load(dir.path(), &none));
        assert!(msg.contains("is a folder"), "{msg}");
        let (_, msg) = input_err(load(&dir.path().join("missing.csv"), &none));
        assert!(msg.contains("CSV waypoint file does not exist"), "{msg}");
        for empty in ["", "   \n\n", "# only a comment\n---\n"] {
            assert_err(empty, "file", &["is empty", "waypoints:"]);
        }
        let p = dir.path().join("garbage.yaml");
        std::fs::write(&p, [0x7f, 0x45, 0x4c, 0x46, 0xff, 0xfe, 0x00, 0x80, 0x81]).unwrap();
        let (loc, msg) = input_err(load(&p, &none));
        // source: common practice (bytes 0-3 are ASCII on line 1, so the bad byte 4 is column 5)
        assert_eq!(loc, "line 1 column 5");
        assert!(msg.contains("not UTF-8"), "{msg}");
        // Valid UTF-8 but control characters: refused at the first one, U+0001 at column 1.
        std::fs::write(&p, "\u{1}\u{2}\u{3}robot\u{0}").unwrap();
        let (loc, msg) = input_err(load(&p, &none));
        assert_eq!(loc, "line 1 column 1", "{msg}");
        assert!(msg.contains("U+0001"), "{msg}");
    }

    #[test]
    fn oversized_files_are_refused_before_reading() {
        let dir = tempfile::tempdir().unwrap();
        for name in ["big.yaml", "big.csv"] {
            let p = dir.path().join(name);
            // A sparse file: no disk space is used, only the size is set.
            let f = std::fs::File::create(&p).unwrap();
            f.set_len(MAX_FILE_BYTES + 1).unwrap();
            let start = Instant::now();
            let ov = Overrides {
                robot: Some("r.urdf".into()),
                speed: Some(1.0),
                ..Default::default()
            };
            let (loc, msg) = input_err(load(&p, &ov));
            assert!(start.elapsed() < Duration::from_secs(1));
            assert_eq!(loc, "file");
            assert!(
                msg.contains("536870913 bytes") && msg.contains("512 MiB"),
                "{msg}"
            );
        }
    }

    #[test]
    fn alias_bomb_fails_fast() {
        // Nine levels of nine aliases would expand to 9^9 ≈ 3.9e8 scalars. Every key of a path
        // file has a concrete type, so the reader stops at the first alias of the wrong shape
        // (or at the unknown key) instead of expanding it; serde_yaml's own repetition limit
        // is a second line of defence that this schema never reaches.
        let mut bomb = String::from("[0, 0, 0, &a [lol, lol, lol, lol, lol, lol, lol, lol, lol]");
        let names = ["a", "b", "c", "d", "e", "f", "g", "h", "i"];
        for w in names.windows(2) {
            let refs = vec![format!("*{}", w[0]); 9].join(", ");
            bomb.push_str(&format!(", &{} [{refs}]", w[1]));
        }
        bomb.push_str(", *i]");
        let texts = [
            format!("{HEAD}waypoints:\n  - {{xyz: {bomb}, rpy: [0, 0, 0]}}\n"),
            format!("{HEAD}bomb: {bomb}\n{TWO}"),
            format!("{HEAD}start_joints: {bomb}\n{TWO}"),
            format!("{HEAD}waypoints: {bomb}\n"),
        ];
        let expected = [
            "invalid length 13",
            "unknown field `bomb`",
            "invalid type: sequence",
            "invalid type: integer",
        ];
        for (text, phrase) in texts.iter().zip(expected) {
            let start = Instant::now();
            let (loc, msg) = input_err(load_text(text));
            let took = start.elapsed();
            assert!(took < Duration::from_secs(5), "took {took:?}");
            assert!(loc.starts_with("line "), "{loc}");
            assert!(msg.contains(phrase), "`{phrase}` not in `{msg}`");
        }
    }

    #[test]
    fn deep_nesting_fails_fast_without_stack_overflow() {
        for depth in [10_000, 200_000] {
            let seqs = format!("{}{}", "[".repeat(depth), "]".repeat(depth));
            let maps = format!("{}0{}", "{a: ".repeat(depth), "}".repeat(depth));
            // Quoted closing brackets must not hide real nesting from the pre-scan.
            let tricky = format!("{}{}", "[ \"]\", ".repeat(depth), "]".repeat(depth));
            let texts = [
                (
                    format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0, {seqs}], rpy: [0, 0, 0]}}\n"),
                    4,
                ),
                (format!("{HEAD}waypoints: {seqs}\n"), 3),
                (format!("{HEAD}tool: {maps}\n{TWO}"), 3),
                (format!("{HEAD}{TWO}extra: {maps}\n"), 6),
                (format!("{HEAD}waypoints: {tricky}\n"), 3),
                (seqs.clone(), 1),
            ];
            for (text, line) in &texts {
                let start = Instant::now();
                let (loc, msg) = input_err(load_text(text));
                let took = start.elapsed();
                assert!(took < Duration::from_secs(2), "depth {depth} took {took:?}");
                assert_eq!(loc, format!("line {line}"), "{msg}");
                assert!(msg.contains("65 levels deep"), "{msg}");
            }
        }
        // Brackets in quotes, comments and mid-text are not nesting.
        let many = "[".repeat(100);
        let job = load_text(&format!(
            "{HEAD}# {many}\nwaypoints:\n  - name: a{many}\n    xyz: [0, 0, 0]\n    rpy: [0, 0, 0]\n  - {{name: 'it''s {many}', xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: \"\\\"{many}\", xyz: [2, 0, 0], rpy: [0, 0, 0]}}\n"
        ))
        .unwrap();
        assert_eq!(job.waypoint_name(0), format!("a{many}"));
        assert_eq!(job.waypoint_name(1), format!("it's {many}"));
        assert_eq!(job.waypoint_name(2), format!("\"{many}"));
        // 64 levels pass the pre-scan and reach the reader, which reports the wrong shape.
        let deep64 = format!("{}{}", "[".repeat(63), "]".repeat(63));
        let (_, msg) = input_err(load_text(&format!("{HEAD}waypoints: [{deep64}]\n")));
        assert!(msg.contains("invalid type"), "{msg}");
    }

    #[test]
    fn in_memory_text_loads_like_the_file() {
        // source: common practice (load = read the file, then load_bytes on its contents)
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("job.yaml");
        let text = format!("{HEAD}tool: {{xyz: [0, 0, 100], rpy: [0, 0, 0]}}\n{TWO}");
        std::fs::write(&p, &text).unwrap();
        let a = load(&p, &Overrides::default()).unwrap();
        let b = load_bytes(text.as_bytes(), &p, &Overrides::default()).unwrap();
        assert_eq!(a.robot, b.robot);
        assert_eq!(a.waypoints.len(), b.waypoints.len());
        assert_eq!(a.tool.tip_T_tcp, b.tool.tip_T_tcp);
        // The extension picks the format for in-memory text too.
        let ov = Overrides {
            robot: Some(PathBuf::from("arm.urdf")),
            speed: Some(20.0),
            ..Default::default()
        };
        let csv = b"x,y,z,roll,pitch,yaw\n0,0,0,180,0,0\n100,0,0,180,0,0\n";
        let job = load_bytes(csv, Path::new("seam.CSV"), &ov).unwrap();
        assert_eq!(job.waypoints.len(), 2);
    }
}
