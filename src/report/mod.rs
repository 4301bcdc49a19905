//! Reports: the check's result as one serialisable value, rendered for the terminal (text),
//! as JSON, and the joint trajectory as CSV. Values here are in display units (mm, deg, s):
//! the conversion from SI happens once, when the report is built.

mod cell;
mod entries;
mod escape;
pub mod html;
mod joints_csv;
pub mod kinematics;
mod text;

pub use cell::{cautions_for, CellReport, CAUTIONS_WITH_CELL};
use entries::advice_text;
pub use entries::{ConfigurationReport, FindingReport, StopReport};
pub use escape::{count, visible};
pub use joints_csv::JointsCsv;
pub use text::{render_text, Style};

use crate::assess::Finding;
pub use crate::check::Verdict;
pub use crate::units_display::{joint_display, joint_unit};

use crate::check::{Advice, CheckOutcome};
use crate::error::{Error, Result};
use crate::job::Motion;
use crate::robot::{spherical_wrist, JointKind, Robot};
use serde::Serialize;

/// The cautions every report carries.
pub const CAUTIONS: [&str; 5] = [
    "A simulated kinematic check is not a safety assessment.",
    "Verify the program on the real cell under the local robot safety standard and the site's procedures before production.",
    "Make the first runs at reduced speed (ISO 10218-1 limits the TCP to 250 mm/s in reduced-speed mode) with the cell cleared.",
    "The model ignores collisions, cables and hoses, payload, forces and torques, and jerk; its speed ramps and corner blends are armpath's own model with default accelerations (URDF has none), not the controller's interpolation.",
    "Results are only as good as the robot description, tool offset and work frame given to armpath: check them against the cell.",
];

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// One movable joint as the JSON `robot.joints[]` entry shows it, in display units.
#[derive(Debug, Clone, Serialize)]
pub struct JointReport {
    /// The URDF joint name.
    pub name: String,
    /// `revolute`, `continuous` or `prismatic`.
    pub kind: JointKind,
    /// `deg` or `mm`.
    pub unit: &'static str,
    /// Range in `unit`; null for a continuous joint.
    pub lower: Option<f64>,
    /// Upper end of the range in `unit`; null for a continuous joint.
    pub upper: Option<f64>,
    /// Velocity limit in `unit`/s.
    pub velocity: f64,
}

/// The arm the check ran on (JSON `robot`), in display units.
#[derive(Debug, Clone, Serialize)]
pub struct RobotReport {
    /// The URDF `<robot name>`.
    pub name: String,
    /// The URDF file the robot was read from.
    pub urdf: String,
    /// Number of movable joints (the length of every joint list in the report).
    pub dof: usize,
    /// Link whose frame is the base frame.
    pub root_link: String,
    /// Link the tool is mounted on.
    pub tip_link: String,
    /// True when the last three axes meet in one point (closed-form solving and singularity
    /// classes depend on it).
    pub spherical_wrist: bool,
    /// Estimated reach (mm): a sampled estimate, a little below the true maximum.
    pub reach_mm: f64,
    /// Movable joints, base to tip.
    pub joints: Vec<JointReport>,
}

impl RobotReport {
    /// The wrist as the reports name it: `spherical` or `offset`.
    pub fn wrist_kind(&self) -> &'static str {
        if self.spherical_wrist {
            "spherical"
        } else {
            "offset"
        }
    }

    /// The robot's description converted to display units.
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

/// How the joints at the first waypoint were chosen (JSON `path.start`).
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
    /// The process does not care about rotation about tool z, so armpath may choose it.
    pub free_spin: bool,
    /// Allowed spin about tool z (deg), when `free_spin`.
    pub spin_range_deg: [f64; 2],
    /// Largest rate of spin change (deg/s), if limited.
    pub spin_rate_deg_s: Option<f64>,
}

