//! The report's entries that describe one thing each: a finding, and a row of the
//! configuration table with what first stops it, in display units.

use crate::assess::{Finding, Severity};
use crate::check::{Advice, Feasibility};
use crate::job::Job;
use crate::robot::Robot;
use crate::units_display::joint_display;
use serde::Serialize;

/// One finding as the JSON `findings[]` entry shows it, in display units. Fields that do not
/// apply to a finding are null (an input finding about the whole file has no segment), except
/// `joint_deltas`, which is left out.
#[derive(Debug, Clone, Serialize)]
pub struct FindingReport {
    /// `unreachable`, `joint_limit`, `joint_jump`, … (fixed names scripts match on).
    pub kind: &'static str,
    /// `warning` or `error`; errors fail the check.
    pub severity: Severity,
    /// 0-based index of the segment it lies on.
    pub segment: Option<usize>,
    /// Name of the waypoint that segment starts at.
    pub from: Option<String>,
    /// Name of the waypoint that segment ends at.
    pub to: Option<String>,
    /// First and last sample index of the flagged run (0-based from the path start).
    pub samples: Option<[usize; 2]>,
    /// Path distance at the first and last sample (mm).
    pub s_mm: Option<[f64; 2]>,
    /// Time from the path start at the first and last sample (s).
    pub t_s: Option<[f64; 2]>,
    /// Joint name, for joint findings.
    pub joint: Option<String>,
    /// `collision` and `clearance` only: the two bodies.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bodies: Option<[String; 2]>,
    /// Worst value over the run, in `unit`.
    pub value: Option<f64>,
    /// The limit `value` is compared with, in `unit`; null for `joint_jump`.
    pub limit: Option<f64>,
    /// Unit of `value` and `limit`: `mm`, `deg`, `deg/s`, `mm/s`, `deg/s²`, `mm/s²` or `none`.
    pub unit: &'static str,
    /// `joint_jump` only: the change of each joint across the jump, by joint name (deg; mm
    /// for prismatic joints).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub joint_deltas: Option<std::collections::BTreeMap<String, f64>>,
    /// What happened and what to try.
    pub message: String,
    /// Joints (rad or m, SI) at the run's worst sample: the HTML page draws the arm there.
    /// Not in the JSON report.
    #[serde(skip)]
    pub worst_joints: Option<crate::robot::Joints>,
}

impl FindingReport {
    /// The finding converted to display units; `robot` supplies the joint names and kinds.
    pub fn new(f: &Finding, robot: &Robot) -> Self {
        let q = f.quantity;
        FindingReport {
            kind: f.kind.name(),
            severity: f.severity(),
            segment: f.segment,
            from: f.from.clone(),
            to: f.to.clone(),
            samples: f.samples,
            s_mm: f.s.map(|s| [s[0] * 1e3, s[1] * 1e3]),
            t_s: f.t,
            joint: f.joint.clone(),
            bodies: f.bodies.clone(),
            value: f.value.map(|v| q.display(v)),
            limit: f.limit.map(|v| q.display(v)),
            unit: q.unit(),
            joint_deltas: f.deltas.as_ref().map(|d| {
                robot
                    .joints()
                    .iter()
                    .zip(d)
                    .map(|(j, v)| (j.name.clone(), joint_display(j.kind, *v)))
                    .collect()
            }),
            message: f.message.clone(),
            worst_joints: f.worst_joints,
        }
    }
}

/// What first stops a configuration's walk, in display units.
#[derive(Debug, Clone, Serialize)]
pub struct StopReport {
    /// `unreachable`, `joint_limit` or `joint_jump`.
    pub kind: &'static str,
    /// Segment where it happens.
    pub segment: usize,
    /// Name of the segment's first waypoint.
    pub from: String,
    /// Name of the segment's last waypoint.
    pub to: String,
    /// Path distance where it happens (mm).
    pub s_mm: f64,
    /// The joint concerned (`joint_limit`).
    pub joint: Option<String>,
}

/// One row of the configuration table, in display units.
#[derive(Debug, Clone, Serialize)]
pub struct ConfigurationReport {
    /// `front/up/noflip` etc.
    pub config: String,
    /// The whole path runs in this configuration without unreachable, joint-limit or jump
    /// errors.
    pub runs: bool,
    /// The first error that would stop the walk in this configuration.
    pub first_failure: Option<StopReport>,
    /// Joints at the first waypoint in this configuration (deg / mm), if it reaches it.
    pub start_joints: Option<Vec<f64>>,
}

impl ConfigurationReport {
    pub(super) fn new(row: &Feasibility, robot: &Robot, job: &Job) -> Self {
        ConfigurationReport {
            config: row.config.to_string(),
            runs: row.runs(),
            first_failure: row.first_stop.map(|stop| StopReport {
                kind: stop.kind.name(),
                segment: stop.segment,
                from: job.waypoint_name(stop.segment),
                to: job.waypoint_name(stop.segment + 1),
                s_mm: stop.s * 1e3,
                joint: stop.joint.map(|k| robot.joints()[k].name.clone()),
            }),
            start_joints: row.start_joints.as_ref().map(|q| {
                robot
                    .joints()
                    .iter()
                    .zip(q)
                    .map(|(j, v)| joint_display(j.kind, *v))
                    .collect()
            }),
        }
    }
}

/// The advice as the text appended to the stopping errors' messages.
pub(super) fn advice_text(advice: &Advice) -> String {
    match advice {
        Advice::NoConfigurationRuns => {
            " — no arm configuration runs the whole path: change the path, the tool or the placement"
                .to_string()
        }
        Advice::RunsIn(configs) => format!(
            " — the whole path runs in configuration {}: start there (config: or start_joints)",
            configs
                .iter()
                .map(|c| c.to_string())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    }
}
