//! Which arm configurations run the whole path: for arms with a closed-form solver, the path
//! is walked once per configuration (a quick walk without the singularity measure) and the
//! first error that would stop it is recorded.

use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::IkOptions;
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::{Robot, SingularityModel};
use crate::solve::{best_in_config, Reach, SampleRecord, SampleSink, StartChoice, Walker};
use serde::Serialize;

/// What stops a configuration first.
#[derive(Debug, Clone, Serialize)]
pub struct FirstFailure {
    /// `unreachable`, `joint_limit` or `joint_jump`.
    pub kind: &'static str,
    pub segment: usize,
    pub from: String,
    pub to: String,
    pub s_mm: f64,
    /// The joint concerned (`joint_limit`).
    pub joint: Option<String>,
}

/// One row of the feasibility table.
#[derive(Debug, Clone, Serialize)]
pub struct ConfigRow {
    /// `front/up/noflip` etc.
    pub config: String,
    /// The whole path runs in this configuration without unreachable, joint-limit or jump
    /// errors.
    pub runs: bool,
    pub first_failure: Option<FirstFailure>,
    /// Joints at the first waypoint in this configuration (deg / mm), if it reaches it.
    pub start_joints: Option<Vec<f64>>,
    #[serde(skip)]
    pub parsed: Option<Config>,
}

/// Records the first stopping error of a walk.
struct FirstStop {
    first: Option<(&'static str, usize, f64, Option<usize>)>,
}

impl SampleSink for FirstStop {
    fn done(&self) -> bool {
        self.first.is_some()
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        if self.first.is_some() {
            return;
        }
        if rec.reach == Reach::Unreachable {
            self.first = Some(("unreachable", rec.segment, rec.s, None));
        } else if rec.jump.is_some() {
            self.first = Some(("joint_jump", rec.segment, rec.s, None));
        } else if let Some(k) = robot
            .joints()
            .iter()
            .zip(rec.joints.iter())
            .position(|(j, q)| !j.contains(*q))
        {
            self.first = Some(("joint_limit", rec.segment, rec.s, Some(k)));
        }
    }
}

fn name(job: &Job, i: usize) -> String {
    job.waypoint_name(i)
}

/// Walk the path in each of the eight configurations.
pub fn feasibility(
    robot: &Robot,
    job: &Job,
    plan: &Plan,
    solver: &OrthoParallel,
    options: IkOptions,
) -> Vec<ConfigRow> {
    let model = SingularityModel::new(robot);
    let target = plan.first_base();
    Config::ALL
        .iter()
        .map(|&config| {
            let Some(start) = best_in_config(robot, &model, solver, &target, config) else {
                return ConfigRow {
                    config: config.to_string(),
                    runs: false,
                    first_failure: Some(FirstFailure {
                        kind: "unreachable",
                        segment: 0,
                        from: name(job, 0),
                        to: name(job, 1),
                        s_mm: 0.0,
                        joint: None,
                    }),
                    start_joints: None,
                    parsed: Some(config),
                };
            };
            let choice = StartChoice {
                method: "configuration",
                joints: start.to_vec(),
                alternatives: 0,
                config: Some(config),
            };
            let walker = Walker::new(robot, job, plan, options)
                .with_closed_form(solver)
                .light();
            let mut stop = FirstStop { first: None };
            walker.walk(&choice, &mut stop);
            ConfigRow {
                config: config.to_string(),
                runs: stop.first.is_none(),
                first_failure: stop.first.map(|(kind, segment, s, joint)| FirstFailure {
                    kind,
                    segment,
                    from: name(job, segment),
                    to: name(job, segment + 1),
                    s_mm: s * 1e3,
                    joint: joint.map(|k| robot.joints()[k].name.clone()),
                }),
                start_joints: Some(
                    robot
                        .joints()
                        .iter()
                        .zip(start)
                        .map(|(j, v)| crate::report::joint_display(j.kind, v))
                        .collect(),
                ),
                parsed: Some(config),
            }
        })
        .collect()
}