/// One planned segment: the inputs its timing comes from.
#[derive(Debug, Clone, Serialize)]
pub struct SegmentReport {
    /// 0-based segment index.
    pub index: usize,
    /// Name of the waypoint the segment starts at.
    pub from: String,
    /// Name of the waypoint the segment ends at.
    pub to: String,
    /// `linear` or `joint`.
    pub motion: Motion,
    /// The segment ends at a process waypoint (constant speed required).
    pub process: bool,
    /// Programmed TCP speed (mm/s).
    pub speed_mm_s: f64,
    /// Straight-line TCP distance between the end poses (mm).
    pub length_mm: f64,
    /// Orientation change between the end poses (deg).
    pub turn_deg: f64,
    /// Planned duration at the programmed speed, without ramps or blends (s); for a joint
    /// move a lower bound (the walk adds the joint bounds).
    pub planned_s: f64,
    /// Duration as run (ramps, blends, synchronised joint move), if the walk got there.
    pub duration_s: Option<f64>,
}

/// The path and the settings the check used (JSON `path`), in display units.
#[derive(Debug, Clone, Serialize)]
pub struct PathReport {
    /// The path file (YAML or CSV) the job was read from.
    pub file: String,
    /// Waypoint names in path order.
    pub waypoints: crate::job::WaypointNames,
    /// Number of segments (one fewer than the waypoints; repeated waypoints count).
    pub segments: usize,
    /// Programmed TCP speed (mm/s); waypoints may set their own.
    pub speed_mm_s: f64,
    /// Programmed reorientation speed (deg/s); null when not set.
    pub orientation_speed_deg_s: Option<f64>,
    /// The tool as mounted for the check.
    pub tool: ToolReport,
    /// The work frame in the robot base frame (waypoints are given in it).
    pub base_T_work: kinematics::PoseReport,
    /// Tool angular speed above which `tool_angular_speed` is raised (deg/s).
    pub tool_angular_speed_limit_deg_s: f64,
    /// Fraction of each URDF joint velocity limit a joint may use, in (0, 1].
    pub joint_speed_scale: f64,
    /// Margins to a joint limit that raise `near_joint_limit`: revolute (deg), prismatic (mm).
    pub near_limit_margin_deg: f64,
    /// The prismatic-joint margin (mm); see `near_limit_margin_deg`.
    pub near_limit_margin_mm: f64,
    /// Largest TCP distance between consecutive samples (mm).
    pub step_mm: f64,
    /// Largest orientation change between consecutive samples (deg).
    pub angle_step_deg: f64,
    /// Singularity measure (dimensionless) below which `singularity` is raised.
    pub singularity_threshold: f64,
    /// Largest TCP acceleration on straight-line moves (mm/s²).
    pub tcp_acceleration_mm_s2: f64,
    /// Largest tool angular acceleration on straight-line moves (deg/s²).
    pub tool_angular_acceleration_deg_s2: f64,
    /// Multiplies the default joint accelerations (URDF has none: each joint's default is
    /// [`crate::motion::JOINT_ACCELERATION_PER_SPEED`] times its speed limit per second).
    pub joint_acceleration_scale: f64,
    /// Joints whose acceleration limit the path file gives (`limits.joint_accelerations`), in
    /// name order; every other joint follows the default rule. Empty when none is given.
    pub joint_accelerations_given: Vec<String>,
    /// Share of the programmed speed a process segment may lose before a warning.
    pub process_speed_tolerance: f64,
    /// Time each of the first [`SEGMENT_TABLE_ROWS`] segments takes as run (s), in path
    /// order; their sum over all segments is `summary.duration_s`, the cycle time.
    pub segment_durations_s: Vec<f64>,
    /// How the joints at the first waypoint were chosen.
    pub start: StartReport,
    /// The first [`SEGMENT_TABLE_ROWS`] segments with their motion, speed and planned time
    /// (the HTML page lists them; the JSON leaves them out, since the path file has them).
    /// Capped so that the report stays small on paths of millions of waypoints.
    #[serde(skip)]
    pub segment_table: Vec<SegmentReport>,
}

pub use crate::check::SEGMENT_TABLE_ROWS;

