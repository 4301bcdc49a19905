//! Reports: the check's result as one serialisable value, rendered for the terminal (text),
//! as JSON, and the joint trajectory as CSV. Values here are in display units (mm, deg, s):
//! the conversion from SI happens once, when the report is built.

pub mod html;
mod joints_csv;
pub mod kinematics;
mod text;

pub use joints_csv::JointsCsv;
pub use text::{render_text, Style};

use crate::assess::{Extremes, Finding, Severity};
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::{spherical_wrist, JointKind, Robot};
use crate::solve::{StartChoice, WalkTotals};
use serde::Serialize;

/// The cautions every report carries.
pub const CAUTIONS: [&str; 5] = [
    "A simulated kinematic check is not a safety assessment.",
    "Verify the program on the real cell under the local robot safety standard and the site's procedures before production.",
    "Make the first runs at reduced speed (ISO 10218-1 limits the TCP to 250 mm/s in reduced-speed mode) with the cell cleared.",
    "The model ignores collisions, cables and hoses, payload, dynamics and the controller's own interpolation and blending.",
    "Results are only as good as the robot description, tool offset and work frame given to armpath: check them against the cell.",
];

/// Display value of a joint quantity: deg for revolute, mm for prismatic.
pub fn joint_display(kind: JointKind, si: f64) -> f64 {
    if kind.is_prismatic() {
        si * 1e3
    } else {
        si.to_degrees()
    }
}

/// Unit name of a joint position: `deg` or `mm`.
pub fn joint_unit(kind: JointKind) -> &'static str {
    if kind.is_prismatic() {
        "mm"
    } else {
        "deg"
    }
}

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

