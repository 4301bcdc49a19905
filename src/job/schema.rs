//! The path file's schema: the serde types of a YAML path file, one struct per mapping.
//! Every key is described on its field (the README's format section is written from these
//! comments). Example:
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
//! Values stay in the file's units here; `assemble` checks them and converts them to SI. The
//! same types serialise (absent keys left out), so that `fix` writes its amended file from
//! this schema and every key the reader accepts can be written. Adding a key: a field here,
//! its check and conversion in `assemble`, and its value in `fix::emit`.

use super::units::{AngleUnit, LengthUnit};
use crate::ik::analytic::{Elbow, Shoulder, Wrist};
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde::{Deserialize, Serialize};
use std::fmt;

/// The top level of a path file. Every key is optional except `speed` (which `--speed` may
/// supply instead), `robot` (or `--robot`) and `waypoints`. Unknown keys are errors.
#[derive(Debug, Default, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a path file: a YAML mapping with keys such as robot, speed and waypoints"
)]
pub struct PathFileSpec {
    /// `units: {length: mm|m, angle: deg|rad}`: the units of every number in this file and in
    /// a CSV file named by `waypoints`. Each key is optional; default mm and deg.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub units: Option<UnitsSpec>,
    /// `robot: <file.urdf>`: the robot, relative to this file's folder. `--robot` replaces it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub robot: Option<String>,
    /// `tip: <link name>`: the tip link of the chain (the link the tool is mounted on).
    /// Optional; the robot reader picks the tip when absent.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tip: Option<String>,
    /// `tool: {...}`: the tool, see [`ToolSpec`]. Default: TCP at the tip-link frame.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tool: Option<ToolSpec>,
    /// `cell: <file.yaml>`: the cell file (bodies of the part, fixtures and cell, allowed
    /// contacts), relative to this file's folder; `--cell` replaces it. With a cell or tool
    /// geometry the check tests collisions and clearance.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cell: Option<String>,
    /// `work_frame: {xyz, rpy|quat|rotvec}`: pose of the work frame in the robot base frame;
    /// waypoints are given in the work frame. Default: the base frame.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub work_frame: Option<FrameSpec>,
    /// `start_joints: [j1, j2, ...]`: joints at the first waypoint, one per joint of the chain
    /// (angle unit; length unit for prismatic joints). Optional. They must put the TCP on the
    /// first waypoint (within the IK tolerance) unless `start_joints_seed` is true.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start_joints: Option<Vec<f64>>,
    /// `start_joints_seed: true`: use `start_joints` only as a starting guess for the first
    /// pose (the solution nearest them in their configuration). Default false.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start_joints_seed: Option<bool>,
    /// `config: {shoulder, elbow, wrist}`: requested arm configuration at the first pose, see
    /// [`ConfigSpec`]. Optional.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub config: Option<ConfigSpec>,
    /// `speed: <number>`: programmed TCP speed, length unit per second, > 0. Required unless
    /// `--speed` is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub speed: Option<f64>,
    /// `orientation_speed: <number>`: programmed reorientation speed, angle unit per second,
    /// > 0. Optional; needed for linear segments that turn the tool without moving the TCP.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orientation_speed: Option<f64>,
    /// `limits: {...}`: see [`LimitsSpec`].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub limits: Option<LimitsSpec>,
    /// `sampling: {...}`: see [`SamplingSpec`].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sampling: Option<SamplingSpec>,
    /// `waypoints:` either a list of waypoints (see [`WaypointSpec`]) or the name of a CSV
    /// waypoint file relative to this file's folder (`waypoints: seam.csv`), read in this
    /// file's units. At least two waypoints.
    pub waypoints: WaypointsSpec,
}

/// `units:` keys.
#[derive(Debug, Default, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "units: a mapping {length: mm|m, angle: deg|rad}"
)]
pub struct UnitsSpec {
    /// `length: mm` (default) or `m`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub length: Option<LengthUnit>,
    /// `angle: deg` (default) or `rad`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub angle: Option<AngleUnit>,
}

