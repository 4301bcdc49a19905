//! The check, end to end: job + robot → plan → walk (IK per sample) → assessment → report.

use crate::assess::{Assessor, Thresholds};
use crate::error::{Error, Result};
use crate::ik::IkOptions;
use crate::job::Job;
use crate::plan::{plan, DEFAULT_MAX_SAMPLES};
use crate::report::{Report, ReportInputs};
use crate::robot::{Robot, SingularityModel};
use crate::solve::{choose_start, SampleRecord, SampleSink, Walker};

/// Settings of a check beyond the job.
#[derive(Debug, Clone, Copy)]
pub struct CheckOptions {
    pub ik: IkOptions,
    pub thresholds: Thresholds,
    /// Refuse plans with more samples than this.
    pub max_samples: u64,
}

impl Default for CheckOptions {
    fn default() -> Self {
        CheckOptions {
            ik: IkOptions::default(),
            thresholds: Thresholds::default(),
            max_samples: DEFAULT_MAX_SAMPLES,
        }
    }
}

/// Passes each sample to several sinks.
struct Fanout<'s, 'a> {
    sinks: &'s mut [&'a mut dyn SampleSink],
}

impl SampleSink for Fanout<'_, '_> {
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
    let start = choose_start(
        &robot,
        &model,
        &plan.waypoints_base[0],
        start_si.as_deref(),
        options.ik,
    );
    let walker = Walker::new(&robot, job, &plan, options.ik);
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
    let (findings, extremes) = assessor.finish(&robot);
    Ok(Report::build(ReportInputs {
        robot: &robot,
        job,
        plan: &plan,
        start: &start,
        totals,
        findings: &findings,
        extremes,
        singularity_threshold: options.thresholds.singularity,
    }))
}
