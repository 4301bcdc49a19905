//! Reports: the check's result as one serialisable value, rendered for the terminal (text),
//! as JSON, and the joint trajectory as CSV. Values here are in display units (mm, deg, s):
//! the conversion from SI happens once, when the report is built.

mod escape;
pub mod html;
mod joints_csv;
pub mod kinematics;
mod text;

pub use escape::{count, visible};
pub use joints_csv::JointsCsv;
pub use text::{render_text, Style};

use crate::assess::{Finding, Severity};
use crate::check::{Advice, CheckOutcome, Feasibility};
use crate::error::{Error, Result};
use crate::job::{Job, Motion};
use crate::robot::{spherical_wrist, JointKind, Robot};
use serde::Serialize;

/// The cautions every report carries.
pub const CAUTIONS: [&str; 5] = [
    "A simulated kinematic check is not a safety assessment.",
    "Verify the program on the real cell under the local robot safety standard and the site's procedures before production.",
    "Make the first runs at reduced speed (ISO 10218-1 limits the TCP to 250 mm/s in reduced-speed mode) with the cell cleared.",
    "The model ignores collisions, cables and hoses, payload, dynamics and the controller's own interpolation and blending.",
    "Results are only as good as the robot description, tool offset and work frame given to armpath: check them against the cell.",
];

/// The cautions of a report whose check measured a cell model: the fourth says what the
/// collision check covers instead of that collisions are ignored.
pub const CAUTIONS_WITH_CELL: [&str; 5] = [
    CAUTIONS[0],
    CAUTIONS[1],
    CAUTIONS[2],
    "Collisions are checked only against the modelled geometry (the robot's collision shapes, the tool bodies and the cell bodies, STL meshes as their convex hulls); anything not modelled is ignored, as are cables and hoses, payload, dynamics and the controller's own interpolation and blending.",
    "Results are only as good as the robot description, tool offset and geometry, work frame and cell file given to armpath: check them against the cell.",
];

/// The cautions of a report on `job`: [`CAUTIONS_WITH_CELL`] when its check measures a cell
/// model (the job has a cell file or tool geometry), else [`CAUTIONS`].
pub fn cautions_for(job: &Job) -> Vec<&'static str> {
    if job.cell.is_some() || !job.tool.geometry.is_empty() {
        CAUTIONS_WITH_CELL.to_vec()
    } else {
        CAUTIONS.to_vec()
    }
}

/// What the collision and clearance check covered, display units (mm).
#[derive(Debug, Clone, Serialize)]
pub struct CellReport {
    /// Bodies in the model: robot links with collision geometry, tool bodies, cell bodies.
    pub bodies: usize,
    /// Body pairs tested.
    pub pairs_tested: usize,
    pub clearance_mm: f64,
    /// Nearest approach of any tested pair at a sample (negative: penetration depth); for
    /// far pairs a lower bound.
    pub nearest_mm: Option<f64>,
    pub nearest_bodies: Option<[String; 2]>,
    pub nearest_sample: Option<usize>,
    /// Configurations measured: samples and midpoints of the between-samples rule.
    pub configurations_measured: u64,
    /// What the model leaves out.
    pub notes: Vec<String>,
}

impl CellReport {
    /// The report form of a cell summary.
    pub fn new(c: &crate::cell::CellSummary) -> Self {
        CellReport {
            bodies: c.bodies,
            pairs_tested: c.pairs,
            clearance_mm: c.clearance * 1e3,
            nearest_mm: c.nearest.as_ref().map(|n| n.distance * 1e3),
            nearest_bodies: c.nearest.as_ref().map(|n| n.bodies.clone()),
            nearest_sample: c.nearest.as_ref().map(|n| n.sample),
            configurations_measured: c.configurations,
            notes: c.notes.clone(),
        }
    }
}

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

impl StartReport {
    /// How the start was chosen, in words (`best of 4 configurations reaching the first pose`).
    pub fn how(&self) -> String {
        match self.method {
            "start_joints" => "from start_joints".to_string(),
            "search" if self.config.is_some() => format!(
                "best of {} reaching the first pose",
                count(self.alternatives, "configuration")
            ),
            "search" => format!(
                "best of {} found for the first pose",
                count(self.alternatives, "solution")
            ),
            _ => "first pose not reachable".to_string(),
        }
    }
}

/// The tool as the check used it.
#[derive(Debug, Clone, Serialize)]
pub struct ToolReport {
    /// TCP in the tip-link frame.
    pub tip_T_tcp: kinematics::PoseReport,
    pub free_spin: bool,
    /// Allowed spin about tool z (deg), when `free_spin`.
    pub spin_range_deg: [f64; 2],
    /// Largest rate of spin change (deg/s), if limited.
    pub spin_rate_deg_s: Option<f64>,
}

