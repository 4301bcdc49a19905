//! What a check found, in SI and typed values: the input to the report (display units, built
//! by [`crate::report::Report::from_outcome`]) and to `fix` and `place`, which decide from it.

use crate::assess::{Extremes, Finding, Kind, Severity, Thresholds};
use crate::error::{Error, Result};
use crate::ik::analytic::Config;
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::Robot;
use crate::solve::{StartChoice, WalkTotals};
use nalgebra::Isometry3;
use serde::Serialize;

/// Segments whose run time the outcome keeps ([`CheckOutcome::segment_durations`]) and whose
/// rows the report's segment table shows: the first 500. A path of a million waypoints keeps
/// its report small; a reader of that many segments wants the joint CSV, not a table.
pub const SEGMENT_TABLE_ROWS: usize = 500;

pub use crate::configs::{Feasibility, FirstStop};

/// The overall result of a check.
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
    /// The verdict's name: `pass`, `warn` or `fail`.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::Warn => "warn",
            Verdict::Fail => "fail",
        }
    }
}

/// Which configurations would run the whole path, for the stopping errors of a check whose
/// configuration does not.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Advice {
    /// These configurations run the whole path (in [`Config::ALL`] order).
    RunsIn(Vec<Config>),
    /// No configuration runs the whole path.
    NoConfigurationRuns,
}

impl Advice {
    /// The advice for a check that followed `used`: `None` when `used` runs the whole path.
    pub fn new(table: &[Feasibility], used: Option<Config>) -> Option<Advice> {
        if used.is_some_and(|u| table.iter().any(|r| r.runs() && r.config == u)) {
            return None;
        }
        let running = crate::configs::running(table);
        Some(if running.is_empty() {
            Advice::NoConfigurationRuns
        } else {
            Advice::RunsIn(running)
        })
    }

    /// Does the advice belong to this finding? Only to stopping errors (unreachable, joint
    /// limit, jump).
    pub fn applies_to(f: &Finding) -> bool {
        f.severity() == Severity::Error
            && matches!(
                f.kind,
                Kind::Unreachable | Kind::JointLimit | Kind::JointJump
            )
    }
}

/// The result of [`crate::check::check`].
#[derive(Debug, Clone)]
pub struct CheckOutcome {
    /// The robot as checked: the job's tool mounted.
    pub robot: Robot,
    /// The job checked.
    pub job: Job,
    /// Its plan.
    pub plan: Plan,
    /// The joints at the first pose and how they were chosen.
    pub start: StartChoice,
    /// For arms with a closed-form solver: each configuration's walk ([`Config::ALL`] order).
    pub feasibility: Option<Vec<Feasibility>>,
    /// Input notes first, then the assessment's findings.
    pub findings: Vec<Finding>,
    /// Extreme values along the path.
    pub extremes: Extremes,
    /// Samples, length and duration of the walk.
    pub totals: WalkTotals,
    /// Time (s) each of the first [`SEGMENT_TABLE_ROWS`] segments takes as
    /// run (ramps, blends and joint moves included), in path order; shorter when the walk
    /// ended early.
    pub segment_durations: Vec<f64>,
    /// The thresholds the findings were raised with.
    pub thresholds: Thresholds,
    /// Configuration advice for the stopping errors (closed-form arms whose configuration
    /// does not run the path).
    pub advice: Option<Advice>,
    /// What the collision and clearance check covered; `None` when the job has no cell and
    /// no tool geometry (then collisions are not checked).
    pub cell: Option<super::CellSummary>,
}

impl CheckOutcome {
    /// Error findings.
    pub fn errors(&self) -> usize {
        self.findings
            .iter()
            .filter(|f| f.severity() == Severity::Error)
            .count()
    }

    /// `collision` findings.
    pub fn collisions(&self) -> usize {
        self.findings
            .iter()
            .filter(|f| f.kind == Kind::Collision)
            .count()
    }

    /// Warning findings (input notes included).
    pub fn warnings(&self) -> usize {
        self.findings.len() - self.errors()
    }

