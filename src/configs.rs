//! Which arm configurations run the whole path: for arms with a closed-form solver, the path
//! is walked in every configuration (quick walks without the singularity measure, all eight
//! in lockstep in one pass: [`Walker::walk_lanes`]) and the first error that would stop each
//! is recorded. Values are SI; the report converts them.

use crate::assess::Kind;
use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::IkOptions;
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::{Joints, Robot, SingularityModel};
use crate::solve::{best_in_config, LaneStop, StopKind, Walker};

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
    fn from_lane(stop: LaneStop) -> Self {
        let (kind, joint) = match stop.kind {
            StopKind::Unreachable => (Kind::Unreachable, None),
            StopKind::Jump => (Kind::JointJump, None),
            StopKind::Limit(k) => (Kind::JointLimit, Some(k)),
        };
        FirstStop {
            kind,
            segment: stop.segment,
            s: stop.s,
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
    /// The row of a configuration that does not reach waypoint 0: unreachable there.
    fn not_at_start(config: Config) -> Self {
        Feasibility {
            config,
            first_stop: Some(FirstStop {
                kind: Kind::Unreachable,
                segment: 0,
                s: 0.0,
                joint: None,
            }),
            start_joints: None,
        }
    }

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

/// Walk the path in each of the eight configurations ([`Config::ALL`] order), each from its
/// best start joints at waypoint 0 ([`best_in_config`]); a configuration that does not reach
/// waypoint 0 stops there, unreachable. `threads` (at least 1) splits the configurations
/// into that many groups walked at once on rayon's threads; each configuration's walk is its
/// own, so the table does not depend on the split.
pub fn feasibility(
    robot: &Robot,
    job: &Job,
    plan: &Plan,
    solver: &OrthoParallel,
    options: IkOptions,
    threads: usize,
) -> Vec<Feasibility> {
    let model = SingularityModel::new(robot);
    let target = plan.first_base();
    let starts: Vec<(Config, Option<Joints>)> = Config::ALL
        .iter()
        .map(|&c| (c, best_in_config(robot, &model, solver, &target, c)))
        .collect();
    let walked: Vec<(Config, Joints)> = starts
        .iter()
        .filter_map(|&(c, q)| q.map(|q| (c, q)))
        .collect();
    let groups = threads.clamp(1, walked.len().max(1));
    let walk_group = |g: usize| {
        let lanes: Vec<(Config, Joints)> = walked.iter().skip(g).step_by(groups).copied().collect();
        // The walker's own configuration is not followed here: each lane follows its own.
        let mut walker = Walker::new(robot, job, plan, options)
            .with_closed_form(solver, Config::ALL[0])
            .light();
        walker.walk_lanes(solver, &lanes)
    };
    let by_group: Vec<Vec<Option<LaneStop>>> = if groups == 1 {
        vec![walk_group(0)]
    } else {
        use rayon::prelude::*;
        (0..groups).into_par_iter().map(walk_group).collect()
    };
    // Back to the order of `walked`: lane i went to group i % groups, at position i / groups.
    let mut stops = (0..walked.len()).map(|i| by_group[i % groups][i / groups]);
    starts
        .into_iter()
        .map(|(config, start)| match start {
            None => Feasibility::not_at_start(config),
            Some(q) => Feasibility {
                config,
                first_stop: stops.next().flatten().map(FirstStop::from_lane),
                start_joints: Some(q),
            },
        })
        .collect()
}

#[cfg(test)]
mod tests;
