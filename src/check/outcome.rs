//! What a check found, in SI and typed values: the input to the report (display units, built
//! by [`crate::report::Report::from_outcome`]) and to `fix` and `place`, which decide from it.

use crate::assess::{Extremes, Finding, Kind, Severity, Thresholds};
use crate::ik::analytic::Config;
use crate::job::Job;
use crate::plan::Plan;
use crate::report::Verdict;
use crate::robot::Robot;
use crate::solve::{StartChoice, WalkTotals};

pub use crate::configs::{Feasibility, FirstStop};

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
        if used.is_some_and(|u| table.iter().any(|r| r.runs && r.config == u)) {
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
    /// The thresholds the findings were raised with.
    pub thresholds: Thresholds,
    /// Configuration advice for the stopping errors (closed-form arms whose configuration
    /// does not run the path).
    pub advice: Option<Advice>,
    /// What the collision and clearance check covered; `None` when the job has no cell and
    /// no tool geometry (then collisions are not checked).
    pub cell: Option<crate::cell::CellSummary>,
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

    /// The configuration the check followed (closed-form arms).
    pub fn config(&self) -> Option<Config> {
        self.start.config
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
        let used = outcome.config().unwrap();
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
    fn advice_names_the_running_configurations_unless_the_used_one_runs() {
        // source: common practice (advise only when the followed configuration stops)
        let row = |config: Config, runs: bool| Feasibility {
            config,
            runs,
            first_stop: None,
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