    /// Fail with an error finding, else warn with a finding beyond input notes, else pass.
    pub fn verdict(&self) -> Verdict {
        if self.errors() > 0 {
            Verdict::Fail
        } else if self.findings.iter().any(|f| f.kind != Kind::Input) {
            Verdict::Warn
        } else {
            Verdict::Pass
        }
    }

    /// The smallest limit ratio and the smallest singularity measure along the path, each
    /// when finite (none when no sample was measured, or no joint has a finite range).
    pub fn margin_terms(&self) -> (Option<f64>, Option<f64>) {
        let finite = |v: f64| v.is_finite().then_some(v);
        (
            finite(self.extremes.min_limit_margin_ratio),
            finite(self.extremes.min_singularity),
        )
    }

    /// The ranking margin of the check: [`crate::solve::margin`] of its smallest limit ratio
    /// and smallest singularity measure, a missing one counting as fully clear.
    pub fn margin(&self) -> f64 {
        let (ratio, measure) = self.margin_terms();
        crate::solve::margin(ratio.unwrap_or(1.0), measure.unwrap_or(f64::INFINITY))
    }

    /// The first value of the outcome that is not a finite number, by field name (SI). NaN
    /// or infinity would print as text and vanish as `null` in JSON, and cannot be ranked.
    /// Values that stand for "nothing measured" when infinite (the smallest singularity
    /// measure, the smallest limit ratio) are left out.
    pub fn first_non_finite(&self) -> Option<NonFinite> {
        let job = &self.job;
        let e = &self.extremes;
        let fields = [
            ("job.speed", job.speed),
            (
                "job.limits.tool_angular_speed",
                job.limits.tool_angular_speed,
            ),
            ("job.limits.joint_speed_scale", job.limits.joint_speed_scale),
            ("job.sampling.step", job.sampling.step),
            ("job.sampling.angle_step", job.sampling.angle_step),
            ("robot.reach", self.robot.reach()),
            ("totals.length", self.totals.length),
            ("totals.duration", self.totals.duration),
            ("extremes.max_tool_angular_speed", e.max_tool_angular_speed),
            ("extremes.max_joint_speed_ratio", e.max_joint_speed_ratio),
        ];
        let optional = e
            .min_singularity_s
            .map(|v| ("extremes.min_singularity_s", v));
        let start = self.start.joints.iter().map(|&v| ("start.joints", v));
        let poses = [
            ("job.tool.tip_T_tcp", &job.tool.tip_T_tcp),
            ("job.base_T_work", &job.base_T_work),
        ]
        .into_iter()
        .flat_map(|(name, pose)| pose_values(pose).map(move |v| (name, v)));
        let findings = self.findings.iter().flat_map(|f| {
            let pairs = [f.s, f.t].into_iter().flatten().flatten();
            let single = [f.value, f.limit].into_iter().flatten();
            let deltas = f.deltas.iter().flatten().copied();
            pairs.chain(single).chain(deltas).map(|v| ("findings", v))
        });
        fields
            .into_iter()
            .chain(optional)
            .chain(start)
            .chain(poses)
            .chain(findings)
            .find(|(_, v)| !v.is_finite())
            .map(|(field, value)| NonFinite { field, value })
    }

    /// Refuse an outcome with a value that is not a finite number (see
    /// [`CheckOutcome::first_non_finite`]): the error names the field and what to check.
    pub fn refuse_non_finite(&self) -> Result<()> {
        match self.first_non_finite() {
            None => Ok(()),
            Some(NonFinite { field, value }) => Err(Error::robot(
                self.robot.source(),
                "check",
                format!(
                    "{field} = {value} is not a finite number, so no result is written: check the \
                     robot's origins and limits, the tool, the work frame and the path values for \
                     extreme magnitudes"
                ),
            )),
        }
    }

    /// The configurations that run the whole path, in [`Config::ALL`] order (empty for arms
    /// without a closed-form solver).
    pub fn running(&self) -> Vec<Config> {
        self.feasibility
            .as_deref()
            .map(crate::configs::running)
            .unwrap_or_default()
    }
}

/// A value of a [`CheckOutcome`] that is not a finite number.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NonFinite {
    /// Where it is, e.g. `totals.length` (SI field names of the outcome).
    pub field: &'static str,
    /// The value (NaN or ±infinity).
    pub value: f64,
}