/// The result in a few numbers (JSON `summary`), in display units.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    /// `pass`, `warn` (warnings beyond input notes) or `fail` (at least one error).
    pub verdict: Verdict,
    /// Number of error findings.
    pub errors: usize,
    /// Number of warning findings, input notes included.
    pub warnings: usize,
    /// Number of samples checked along the path.
    pub samples: usize,
    /// Path distance of the last sample checked (mm).
    pub length_mm: f64,
    /// Time of the last sample checked (s).
    pub duration_s: f64,
    /// Smallest singularity measure along the path (1 = isotropic, 0 = singular); null when
    /// no sample was reached.
    pub min_singularity: Option<f64>,
    /// `wrist`, `elbow` or `shoulder` at that sample; null when the arm's singularities are
    /// not classified or no sample was reached.
    pub min_singularity_class: Option<&'static str>,
    /// Path distance of that sample (mm); null when no sample was reached.
    pub min_singularity_s_mm: Option<f64>,
    /// Largest tool angular speed on linear segments (deg/s); 0 when there are none.
    pub max_tool_angular_speed_deg_s: f64,
    /// Largest joint speed over its allowed speed (≤ 1 is within limits).
    pub max_joint_speed_ratio: f64,
    /// Name of the joint with that ratio; null when no joint moved.
    pub max_joint_speed_joint: Option<String>,
    /// The same on process segments only (null without process segments).
    pub process_max_joint_speed_ratio: Option<f64>,
    /// Joint of `process_max_joint_speed_ratio` (null without process segments).
    pub process_max_joint_speed_joint: Option<String>,
    /// Largest joint acceleration over its allowed acceleration (≤ 1 is within limits).
    pub max_joint_acceleration_ratio: f64,
    /// Joint of `max_joint_acceleration_ratio` (null when no acceleration was measured).
    pub max_joint_acceleration_joint: Option<String>,
    /// Lowest commanded TCP speed on process segments over the programmed speed (null
    /// without process segments).
    pub min_process_speed_ratio: Option<f64>,
    /// Smallest distance to a joint limit over half the joint's range (1 = mid-range, < 0
    /// outside the range); null when no limited joint was measured.
    pub min_limit_margin_ratio: Option<f64>,
    /// Name of the joint with that margin; null like `min_limit_margin_ratio`.
    pub min_limit_margin_joint: Option<String>,
}

/// The whole result of a check.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    /// Version of armpath that made the report.
    pub armpath_version: &'static str,
    /// The arm.
    pub robot: RobotReport,
    /// The path and the settings used.
    pub path: PathReport,
    /// Verdict, counts and extremes.
    pub summary: Summary,
    /// Every finding: notes on the run as a whole first, then in path order; empty for a
    /// clean path.
    pub findings: Vec<FindingReport>,
    /// For arms with a closed-form solver: each arm configuration, whether the whole path
    /// runs in it, and if not where it first stops. Null for other arms.
    pub configurations: Option<Vec<ConfigurationReport>>,
    /// The collision and clearance check; absent when the job has no cell and no tool
    /// geometry.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cell: Option<CellReport>,
    /// The safety cautions ([`CAUTIONS`]), carried by every report.
    pub cautions: Vec<&'static str>,
}

