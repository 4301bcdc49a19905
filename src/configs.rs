//! Which arm configurations run the whole path: for arms with a closed-form solver, the path
//! is walked once per configuration (a quick walk without the singularity measure) and the
//! first error that would stop it is recorded. Values are SI; the report converts them.

use crate::assess::Kind;
use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::IkOptions;
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::{Joints, Robot, SingularityModel};
use crate::solve::{
    best_in_config, Reach, SampleRecord, SampleSink, StartChoice, StartMethod, Walker,
};

/// The first error that would stop a configuration's walk.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirstStop {
    /// [`Kind::Unreachable`], [`Kind::JointLimit`] or [`Kind::JointJump`].
    pub kind: Kind,
    /// Segment where it happens.
    pub segment: usize,
    /// Path distance where it happens (m).
    pub s: f64,
    /// Index of the joint concerned ([`Kind::JointLimit`]).
    pub joint: Option<usize>,
}

impl FirstStop {
    fn at(kind: Kind, rec: &SampleRecord, joint: Option<usize>) -> Self {
        FirstStop {
            kind,
            segment: rec.segment,
            s: rec.s,
            joint,
        }
    }
}

/// One configuration's walk over the whole path.
#[derive(Debug, Clone, PartialEq)]
pub struct Feasibility {
    /// The configuration walked.
    pub config: Config,
    /// The first error that would stop the walk in this configuration.
    pub first_stop: Option<FirstStop>,
    /// Joints at the first waypoint in this configuration (rad / m), if it reaches it.
    pub start_joints: Option<Joints>,
}

impl Feasibility {
    /// The whole path runs in this configuration without unreachable, joint-limit or jump
    /// errors: nothing stopped its walk.
    pub fn runs(&self) -> bool {
        self.first_stop.is_none()
    }
}

/// The configurations of `table` that run the whole path, in table order.
pub fn running(table: &[Feasibility]) -> Vec<Config> {
    table
        .iter()
        .filter(|r| r.runs())
        .map(|r| r.config)
        .collect()
}

/// Records the first stopping error of a walk.
struct StopWatch {
    first: Option<FirstStop>,
}

impl SampleSink for StopWatch {
    fn done(&self) -> bool {
        self.first.is_some()
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        if self.first.is_some() {
            return;
        }
        if rec.reach == Reach::Unreachable {
            self.first = Some(FirstStop::at(Kind::Unreachable, rec, None));
        } else if rec.jump.is_some() {
            self.first = Some(FirstStop::at(Kind::JointJump, rec, None));
        } else if let Some(k) = robot
            .joints()
            .iter()
            .zip(rec.joints.iter())
            .position(|(j, q)| !j.contains(*q))
        {
            self.first = Some(FirstStop::at(Kind::JointLimit, rec, Some(k)));
        }
    }
}

/// Walk the path in each of the eight configurations ([`Config::ALL`] order).
pub fn feasibility(
    robot: &Robot,
    job: &Job,
    plan: &Plan,
    solver: &OrthoParallel,
    options: IkOptions,
) -> Vec<Feasibility> {
    let model = SingularityModel::new(robot);
    let target = plan.first_base();
    Config::ALL
        .iter()
        .map(|&config| {
            let Some(start) = best_in_config(robot, &model, solver, &target, config) else {
                return Feasibility {
                    config,
                    first_stop: Some(FirstStop {
                        kind: Kind::Unreachable,
                        segment: 0,
                        s: 0.0,
                        joint: None,
                    }),
                    start_joints: None,
                };
            };
            let choice = StartChoice {
                method: StartMethod::Configuration,
                joints: start,
                alternatives: 0,
                config: Some(config),
            };
            let mut walker = Walker::new(robot, job, plan, options)
                .with_closed_form(solver, config)
                .light();
            let mut stop = StopWatch { first: None };
            walker.walk(&choice, &mut stop);
            Feasibility {
                config,
                first_stop: stop.first,
                start_joints: Some(start),
            }
        })
        .collect()
}