/// Translation, then quaternion (w, x, y, z) of a pose.
fn pose_values(pose: &Isometry3<f64>) -> impl Iterator<Item = f64> {
    let t = pose.translation.vector;
    let q = pose.rotation.quaternion();
    [t.x, t.y, t.z, q.w, q.i, q.j, q.k].into_iter()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_outcome_of_the_bracket_demo_agrees_with_its_report() {
        let outcome = crate::check::demo_outcome("paths/bracket_fillet.yaml");
        let report = crate::report::Report::from_outcome(&outcome).unwrap();
        // source: common practice (one verdict and one count, whichever form is read)
        assert_eq!(outcome.verdict(), report.summary.verdict);
        assert_eq!(outcome.errors(), report.summary.errors);
        assert_eq!(outcome.warnings(), report.summary.warnings);
        // source: from memory (the closed-form solver's eight configurations, walked in
        // Config::ALL order; the report names each one)
        let rows = outcome.feasibility.as_deref().unwrap();
        let configs: Vec<Config> = rows.iter().map(|r| r.config).collect();
        assert_eq!(configs, Config::ALL);
        let names: Vec<String> = report
            .configurations
            .iter()
            .flatten()
            .map(|r| r.config.clone())
            .collect();
        let expected: Vec<String> = Config::ALL.iter().map(|c| c.to_string()).collect();
        assert_eq!(names, expected);
        let used = outcome.start.config.unwrap();
        assert_eq!(report.path.start.config, Some(used.to_string()));
        assert!(outcome.running().contains(&used));
        assert_eq!(outcome.advice, None);
        // source: common practice (the margin definition in solve/start.rs: the smaller of the
        // limit ratio and the measure over the well-conditioned one, capped at 1)
        let e = &outcome.extremes;
        assert!(e.min_limit_margin_ratio.is_finite() && e.min_singularity.is_finite());
        assert_eq!(
            outcome.margin(),
            crate::solve::margin(e.min_limit_margin_ratio, e.min_singularity)
        );
        let by_hand = e
            .min_limit_margin_ratio
            .min((e.min_singularity / crate::solve::WELL_CONDITIONED_MEASURE).min(1.0));
        assert_eq!(outcome.margin(), by_hand);
    }

    #[test]
    fn an_outcome_with_a_non_finite_value_names_the_field() {
        // source: common practice (IEEE 754: NaN and infinity are not finite)
        let outcome = crate::check::demo_outcome("paths/bracket_fillet.yaml");
        assert_eq!(outcome.first_non_finite(), None);
        assert!(outcome.refuse_non_finite().is_ok());
        let mut broken = outcome.clone();
        broken.totals.length = f64::NAN;
        assert_eq!(
            broken.first_non_finite().map(|n| n.field),
            Some("totals.length")
        );
        let message = broken.refuse_non_finite().unwrap_err().to_string();
        assert!(message.contains("totals.length = NaN"), "{message}");
        let mut broken = outcome;
        broken.start.joints[2] = f64::INFINITY;
        assert_eq!(
            broken.first_non_finite(),
            Some(NonFinite {
                field: "start.joints",
                value: f64::INFINITY
            })
        );
    }

    #[test]
    fn advice_names_the_running_configurations_unless_the_used_one_runs() {
        // source: common practice (advise only when the followed configuration stops)
        let stop = FirstStop {
            kind: Kind::Unreachable,
            segment: 0,
            s: 0.0,
            joint: None,
        };
        let row = |config: Config, runs: bool| Feasibility {
            config,
            first_stop: (!runs).then_some(stop),
            start_joints: None,
        };
        let [a, b, c, ..] = Config::ALL;
        let table = [row(a, false), row(b, true), row(c, true)];
        assert_eq!(Advice::new(&table, Some(b)), None);
        assert_eq!(
            Advice::new(&table, Some(a)),
            Some(Advice::RunsIn(vec![b, c]))
        );
        assert_eq!(Advice::new(&table, None), Some(Advice::RunsIn(vec![b, c])));
        let none_runs = [row(a, false), row(b, false)];
        assert_eq!(
            Advice::new(&none_runs, Some(a)),
            Some(Advice::NoConfigurationRuns)
        );
    }
}
