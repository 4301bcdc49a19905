//! Findings: what the assessment reports, located on the path.

use crate::robot::Joints;
use serde::Serialize;

/// The kind of a finding. The names are fixed: scripts match on them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Kind {
    /// `input` (warning): something in the input armpath worked around, e.g. a normalised
    /// quaternion, a near half-turn orientation change or a repeated waypoint.
    Input,
    /// `unreachable` (error): no IK solution within tolerance and the joint ranges; the value
    /// is the remaining TCP position error (m).
    Unreachable,
    /// `joint_jump` (error): a discontinuity in the joint path (a configuration change); the
    /// value is the largest joint change (rad) and there is no limit.
    JointJump,
    /// `joint_limit` (error): the continuous joint path leaves a joint's range; the value is
    /// the joint position and the limit the bound it passed.
    JointLimit,
    /// `near_joint_limit` (warning): inside the range but within the near-limit margin of a
    /// bound; the value is the joint position and the limit that bound.
    NearJointLimit,
    /// `singularity` (warning): the singularity measure below its threshold.
    Singularity,
    /// `tool_angular_speed` (error): on a linear segment the tool turns faster than its limit
    /// (rad/s).
    ToolAngularSpeed,
    /// `joint_speed` (error): a joint faster than its URDF velocity times the speed scale
    /// (rad/s or m/s).
    JointSpeed,
    /// A joint accelerates faster than its limit.
    JointAcceleration,
    /// The TCP runs slower than the programmed speed allows on a process segment.
    ProcessSpeed,
    /// Two bodies of the cell model touch or overlap (not an allowed contact).
    Collision,
    /// Two bodies come closer than the clearance limit.
    Clearance,
}

impl Kind {
    /// The fixed name, as in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Kind::Input => "input",
            Kind::Unreachable => "unreachable",
            Kind::JointJump => "joint_jump",
            Kind::JointLimit => "joint_limit",
            Kind::NearJointLimit => "near_joint_limit",
            Kind::Singularity => "singularity",
            Kind::ToolAngularSpeed => "tool_angular_speed",
            Kind::JointSpeed => "joint_speed",
            Kind::JointAcceleration => "joint_acceleration",
            Kind::ProcessSpeed => "process_speed",
            Kind::Collision => "collision",
            Kind::Clearance => "clearance",
        }
    }

    /// Severity of every finding of this kind.
    pub fn severity(self) -> Severity {
        match self {
            Kind::Input
            | Kind::NearJointLimit
            | Kind::Singularity
            | Kind::ProcessSpeed
            | Kind::Clearance => Severity::Warning,
            _ => Severity::Error,
        }
    }
}

/// How bad a finding is: errors fail the check (exit 1), warnings do not.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// Reported, but does not fail the check (exit 0).
    Warning,
    /// Fails the check (exit 1, verdict `fail`).
    Error,
}

/// What physical quantity a finding's value measures; the report converts SI values to the
/// display unit of the quantity (deg, mm, deg/s, mm/s) once, at the edge.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// rad → deg
    Angle,
    /// m → mm
    Length,
    /// rad/s → deg/s
    AngularSpeed,
    /// m/s → mm/s
    Speed,
    /// rad/s² → deg/s²
    AngularAcceleration,
    /// m/s² → mm/s²
    Acceleration,
    /// dimensionless
    Number,
}

impl Quantity {
    /// Display unit name, as in the JSON `unit` field.
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::Angle => "deg",
            Quantity::Length => "mm",
            Quantity::AngularSpeed => "deg/s",
            Quantity::Speed => "mm/s",
            Quantity::AngularAcceleration => "deg/s²",
            Quantity::Acceleration => "mm/s²",
            Quantity::Number => "none",
        }
    }

    /// Convert an SI value to the display unit.
    pub fn display(self, si: f64) -> f64 {
        match self {
            Quantity::Angle | Quantity::AngularSpeed | Quantity::AngularAcceleration => {
                si.to_degrees()
            }
            Quantity::Length | Quantity::Speed | Quantity::Acceleration => si * 1e3,
            Quantity::Number => si,
        }
    }
}

/// A located finding. Values are SI; see [`Quantity`].
#[derive(Debug, Clone)]
pub struct Finding {
    /// What was found; fixes the severity and the quantity of `value`.
    pub kind: Kind,
    /// Segment index (0-based), `None` for input findings not tied to a segment.
    pub segment: Option<usize>,
    /// Names of the waypoints the segment runs between.
    pub from: Option<String>,
    /// Name of the waypoint the segment ends at; `None` like `from`.
    pub to: Option<String>,
    /// First and last sample index of the run.
    pub samples: Option<[usize; 2]>,
    /// Path distance (m) and time (s) at the first and last sample.
    pub s: Option<[f64; 2]>,
    /// Time from the path start (s) at the first and last sample; `None` like `s`.
    pub t: Option<[f64; 2]>,
    /// Joint name, for joint findings.
    pub joint: Option<String>,
    /// The two bodies, for `collision` and `clearance` findings.
    pub bodies: Option<[String; 2]>,
    /// The worst value over the run, and the limit it is compared with.
    pub value: Option<f64>,
    /// `None` for `joint_jump` (any discontinuity is one) and for input findings.
    pub limit: Option<f64>,
    /// What `value` and `limit` measure, hence their display unit.
    pub quantity: Quantity,
    /// Per-joint change across a jump (rad or m), `joint_jump` only.
    pub deltas: Option<Joints>,
    /// Sample index where the worst value occurs.
    pub worst_sample: Option<usize>,
    /// Joints (rad or m) at `worst_sample`, the pose a report draws for the finding; `None`
    /// like `worst_sample`. On an unreachable run these are the last reached joints.
    pub worst_joints: Option<Joints>,
    /// What happened and what to try.
    pub message: String,
}

impl Finding {
    /// An `input` finding on `segment` (or on the file as a whole), with its message.
    pub fn input(
        segment: Option<usize>,
        from: Option<String>,
        to: Option<String>,
        message: String,
    ) -> Self {
        Finding {
            kind: Kind::Input,
            segment,
            from,
            to,
            samples: None,
            s: None,
            t: None,
            joint: None,
            bodies: None,
            value: None,
            limit: None,
            quantity: Quantity::Number,
            deltas: None,
            worst_sample: None,
            worst_joints: None,
            message,
        }
    }

    /// Severity of this finding (that of its kind).
    pub fn severity(&self) -> Severity {
        self.kind.severity()
    }
}
