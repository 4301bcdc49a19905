//! Which arm configurations run the whole path: for arms with a closed-form solver, the path
//! is walked once per configuration (a quick walk without the singularity measure) and the
//! first error that would stop it is recorded.

use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::IkOptions;
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::{Robot, SingularityModel};
use crate::solve::{
    best_in_config, Reach, SampleRecord, SampleSink, StartChoice, StartMethod, Walker,
};
use serde::Serialize;

/// What stops a configuration first.
#[derive(Debug, Clone, Serialize)]
pub struct FirstFailure {
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

/// One row of the feasibility table.
#[derive(Debug, Clone, Serialize)]
pub struct ConfigRow {
    /// `front/up/noflip` etc.
    pub config: String,
    /// The whole path runs in this configuration without unreachable, joint-limit or jump
    /// errors.
    pub runs: bool,
    /// The first error that would stop the walk in this configuration.
    pub first_failure: Option<FirstFailure>,
    /// Joints at the first waypoint in this configuration (deg / mm), if it reaches it.
    pub start_joints: Option<Vec<f64>>,
    /// The configuration as a value.
    #[serde(skip)]
    pub parsed: Option<Config>,
}

/// The first stopping error of a walk.
struct Stop {
    /// `unreachable`, `joint_limit` or `joint_jump`.
    kind: &'static str,
    segment: usize,
    /// Path distance (m).
    s: f64,
    /// Index of the joint concerned (`joint_limit`).
    joint: Option<usize>,
}

impl Stop {
    fn at(kind: &'static str, rec: &SampleRecord, joint: Option<usize>) -> Self {
        Stop {
            kind,
            segment: rec.segment,
            s: rec.s,
            joint,
        }
    }
}

/// Records the first stopping error of a walk.
struct FirstStop {
    first: Option<Stop>,
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
            self.first = Some(Stop::at("unreachable", rec, None));
        } else if rec.jump.is_some() {
            self.first = Some(Stop::at("joint_jump", rec, None));
        } else if let Some(k) = robot
            .joints()
            .iter()
            .zip(rec.joints.iter())
            .position(|(j, q)| !j.contains(*q))
        {
            self.first = Some(Stop::at("joint_limit", rec, Some(k)));
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
                method: StartMethod::Configuration,
                joints: start.to_vec(),
                alternatives: 0,
                config: Some(config),
            };
            let mut walker = Walker::new(robot, job, plan, options)
                .with_closed_form(solver, config)
                .light();
            let mut stop = FirstStop { first: None };
            walker.walk(&choice, &mut stop);
            ConfigRow {
                config: config.to_string(),
                runs: stop.first.is_none(),
                first_failure: stop.first.map(|stop| FirstFailure {
                    kind: stop.kind,
                    segment: stop.segment,
                    from: name(job, stop.segment),
                    to: name(job, stop.segment + 1),
                    s_mm: stop.s * 1e3,
                    joint: stop.joint.map(|k| robot.joints()[k].name.clone()),
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