/// `tool:` keys. The pose is the TCP in the tip-link frame.
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "tool: a mapping with xyz and optionally one of rpy, quat, rotvec, and free_spin, spin_range, spin_rate, geometry"
)]
pub struct ToolSpec {
    /// `xyz: [x, y, z]`: TCP position in the tip-link frame, length unit. Required when `tool:`
    /// is given (an omitted offset would silently put the TCP on the flange).
    pub xyz: [f64; 3],
    /// `rpy: [roll, pitch, yaw]`, angle unit, `R = Rz(yaw)·Ry(pitch)·Rx(roll)` (URDF).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rpy: Option<[f64; 3]>,
    /// `quat: [w, x, y, z]`, normalised (with a warning when its length is off by > 1e-6).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quat: Option<[f64; 4]>,
    /// `rotvec: [x, y, z]`: rotation axis × angle, angle unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rotvec: Option<[f64; 3]>,
    /// `free_spin: true|false` (default false): the process does not care about rotation
    /// about the tool z axis, so armpath may choose it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub free_spin: Option<bool>,
    /// `spin_range: [min, max]`: allowed spin about tool z, angle unit, min ≤ max. Default
    /// [-180, 180] degrees. Only used with `free_spin: true`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spin_range: Option<[f64; 2]>,
    /// `spin_rate: <number>`: largest rate of spin change, angle unit per second, > 0.
    /// Default unlimited. Only used with `free_spin: true`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spin_rate: Option<f64>,
    /// `geometry: [...]`: the tool's bodies in the tip-link frame (torch neck, nozzle, gun
    /// body), each `{name, box|cylinder|sphere|capsule|mesh, xyz, rpy}` in this file's units,
    /// as the bodies of a cell file but without `frame`. Optional.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub geometry: Option<Vec<crate::cell::RawBody>>,
}

/// `work_frame:` keys: `xyz` (required when `work_frame:` is given, length unit) and at most
/// one of `rpy`, `quat`, `rotvec` (none = no rotation).
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "work_frame: a mapping with xyz and optionally one of rpy, quat, rotvec"
)]
pub struct FrameSpec {
    /// `xyz: [x, y, z]`: origin of the work frame in the base frame, length unit.
    pub xyz: [f64; 3],
    /// `rpy: [roll, pitch, yaw]`, angle unit (URDF convention).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rpy: Option<[f64; 3]>,
    /// `quat: [w, x, y, z]`, normalised.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quat: Option<[f64; 4]>,
    /// `rotvec: [x, y, z]`: axis × angle, angle unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rotvec: Option<[f64; 3]>,
}

/// `config:` keys, each optional (absent = armpath may choose).
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "config: a mapping {shoulder: front|back, elbow: up|down, wrist: flip|noflip}"
)]
pub struct ConfigSpec {
    /// `shoulder: front|back`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shoulder: Option<Shoulder>,
    /// `elbow: up|down`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub elbow: Option<Elbow>,
    /// `wrist: flip|noflip`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub wrist: Option<Wrist>,
}

/// `limits:` keys, each optional.
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "limits: a mapping with tool_angular_speed, joint_speed_scale, near_limit_margin, clearance, joint_accelerations"
)]
pub struct LimitsSpec {
    /// `tool_angular_speed: <number>`: largest tool angular speed, angle unit per second, > 0.
    /// Default 90 deg/s, a common process bound.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tool_angular_speed: Option<f64>,
    /// `joint_speed_scale: <number>`: fraction of each URDF joint velocity limit that may be
    /// used, in (0, 1]. Default 1. Values above 1 are refused: they would allow joints to move
    /// faster than the robot description permits.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub joint_speed_scale: Option<f64>,
    /// `near_limit_margin: <number>` or `{angle: <number>, length: <number>}`, ≥ 0: distance to
    /// a joint limit that raises a warning. A single number is used in the angle unit for
    /// revolute joints and in the length unit for prismatic joints; in the map form an omitted
    /// key keeps its default. Default 5 deg and 5 mm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub near_limit_margin: Option<MarginSpec>,
    /// `tcp_acceleration: <number>`: largest TCP acceleration on straight-line moves, length
    /// unit per s², > 0. Default 2000 mm/s² (common practice, not the robot's own value).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tcp_acceleration: Option<f64>,
    /// `tool_angular_acceleration: <number>`: largest tool angular acceleration on
    /// straight-line moves, angle unit per s², > 0. Default 720 deg/s² (common practice).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tool_angular_acceleration: Option<f64>,
    /// `joint_acceleration_scale: <number>`: factor on every joint's default acceleration
    /// limit (2 × its URDF velocity per second; URDF has no accelerations), 0.001 to 1000.
    /// Default 1.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub joint_acceleration_scale: Option<f64>,
    /// `process_speed_tolerance: <number>`: share of the programmed speed a process segment
    /// may lose before a `process_speed` warning, in [0, 1). Default 0.05.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub process_speed_tolerance: Option<f64>,
    /// `clearance: <number>`: bodies closer than this (length unit, > 0) raise a `clearance`
    /// warning when the check tests collisions. Default 10 mm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub clearance: Option<f64>,
    /// `joint_accelerations: {<joint name>: <number>, ...}`: acceleration limits of the named
    /// joints, angle unit/s² for revolute joints and length unit/s² for prismatic ones, > 0.
    /// Checked against the robot's joint names when the check starts; joints not named keep
    /// the default rule (see `joint_acceleration_scale`, which does not touch given values).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub joint_accelerations: Option<std::collections::BTreeMap<String, f64>>,
}