#[derive(Debug, Clone, Serialize)]
pub struct JointReport {
    pub name: String,
    pub kind: JointKind,
    /// `deg` or `mm`.
    pub unit: &'static str,
    /// Range in `unit`; null for a continuous joint.
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    /// Velocity limit in `unit`/s.
    pub velocity: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct RobotReport {
    pub name: String,
    pub urdf: String,
    pub dof: usize,
    pub root_link: String,
    pub tip_link: String,
    pub spherical_wrist: bool,
    pub reach_mm: f64,
    pub joints: Vec<JointReport>,
}

impl RobotReport {
    pub fn new(robot: &Robot) -> Self {
        RobotReport {
            name: robot.name().to_string(),
            urdf: robot.source().display().to_string(),
            dof: robot.dof(),
            root_link: robot.root_link().to_string(),
            tip_link: robot.tip_link().to_string(),
            spherical_wrist: spherical_wrist(robot).spherical,
            reach_mm: robot.reach() * 1e3,
            joints: robot
                .joints()
                .iter()
                .map(|j| JointReport {
                    name: j.name.clone(),
                    kind: j.kind,
                    unit: joint_unit(j.kind),
                    lower: finite(joint_display(j.kind, j.lower)),
                    upper: finite(joint_display(j.kind, j.upper)),
                    velocity: joint_display(j.kind, j.velocity),
                })
                .collect(),
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct StartReport {
    /// `start_joints` (given in the path file), `search` (best-scoring of the solutions found
    /// from many seeds) or `unreachable`.
    pub method: &'static str,
    /// Joints at the first waypoint (deg; mm for prismatic joints).
    pub joints: Vec<f64>,
    /// Distinct in-range solutions found for the first pose (search only).
    pub alternatives: usize,
    /// Arm configuration followed (`front/up/noflip` …), for arms with a closed-form solver.
    pub config: Option<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct PathReport {
    pub file: String,
    pub waypoints: Vec<String>,
    pub segments: usize,
    pub speed_mm_s: f64,
    pub tool_angular_speed_limit_deg_s: f64,
    pub joint_speed_scale: f64,
    pub step_mm: f64,
    pub angle_step_deg: f64,
    pub singularity_threshold: f64,
    pub start: StartReport,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// No findings beyond input notes.
    Pass,
    /// Warnings only: the path runs, with things to look at.
    Warn,
    /// At least one error finding.
    Fail,
}

impl Verdict {
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::Warn => "warn",
            Verdict::Fail => "fail",
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    pub verdict: Verdict,
    pub errors: usize,
    pub warnings: usize,
    pub samples: usize,
    pub length_mm: f64,
    pub duration_s: f64,
    /// Smallest singularity measure along the path (1 = isotropic, 0 = singular).
    pub min_singularity: Option<f64>,
    pub min_singularity_class: Option<&'static str>,
    pub min_singularity_s_mm: Option<f64>,
    pub max_tool_angular_speed_deg_s: f64,
    /// Largest joint speed over its allowed speed (≤ 1 is within limits).
    pub max_joint_speed_ratio: f64,
    pub max_joint_speed_joint: Option<String>,
    /// Smallest distance to a joint limit over half the joint's range (1 = mid-range).
    pub min_limit_margin_ratio: Option<f64>,
    pub min_limit_margin_joint: Option<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct FindingReport {
    pub kind: &'static str,
    pub severity: Severity,
    pub segment: Option<usize>,
    pub from: Option<String>,
    pub to: Option<String>,
    pub samples: Option<[usize; 2]>,
    pub s_mm: Option<[f64; 2]>,
    pub t_s: Option<[f64; 2]>,
    pub joint: Option<String>,
    pub value: Option<f64>,
    pub limit: Option<f64>,
    pub unit: &'static str,
    /// `joint_jump` only: the change of each joint across the jump, by joint name (deg; mm
    /// for prismatic joints).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub joint_deltas: Option<std::collections::BTreeMap<String, f64>>,
    pub message: String,
}

impl FindingReport {
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
        }
    }
}

/// The whole result of a check.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    pub armpath_version: &'static str,
    pub robot: RobotReport,
    pub path: PathReport,
    pub summary: Summary,
    pub findings: Vec<FindingReport>,
    /// For arms with a closed-form solver: each arm configuration, whether the whole path
    /// runs in it, and if not where it first stops. Null for other arms.
    pub configurations: Option<Vec<crate::configs::ConfigRow>>,
    pub cautions: Vec<&'static str>,
}

/// Everything a report is built from.
pub struct ReportInputs<'a> {
    pub robot: &'a Robot,
    pub job: &'a Job,
    pub plan: &'a Plan,
    pub start: &'a StartChoice,
    pub totals: WalkTotals,
    pub findings: &'a [Finding],
    pub extremes: Extremes,
    pub singularity_threshold: f64,
}

impl Report {
    pub fn build(r: ReportInputs<'_>) -> Self {
        let errors = r
            .findings
            .iter()
            .filter(|f| f.severity() == Severity::Error)
            .count();
        let warnings = r.findings.len() - errors;
        let verdict = if errors > 0 {
            Verdict::Fail
        } else if r
            .findings
            .iter()
            .any(|f| f.kind != crate::assess::Kind::Input)
        {
            Verdict::Warn
        } else {
            Verdict::Pass
        };
        let joint_name = |k: Option<usize>| k.map(|k| r.robot.joints()[k].name.clone());
        let e = r.extremes;
        Report {
            armpath_version: env!("CARGO_PKG_VERSION"),
            robot: RobotReport::new(r.robot),
            path: PathReport {
                file: r.job.source.display().to_string(),
                waypoints: r.job.waypoints.iter().map(|w| w.name.clone()).collect(),
                segments: r.plan.segment_count(),
                speed_mm_s: r.job.speed * 1e3,
                tool_angular_speed_limit_deg_s: r.job.limits.tool_angular_speed.to_degrees(),
                joint_speed_scale: r.job.limits.joint_speed_scale,
                step_mm: r.job.sampling.step * 1e3,
                angle_step_deg: r.job.sampling.angle_step.to_degrees(),
                singularity_threshold: r.singularity_threshold,
                start: StartReport {
                    method: r.start.method,
                    joints: r
                        .robot
                        .joints()
                        .iter()
                        .zip(&r.start.joints)
                        .map(|(j, v)| joint_display(j.kind, *v))
                        .collect(),
                    alternatives: r.start.alternatives,
                    config: None,
                },
            },
            summary: Summary {
                verdict,
                errors,
                warnings,
                samples: r.totals.samples,
                length_mm: r.totals.length * 1e3,
                duration_s: r.totals.duration,
                min_singularity: finite(e.min_singularity),
                min_singularity_class: e.min_singularity_class.map(|c| c.name()),
                min_singularity_s_mm: e.min_singularity_s.map(|s| s * 1e3),
                max_tool_angular_speed_deg_s: e.max_tool_angular_speed.to_degrees(),
                max_joint_speed_ratio: e.max_joint_speed_ratio,
                max_joint_speed_joint: joint_name(e.max_joint_speed_joint),
                min_limit_margin_ratio: finite(e.min_limit_margin_ratio),
                min_limit_margin_joint: joint_name(e.min_limit_margin_joint),
            },
            findings: r
                .findings
                .iter()
                .map(|f| FindingReport::new(f, r.robot))
                .collect(),
            configurations: None,
            cautions: CAUTIONS.to_vec(),
        }
    }

    /// Exit code for this report: 1 when there are error findings, else 0.
    pub fn exit_code(&self) -> i32 {
        if self.summary.errors > 0 {
            1
        } else {
            0
        }
    }
}
