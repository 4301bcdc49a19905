//! The solver walks the plan sample by sample: inverse kinematics warm-started from the
//! previous sample, derived quantities (speeds, singularity measure), jump detection, and a
//! hand-off of each sample to the sinks (assessment, joint CSV, plots). It keeps only the
//! previous sample, so memory does not grow with the path; the loop allocates nothing.
//!
//! Continuity. Along the path the arm is followed by a solver that ignores the position
//! limits: the joint path a controller would produce by running the motion continuously. Where
//! that path leaves a joint's range the assessment reports `joint_limit`; the tracker does not
//! stall at the limit. When the warm-started solve fails, a search from other seeds (inside the
//! limits) tells a pose that is reachable only in another arm configuration (the path then
//! continues there and the change is reported as a jump) from one that is not reachable at
//! all (`unreachable`, and the walk continues from the last reached joints).
//!
//! - `walk`: the [`Walker`] loop over segments, joint moves, speeds, sinks; `walk::lanes`
//!   the configuration table's walks in lockstep ([`Walker::walk_lanes`]).
//! - `jump`: the jump test and the second-order midpoint bound that settles most steps.
//! - `follow`: how the arm is followed from sample to sample (closed-form branch or numerical
//!   continuity), one `Follower` per walker.
//! - `start`: the joints at the first pose, for both solvers, and the [`margin`] score.
//! - `record`: what a sink sees ([`SampleRecord`]) and the walk's totals.

mod clock;
mod follow;
mod jump;
mod record;
mod start;
mod walk;

pub use clock::WaypointClock;
pub use record::{Jump, Reach, SampleRecord, SampleSink, WalkTotals};
pub use start::{
    best_in_config, choose_start, limit_ratio, margin, pose_margin, StartChoice, StartMethod,
    StartSolver, WELL_CONDITIONED_MEASURE,
};
pub use walk::{
    chunk_grid, walk_in_chunks, Boundary, LaneStop, Pos, StopKind, Walker, CHUNK_SAMPLES,
};

use crate::robot::{Joints, Robot};
use crate::rotation;
use nalgebra::Isometry3;

/// Random seeds tried for the first pose and after a failed warm start. 32 finds every
/// branch of a 6-axis arm with high probability (8 branches); more only costs time on
/// targets that are truly out of reach.
pub const RESTARTS: usize = 32;

/// Inside an unreachable stretch, the full search (random restarts; with the closed form, the
/// numerical probe that measures how far the pose is) runs on the stretch's first sample,
/// every this many samples after it and on a segment's last sample; the samples between get
/// one local solve (closed form: the exact all-branch test) and carry the last measured
/// distance. A restart search costs about 200 reachable samples, so 16 keeps a long
/// unreachable stretch within about 13 times the cost of a reachable one.
pub const RECOVER_EVERY: usize = 16;

/// Position (m) and orientation (rad) distance of the TCP at joints `q` from `base_T_target`.
pub fn residual(robot: &Robot, q: &Joints, base_T_target: &Isometry3<f64>) -> (f64, f64) {
    let base_T_tcp = robot.chain().fk(q);
    (
        (base_T_tcp.translation.vector - base_T_target.translation.vector).norm(),
        rotation::angle_between(&base_T_tcp.rotation, &base_T_target.rotation),
    )
}