impl Report {
    /// The report of a check: the outcome in display units, the configuration advice
    /// appended to the stopping errors' messages. Refused when a value of the outcome is not
    /// finite ([`CheckOutcome::refuse_non_finite`]), or a number of the report is not (see
    /// [`Report::first_non_finite`]: a finite SI value may overflow in display units).
    pub fn from_outcome(o: &CheckOutcome) -> Result<Report> {
        o.refuse_non_finite()?;
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
        let joint_name = |k: Option<usize>| k.map(|k| o.robot.joints()[k].name.clone());
        let e = o.extremes;
        Report {
            armpath_version: env!("CARGO_PKG_VERSION"),
            robot: RobotReport::new(&o.robot),
            path: PathReport {
                file: o.job.source.display().to_string(),
                waypoints: o.job.names.clone(),
                segments: o.plan.segment_count(),
                speed_mm_s: o.job.speed * 1e3,
                orientation_speed_deg_s: o.job.orientation_speed.map(f64::to_degrees),
                tool: ToolReport {
                    tip_T_tcp: kinematics::PoseReport::of(&o.job.tool.tip_T_tcp),
                    free_spin: o.job.tool.free_spin,
                    spin_range_deg: [
                        o.job.tool.spin_range.0.to_degrees(),
                        o.job.tool.spin_range.1.to_degrees(),
                    ],
                    spin_rate_deg_s: o.job.tool.spin_rate.map(f64::to_degrees),
                },
                base_T_work: kinematics::PoseReport::of(&o.job.base_T_work),
                near_limit_margin_deg: o.job.limits.near_limit_margin_angle.to_degrees(),
                near_limit_margin_mm: o.job.limits.near_limit_margin_length * 1e3,
                segment_table: o
                    .plan
                    .segments()
                    .take(SEGMENT_TABLE_ROWS)
                    .map(|g| {
                        let name = |i: usize| o.job.waypoint_name(i);
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
                            duration_s: o.segment_durations.get(g.index).copied(),
                        }
                    })
                    .collect(),
                tool_angular_speed_limit_deg_s: o.job.limits.tool_angular_speed.to_degrees(),
                joint_speed_scale: o.job.limits.joint_speed_scale,
                step_mm: o.job.sampling.step * 1e3,
                angle_step_deg: o.job.sampling.angle_step.to_degrees(),
                singularity_threshold: o.thresholds.singularity,
                tcp_acceleration_mm_s2: o.job.limits.tcp_acceleration * 1e3,
                tool_angular_acceleration_deg_s2: o
                    .job
                    .limits
                    .tool_angular_acceleration
                    .to_degrees(),
                joint_acceleration_scale: o.job.limits.joint_acceleration_scale,
                joint_accelerations_given: o
                    .job
                    .joint_accelerations
                    .iter()
                    .map(|g| g.joint.clone())
                    .collect(),
                process_speed_tolerance: o.job.limits.process_speed_tolerance,
                segment_durations_s: o.segment_durations.clone(),
                start: StartReport {
                    method: o.start.method.name(),
                    joints: o
                        .robot
                        .joints()
                        .iter()
                        .zip(&o.start.joints)
                        .map(|(j, v)| joint_display(j.kind, *v))
                        .collect(),
                    alternatives: o.start.alternatives,
                    config: o.start.config.map(|c| c.to_string()),
                },
            },
            summary: Summary {
                verdict: o.verdict(),
                errors: o.errors(),
                warnings: o.warnings(),
                samples: o.totals.samples,
                length_mm: o.totals.length * 1e3,
                duration_s: o.totals.duration,
                min_singularity: finite(e.min_singularity),
                min_singularity_class: e.min_singularity_class.map(|c| c.name()),
                min_singularity_s_mm: e.min_singularity_s.map(|s| s * 1e3),
                max_tool_angular_speed_deg_s: e.max_tool_angular_speed.to_degrees(),
                max_joint_speed_ratio: e.max_joint_speed_ratio,
                max_joint_speed_joint: joint_name(e.max_joint_speed_joint),
                process_max_joint_speed_ratio: e
                    .process_joint_speed_joint
                    .map(|_| e.process_joint_speed_ratio),
                process_max_joint_speed_joint: joint_name(e.process_joint_speed_joint),
                max_joint_acceleration_ratio: e.max_joint_acceleration_ratio,
                max_joint_acceleration_joint: joint_name(e.max_joint_acceleration_joint),
                min_process_speed_ratio: finite(e.min_process_speed_ratio),
                min_limit_margin_ratio: finite(e.min_limit_margin_ratio),
                min_limit_margin_joint: joint_name(e.min_limit_margin_joint),
            },
            findings: findings
                .iter()
                .map(|f| FindingReport::new(f, &o.robot))
                .collect(),
            configurations: o.feasibility.as_ref().map(|rows| {
                rows.iter()
                    .map(|row| ConfigurationReport::new(row, &o.robot, &o.job))
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
            (
                "summary.max_joint_acceleration_ratio",
                s.max_joint_acceleration_ratio,
            ),
            ("path.tcp_acceleration_mm_s2", p.tcp_acceleration_mm_s2),
            (
                "path.tool_angular_acceleration_deg_s2",
                p.tool_angular_acceleration_deg_s2,
            ),
        ];
        let optional = [
            ("summary.min_singularity", s.min_singularity),
            ("summary.min_singularity_s_mm", s.min_singularity_s_mm),
            ("summary.min_limit_margin_ratio", s.min_limit_margin_ratio),
            (
                "summary.process_max_joint_speed_ratio",
                s.process_max_joint_speed_ratio,
            ),
            ("summary.min_process_speed_ratio", s.min_process_speed_ratio),
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
