//! The check, end to end: job + robot → plan → walk (IK per sample) → assessment → report.

use crate::assess::{Assessor, Thresholds};
use crate::assess::{Finding, Kind, Severity};
use crate::configs::{feasibility, ConfigRow};
use crate::error::{Error, Result};
use crate::ik::analytic::{Config, Elbow, OrthoParallel, Shoulder, Wrist};
use crate::ik::IkOptions;
use crate::job::ConfigRequest;
use crate::job::Job;
use crate::plan::{plan, DEFAULT_MAX_SAMPLES};
use crate::report::{Report, ReportInputs};
use crate::robot::{Robot, SingularityModel};
use crate::solve::{
    best_in_config, choose_start, configuration_score, SampleRecord, SampleSink, StartChoice,
    Walker,
};

/// Settings of a check beyond the job.
#[derive(Debug, Clone, Copy)]
pub struct CheckOptions {
    pub ik: IkOptions,
    pub thresholds: Thresholds,
    /// Refuse plans with more samples than this.
    pub max_samples: u64,
    /// Use the numerical solver even when the arm has a closed-form one (to compare, or to
    /// follow the motion through an exact wrist singularity by continuity).
    pub numeric_only: bool,
}

impl Default for CheckOptions {
    fn default() -> Self {
        CheckOptions {
            ik: IkOptions::default(),
            thresholds: Thresholds::default(),
            max_samples: DEFAULT_MAX_SAMPLES,
            numeric_only: false,
        }
    }
}

/// Passes each sample to several sinks.
struct Fanout<'s, 'a> {
    sinks: &'s mut [&'a mut dyn SampleSink],
}

impl SampleSink for Fanout<'_, '_> {
    fn done(&self) -> bool {
        // The main walk always runs to the end: every sink sees the whole path.
        false
    }
    fn begin(&mut self, robot: &Robot, estimated_samples: u64) {
        for s in self.sinks.iter_mut() {
            s.begin(robot, estimated_samples);
        }
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        for s in self.sinks.iter_mut() {
            s.sample(robot, rec);
        }
    }
}

