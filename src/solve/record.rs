//! What the walk hands to its sinks: one [`SampleRecord`] per sample, and the totals.

use crate::ik::analytic::Config;
use crate::job::Motion;
use crate::robot::{Joints, Robot, SingularityClass};
use nalgebra::Isometry3;

/// How the joints of a sample were obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reach {
    /// IK converged within tolerance.
    Reached,
    /// No solution within tolerance and limits: the joints are the last reached ones.
    Unreachable,
}

/// A discontinuity in the joint path between the previous sample and this one.
#[derive(Debug, Clone, Copy)]
pub struct Jump {
    /// Joint change across the jump (rad or m), per joint.
    pub delta: Joints,
    /// With the closed-form solver: the arm configuration ended here and the walk went on in
    /// another one, (from, to).
    pub config_change: Option<(Config, Config)>,
}

/// One solved sample, as the sinks see it. All SI.
#[derive(Debug, Clone, Copy)]
pub struct SampleRecord {
    /// Position of the sample in the walk, from 0.
    pub index: usize,
    /// Segment index; the first sample belongs to segment 0.
    pub segment: usize,
    /// `Some(i)` when the sample is waypoint `i`.
    pub waypoint: Option<usize>,
    /// Motion of the segment the sample belongs to.
    pub motion: Motion,
    /// Path distance of the TCP from the start (m).
    pub s: f64,
    /// Time from the start (s).
    pub t: f64,
    /// Time since the previous sample (s); 0 for the first.
    pub dt: f64,
    /// Commanded TCP pose (base frame).
    pub target: Isometry3<f64>,
    /// Whether the joints solve the commanded pose.
    pub reach: Reach,
    /// Remaining IK position error (m).
    pub position_error: f64,
    /// Remaining IK orientation error (rad).
    pub orientation_error: f64,
    /// Joints (rad / m), `dof` of them.
    pub joints: Joints,
    /// Joint speeds since the previous sample (rad/s or m/s; 0 for the first and across a
    /// jump or an unreachable sample, where a speed has no meaning), `dof` of them.
    pub joint_speed: Joints,
    /// Joint accelerations at the sample (rad/s² or m/s²), from the speeds of the intervals
    /// on either side of it; 0 where a speed is unknown (see `joint_speed`), `dof` of them.
    pub joint_acceleration: Joints,
    /// Commanded TCP speed at the sample (m/s) on straight-line segments: the speed profile
    /// or, in a blend window, the blend's speed; 0 in joint moves and at the first sample.
    pub tcp_speed: f64,
    /// Tool angular speed since the previous sample (rad/s).
    pub tool_angular_speed: f64,
    /// Singularity measure (see [`crate::robot::SingularityModel::measure`]), exact wherever
    /// it matters: below the warning threshold and wherever it could be the path's smallest
    /// (at or below a measure another sample of the path has: the smallest so far in the
    /// chunk, or the walk's lagging floor). Elsewhere it may be a proven lower bound of the
    /// measure that is above both
    /// ([`crate::robot::SingularityScreen`]), so a plot of it is exact where it is low and
    /// never above the truth. 1 in the light walks of the configuration table.
    pub singularity: f64,
    /// Nearest singularity class, for arms where classes are defined.
    pub singularity_class: Option<SingularityClass>,
    /// A discontinuity between the previous sample and this one.
    pub jump: Option<Jump>,
}

/// Receives every solved sample in path order.
pub trait SampleSink {
    /// Called once before the first sample with the plan's estimate of the sample count
    /// (exact for linear segments, a lower bound for joint segments).
    fn begin(&mut self, _robot: &Robot, _estimated_samples: u64) {}
    /// One solved sample.
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord);
    /// True when the sink needs no more samples: the walk may stop early (used by the
    /// configuration table, which only wants the first stopping error).
    fn done(&self) -> bool {
        false
    }
    /// Forget every sample taken so far, as if the sink were new: the walk is about to be
    /// run again from its start ([`SampleSink::begin`] follows). The check walks the path
    /// while the configuration table is still being built, in the configuration it expects
    /// to choose, and starts over when the table chooses another; a sink that cannot undo
    /// what it has passed on says so by [`SampleSink::restartable`].
    fn restart(&mut self);
    /// Whether [`SampleSink::restart`] can undo everything the sink has done with the
    /// samples so far (false, e.g., for rows already written to a stream that cannot be
    /// rewound). When a sink of the check is not restartable, the check walks the path
    /// only once its start is final.
    fn restartable(&self) -> bool {
        true
    }
}

/// Totals of a walk.
#[derive(Debug, Clone, Copy, Default)]
pub struct WalkTotals {
    /// Samples handed to the sink.
    pub samples: usize,
    /// Path distance of the last sample (m).
    pub length: f64,
    /// Time of the last sample (s).
    pub duration: f64,
    /// Targets handed to a solver: linear samples and joint-move ends inside the reach
    /// sphere, and the jump test's Cartesian midpoints. A bound on the walk's work that does
    /// not depend on the machine's speed.
    pub ik_solves: usize,
    /// Full searches after a failed solve: random-restart searches, or the closed form's
    /// numerical probes of how far an unreachable pose is.
    pub full_searches: usize,
    /// Random restarts those searches ran (at most [`super::RESTARTS`] each).
    pub restarts: usize,
    /// Samples settled by the reach sphere alone ([`crate::robot::Robot::reach_bound`]),
    /// without any solve.
    pub beyond_reach: usize,
    /// Main walks thrown away by the check: walks begun, before the configuration table was
    /// complete, in the configuration expected from the first pose alone, where the table
    /// then chose another start (0 or 1; always 0 for a single walk).
    pub discarded_walks: usize,
    /// Chunks of a main walk on several threads walked a second time, on the calling thread,
    /// because the state guessed at their start was not where the previous chunk ended
    /// ([`crate::solve::walk_in_chunks`]); 0 on one thread.
    pub rewalked_chunks: usize,
}