/// `near_limit_margin`: one number for both joint kinds, or separate values.
#[derive(Debug, Serialize)]
#[serde(untagged)]
pub enum MarginSpec {
    /// One margin: angle unit for revolute joints, length unit for prismatic ones.
    Both(f64),
    /// Separate margins per joint kind.
    Split(SplitMargin),
}

/// `near_limit_margin: {angle, length}` keys.
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "near_limit_margin: a number or a mapping {angle: <number>, length: <number>}"
)]
pub struct SplitMargin {
    /// Margin for revolute joints, angle unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub angle: Option<f64>,
    /// Margin for prismatic joints, length unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub length: Option<f64>,
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
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "sampling: a mapping {step: <number>, angle_step: <number>}"
)]
pub struct SamplingSpec {
    /// `step: <number>`: largest TCP distance between consecutive samples, length unit, > 0.
    /// Default 1 mm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub step: Option<f64>,
    /// `angle_step: <number>`: largest orientation change between consecutive samples, angle
    /// unit, > 0. Default 0.5 deg.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub angle_step: Option<f64>,
}

/// `waypoints:` a list of waypoints or a CSV file name.
#[derive(Debug, Serialize)]
#[serde(untagged)]
pub enum WaypointsSpec {
    /// The waypoints themselves.
    List(Vec<WaypointSpec>),
    /// A CSV waypoint file, relative to the path file's folder.
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
#[derive(Debug, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a waypoint: a mapping with xyz, one of rpy/quat/rotvec, and optionally name, motion, speed, process"
)]
pub struct WaypointSpec {
    /// `name: <text>`: unique name. Default `wp<n>`, n the 1-based position in the list.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// `xyz: [x, y, z]`: TCP position in the work frame, length unit. Required.
    pub xyz: [f64; 3],
    /// `rpy: [roll, pitch, yaw]`, angle unit (URDF). Exactly one of rpy, quat, rotvec.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rpy: Option<[f64; 3]>,
    /// `quat: [w, x, y, z]`, normalised (warning when its length is off by > 1e-6).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quat: Option<[f64; 4]>,
    /// `rotvec: [x, y, z]`: axis × angle, angle unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rotvec: Option<[f64; 3]>,
    /// `motion: linear|joint` (default linear): how the TCP gets here from the previous
    /// waypoint. Ignored on the first waypoint.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub motion: Option<MotionSpec>,
    /// `speed: <number>`: TCP speed of the segment ending here, length unit per second, > 0.
    /// Default: the job's `speed`. On a joint move also `speed: <number>%`: the share of
    /// each joint's allowed speed the move uses, above 0 and up to 100 %.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub speed: Option<SpeedSpec>,
    /// `process: true|false` (default false): the segment ending here is a process segment
    /// (constant TCP speed required).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub process: Option<bool>,
    /// `blend: <number>`: corner radius at this waypoint, length unit, ≥ 0: the TCP rounds the
    /// corner between two straight-line moves instead of stopping here. Default 0 (stop).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub blend: Option<f64>,
}

/// A waypoint's `speed:`: a TCP speed, or (joint moves) a share of the joints' speed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SpeedSpec {
    /// `speed: 20`: TCP speed, length unit per second.
    Tcp(f64),
    /// `speed: 50%`: per cent of each joint's allowed speed.
    Share(f64),
}

impl Serialize for SpeedSpec {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            SpeedSpec::Tcp(v) => s.serialize_f64(*v),
            SpeedSpec::Share(p) => s.serialize_str(&format!("{p}%")),
        }
    }
}

impl<'de> Deserialize<'de> for SpeedSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = SpeedSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str(
                    "speed: a number (length unit per second), or on a joint move a share of \
                     the joints' allowed speed such as 50%",
                )
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<SpeedSpec, E> {
                Ok(SpeedSpec::Tcp(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<SpeedSpec, E> {
                Ok(SpeedSpec::Tcp(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<SpeedSpec, E> {
                Ok(SpeedSpec::Tcp(v as f64))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<SpeedSpec, E> {
                v.trim()
                    .strip_suffix('%')
                    .and_then(|n| n.trim().parse::<f64>().ok())
                    .map(SpeedSpec::Share)
                    .ok_or_else(|| E::invalid_value(de::Unexpected::Str(v), &self))
            }
        }
        d.deserialize_any(V)
    }
}

/// `motion:` values.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum MotionSpec {
    /// `linear`: straight line in position, geodesic in orientation.
    Linear,
    /// `joint`: joint-space move.
    Joint,
}