/// Run the check. `robot` is the robot of the job without a tool (the job's tool is mounted
/// here); `sinks` receive every sample too (joint CSV, plots, progress).
pub fn check(
    job: &Job,
    robot: &Robot,
    options: &CheckOptions,
    sinks: &mut [&mut dyn SampleSink],
) -> Result<Report> {
    let mut robot = robot.clone();
    robot.set_tool(job.tool.tip_T_tcp);
    let start_si = match &job.start_joints {
        Some(sj) => Some(
            sj.to_si(&robot.prismatic_mask())
                .map_err(|m| Error::input(&job.source, sj.origin.clone(), m))?,
        ),
        None => None,
    };
    if let Some(q) = &start_si {
        for (j, v) in robot.joints().iter().zip(q) {
            if !j.contains(*v) {
                return Err(Error::input(
                    &job.source,
                    "start_joints",
                    format!(
                        "{} = {:.3} is outside its range {:.3} … {:.3} ({}): give joints inside the robot's limits",
                        j.name,
                        crate::report::joint_display(j.kind, *v),
                        crate::report::joint_display(j.kind, j.lower),
                        crate::report::joint_display(j.kind, j.upper),
                        crate::report::joint_unit(j.kind)
                    ),
                ));
            }
        }
    }
    let plan = plan(job, options.max_samples)?;
    let model = SingularityModel::new(&robot);
    let first = plan.first_base();
    let closed = if options.numeric_only {
        Err("the numerical solver was asked for (--ik numeric)".to_string())
    } else {
        OrthoParallel::from_robot(&robot)
    };
    let mut notes: Vec<Finding> = Vec::new();
    let (start, table) = match &closed {
        Ok(solver) => {
            let table = feasibility(&robot, job, &plan, solver, options.ik);
            let start = choose_closed_start(
                &robot,
                &model,
                solver,
                &first,
                start_si.as_deref(),
                &job.config,
                &table,
            );
            (start, Some(table))
        }
        Err(reason) => {
            if job.config != ConfigRequest::default() {
                notes.push(note(format!(
                    "config: ignored, the arm has no closed-form solver ({reason}); the first pose's configuration comes from start_joints or the search"
                )));
            }
            (
                choose_start(&robot, &model, &first, start_si.as_deref(), options.ik),
                None,
            )
        }
    };
    let mut walker = Walker::new(&robot, job, &plan, options.ik)
        .with_singularity_threshold(options.thresholds.singularity);
    if let (Ok(solver), Some(_)) = (&closed, start.config) {
        walker = walker.with_closed_form(solver);
    }
    let mut assessor = Assessor::new(job, &plan, options.thresholds);
    let totals = {
        let mut all: Vec<&mut dyn SampleSink> = Vec::with_capacity(sinks.len() + 1);
        all.push(&mut assessor);
        for s in sinks.iter_mut() {
            all.push(&mut **s);
        }
        let mut fan = Fanout { sinks: &mut all };
        walker.walk(&start, &mut fan)
    };
    let (mut findings, extremes) = assessor.finish(&robot);
    findings.splice(0..0, notes);
    if let Some(table) = &table {
        suggest_configurations(&mut findings, table, start.config);
    }
    let mut report = Report::build(ReportInputs {
        robot: &robot,
        job,
        plan: &plan,
        start: &start,
        totals,
        findings: &findings,
        extremes,
        singularity_threshold: options.thresholds.singularity,
    });
    report.path.start.config = start.config.map(|c| c.to_string());
    report.configurations = table;
    if let Some(field) = report.first_non_finite() {
        return Err(Error::robot(
            robot.source(),
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

/// An `input` note not tied to a segment.
fn note(message: String) -> Finding {
    Finding::input(None, None, None, message)
}

/// Does `c` satisfy the path file's `config:` request?
fn matches(request: &ConfigRequest, c: Config) -> bool {
    request
        .shoulder_front
        .is_none_or(|f| f == (c.shoulder == Shoulder::Front))
        && request.elbow_up.is_none_or(|u| u == (c.elbow == Elbow::Up))
        && request
            .wrist_flip
            .is_none_or(|f| f == (c.wrist == Wrist::Flip))
}

/// The first pose with the closed-form solver: from `start_joints` (its configuration,
/// windings nearest the given joints); else among the configurations matching the `config:`
/// request, those that run the whole path first, then the best-scoring start
/// ([`configuration_score`]: margin to limits and singularities).
fn choose_closed_start(
    robot: &Robot,
    model: &SingularityModel,
    solver: &OrthoParallel,
    target: &nalgebra::Isometry3<f64>,
    start_joints: Option<&[f64]>,
    request: &ConfigRequest,
    table: &[ConfigRow],
) -> StartChoice {
    if let Some(q) = start_joints {
        let config = solver.config_of(q);
        let sol = config.and_then(|c| solver.solve_near(target, q, c));
        return match (config, sol) {
            (Some(c), Some(sol)) => StartChoice {
                method: "start_joints",
                joints: sol.to_vec(),
                alternatives: 0,
                config: Some(c),
            },
            _ => StartChoice {
                method: "unreachable",
                joints: q.to_vec(),
                alternatives: 0,
                config,
            },
        };
    }
    let mut best: Option<(bool, f64, Config, [f64; 6])> = None;
    let mut alternatives = 0;
    for row in table {
        let Some(c) = row.parsed else { continue };
        if !matches(request, c) {
            continue;
        }
        let Some(q) = best_in_config(robot, model, solver, target, c) else {
            continue;
        };
        alternatives += 1;
        let key = (row.runs, configuration_score(robot, model, &q));
        if best.is_none_or(|b| (key.0, key.1) > (b.0, b.1)) {
            best = Some((key.0, key.1, c, q));
        }
    }
    match best {
        Some((_, _, c, q)) => StartChoice {
            method: "search",
            joints: q.to_vec(),
            alternatives,
            config: Some(c),
        },
        None => StartChoice {
            method: "unreachable",
            joints: robot.mid_range(),
            alternatives: 0,
            config: None,
        },
    }
}

/// Add to every stopping error (unreachable, joint limit, jump) which configurations would
/// run the whole path, or that none does.
fn suggest_configurations(findings: &mut [Finding], table: &[ConfigRow], used: Option<Config>) {
    let runs: Vec<&str> = table
        .iter()
        .filter(|r| r.runs)
        .map(|r| r.config.as_str())
        .collect();
    let used_runs = used.is_some_and(|u| table.iter().any(|r| r.runs && r.parsed == Some(u)));
    if used_runs {
        return;
    }
    let hint = if runs.is_empty() {
        " — no arm configuration runs the whole path: change the path, the tool or the placement"
            .to_string()
    } else {
        format!(
            " — the whole path runs in configuration {}: start there (config: or start_joints)",
            runs.join(", ")
        )
    };
    for f in findings.iter_mut().filter(|f| {
        f.severity() == Severity::Error
            && matches!(
                f.kind,
                Kind::Unreachable | Kind::JointLimit | Kind::JointJump
            )
    }) {
        f.message.push_str(&hint);
    }
}