/// One planned segment: the inputs its timing comes from.
#[derive(Debug, Clone, Serialize)]
pub struct SegmentReport {
    pub index: usize,
    pub from: String,
    pub to: String,
    pub motion: Motion,
    pub process: bool,
    pub speed_mm_s: f64,
    /// Straight-line TCP distance between the end poses.
    pub length_mm: f64,
    /// Orientation change between the end poses.
    pub turn_deg: f64,
    /// Planned duration; for a joint move a lower bound (the walk adds the joint-speed bound).
    pub planned_s: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct PathReport {
    pub file: String,
    pub waypoints: crate::job::WaypointNames,
    pub segments: usize,
    pub speed_mm_s: f64,
    /// Programmed reorientation speed, if set.
    pub orientation_speed_deg_s: Option<f64>,
    pub tool: ToolReport,
    /// The work frame in the robot base frame (waypoints are given in it).
    pub base_T_work: kinematics::PoseReport,
    pub tool_angular_speed_limit_deg_s: f64,
    pub joint_speed_scale: f64,
    /// Margins to a joint limit that raise `near_joint_limit`: revolute (deg), prismatic (mm).
    pub near_limit_margin_deg: f64,
    pub near_limit_margin_mm: f64,
    pub step_mm: f64,
    pub angle_step_deg: f64,
    pub singularity_threshold: f64,
    pub start: StartReport,
    /// The first [`SEGMENT_TABLE_ROWS`] segments with their motion, speed and planned time
    /// (the HTML page lists them; the JSON leaves them out, since the path file has them).
    /// Capped so that the report stays small on paths of millions of waypoints.
    #[serde(skip)]
    pub segment_table: Vec<SegmentReport>,
}

/// Rows of the segment table a report keeps (see [`PathReport::segment_table`]).
pub const SEGMENT_TABLE_ROWS: usize = 500;

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
    /// `collision` and `clearance` only: the two bodies.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bodies: Option<[String; 2]>,
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
    pub configurations: Option<Vec<ConfigurationReport>>,
    /// The collision and clearance check; absent when the job has no cell and no tool
    /// geometry.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cell: Option<CellReport>,
    pub cautions: Vec<&'static str>,
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
    fn new(row: &Feasibility, robot: &Robot, job: &Job) -> Self {
        ConfigurationReport {
            config: row.config.to_string(),
            runs: row.runs,
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
fn advice_text(advice: &Advice) -> String {
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

impl Report {
    /// The report of a check: the outcome in display units, the configuration advice
    /// appended to the stopping errors' messages. Refused when a number of it is not finite
    /// (see [`Report::first_non_finite`]).
    pub fn from_outcome(o: &CheckOutcome) -> Result<Report> {
        let mut findings = o.findings.clone();
        if let Some(advice) = &o.advice {
            let hint = advice_text(advice);
            for f in findings.iter_mut().filter(|f| Advice::applies_to(f)) {
                f.message.push_str(&hint);
            }
        }
        let report = Report::build(o, &findings);
        if let Some(field) = report.first_non_finite() {
            return Err(Error::robot(
                o.robot.source(),
                "report",
                format!(
                    "{field} is not a finite number, so no report is written: check the robot's \
                     origins and limits, the tool, the work frame and the path values for extreme \
                     magnitudes"
                ),
            ));
        }
        Ok(report)
    }

    fn build(o: &CheckOutcome, findings: &[Finding]) -> Self {
        let r = o;
        let joint_name = |k: Option<usize>| k.map(|k| r.robot.joints()[k].name.clone());
        let e = o.extremes;
        Report {
            armpath_version: env!("CARGO_PKG_VERSION"),
            robot: RobotReport::new(&r.robot),
            path: PathReport {
                file: r.job.source.display().to_string(),
                waypoints: r.job.names.clone(),
                segments: r.plan.segment_count(),
                speed_mm_s: r.job.speed * 1e3,
                orientation_speed_deg_s: r.job.orientation_speed.map(f64::to_degrees),
                tool: ToolReport {
                    tip_T_tcp: kinematics::PoseReport::of(&r.job.tool.tip_T_tcp),
                    free_spin: r.job.tool.free_spin,
                    spin_range_deg: [
                        r.job.tool.spin_range.0.to_degrees(),
                        r.job.tool.spin_range.1.to_degrees(),
                    ],
                    spin_rate_deg_s: r.job.tool.spin_rate.map(f64::to_degrees),
                },
                base_T_work: kinematics::PoseReport::of(&r.job.base_T_work),
                near_limit_margin_deg: r.job.limits.near_limit_margin_angle.to_degrees(),
                near_limit_margin_mm: r.job.limits.near_limit_margin_length * 1e3,
                segment_table: r
                    .plan
                    .segments()
                    .take(SEGMENT_TABLE_ROWS)
                    .map(|g| {
                        let name = |i: usize| r.job.waypoint_name(i);
                        SegmentReport {
                            index: g.index,
                            from: name(g.index),
                            to: name(g.index + 1),
                            motion: g.motion,
                            process: g.process,
                            speed_mm_s: g.speed * 1e3,
                            length_mm: g.length * 1e3,
                            turn_deg: crate::rotation::angle_between(
                                &g.start.rotation,
                                &g.end.rotation,
                            )
                            .to_degrees(),
                            planned_s: g.duration,
                        }
                    })
                    .collect(),
                tool_angular_speed_limit_deg_s: r.job.limits.tool_angular_speed.to_degrees(),
                joint_speed_scale: r.job.limits.joint_speed_scale,
                step_mm: r.job.sampling.step * 1e3,
                angle_step_deg: r.job.sampling.angle_step.to_degrees(),
                singularity_threshold: r.thresholds.singularity,
                start: StartReport {
                    method: r.start.method.name(),
                    joints: r
                        .robot
                        .joints()
                        .iter()
                        .zip(&r.start.joints)
                        .map(|(j, v)| joint_display(j.kind, *v))
                        .collect(),
                    alternatives: r.start.alternatives,
                    config: r.start.config.map(|c| c.to_string()),
                },
            },
            summary: Summary {
                verdict: o.verdict(),
                errors: o.errors(),
                warnings: o.warnings(),
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
            findings: findings
                .iter()
                .map(|f| FindingReport::new(f, &r.robot))
                .collect(),
            configurations: o.feasibility.as_ref().map(|rows| {
                rows.iter()
                    .map(|row| ConfigurationReport::new(row, &r.robot, &r.job))
                    .collect()
            }),
            cell: o.cell.as_ref().map(CellReport::new),
            cautions: if o.cell.is_some() {
                CAUTIONS_WITH_CELL.to_vec()
            } else {
                CAUTIONS.to_vec()
            },
        }
    }

    /// The first number of the report that is not finite, by field name. NaN or infinity
    /// would print as text and vanish as `null` in JSON; the check refuses such a report.
    pub fn first_non_finite(&self) -> Option<String> {
        let p = &self.path;
        let s = &self.summary;
        let fields = [
            ("path.speed_mm_s", p.speed_mm_s),
            (
                "path.tool_angular_speed_limit_deg_s",
                p.tool_angular_speed_limit_deg_s,
            ),
            ("path.joint_speed_scale", p.joint_speed_scale),
            ("path.step_mm", p.step_mm),
            ("path.angle_step_deg", p.angle_step_deg),
            ("robot.reach_mm", self.robot.reach_mm),
            ("summary.length_mm", s.length_mm),
            ("summary.duration_s", s.duration_s),
            (
                "summary.max_tool_angular_speed_deg_s",
                s.max_tool_angular_speed_deg_s,
            ),
            ("summary.max_joint_speed_ratio", s.max_joint_speed_ratio),
        ];
        let optional = [
            ("summary.min_singularity", s.min_singularity),
            ("summary.min_singularity_s_mm", s.min_singularity_s_mm),
            ("summary.min_limit_margin_ratio", s.min_limit_margin_ratio),
        ];
        let start = p.start.joints.iter().map(|&v| ("path.start.joints", v));
        let poses = [
            ("path.tool", &p.tool.tip_T_tcp),
            ("path.base_T_work", &p.base_T_work),
        ]
        .into_iter()
        .flat_map(|(name, pose)| {
            pose.xyz_mm
                .into_iter()
                .chain(pose.quat_wxyz)
                .chain(pose.rpy_deg)
                .map(move |v| (name, v))
        });
        let findings = self.findings.iter().flat_map(|f| {
            let pairs = [f.s_mm, f.t_s].into_iter().flatten().flatten();
            let single = [f.value, f.limit].into_iter().flatten();
            let deltas = f.joint_deltas.iter().flat_map(|d| d.values().copied());
            pairs
                .chain(single)
                .chain(deltas)
                .map(|v| ("findings", v))
                .collect::<Vec<_>>()
        });
        fields
            .into_iter()
            .chain(optional.into_iter().filter_map(|(n, v)| v.map(|v| (n, v))))
            .chain(start)
            .chain(poses)
            .chain(findings)
            .find(|(_, v)| !v.is_finite())
            .map(|(name, v)| format!("{name} = {v}"))
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

#[cfg(test)]
mod tests {
    #[test]
    fn a_report_with_a_non_finite_number_names_the_field() {
        // source: common practice (IEEE 754: NaN and infinity are not finite)
        let outcome = crate::check::demo_outcome("paths/bracket_fillet.yaml");
        let report = super::Report::from_outcome(&outcome).unwrap();
        assert_eq!(report.first_non_finite(), None);
        let mut broken = report.clone();
        broken.summary.length_mm = f64::NAN;
        assert_eq!(
            broken.first_non_finite().as_deref(),
            Some("summary.length_mm = NaN")
        );
        let mut broken = report;
        broken.path.start.joints[2] = f64::INFINITY;
        assert_eq!(
            broken.first_non_finite().as_deref(),
            Some("path.start.joints = inf")
        );
    }
}
