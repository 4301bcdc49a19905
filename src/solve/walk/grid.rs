//! Where the main walk is cut into chunks ([`chunk_grid`]) and the quick pass that guesses
//! the walk's state at each cut ([`guesses`]).

use super::super::follow::{ClosedBranch, Follower};
use super::super::{Reach, StartChoice};
use super::Walker;
use crate::ik::analytic::{Config, OrthoParallel};
use crate::job::Motion;
use crate::plan::Plan;
use crate::robot::Joints;
use nalgebra::Isometry3;

/// Samples per chunk of the main walk. A chunk costs a few milliseconds to walk, so handing
/// it between threads is cheap beside it, and two chunks per thread in flight keep the memory
/// of the samples held at about a megabyte per thread.
pub const CHUNK_SAMPLES: usize = 2048;

/// Samples walked before a chunk's first sample and thrown away: the first finds the joints
/// from the guess, the second has a previous sample, so that after it the state carried into
/// the chunk (joint speeds included) is complete.
pub(super) const PRIME: usize = 2;

/// A sample on the path: sample `step` of segment `seg` (1 up to the segment's steps; the
/// first sample of the path, waypoint 0, comes before every segment).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Pos {
    /// Segment index.
    pub seg: usize,
    /// Sample of the segment, from 1.
    pub step: usize,
}

impl Pos {
    /// The first sample after waypoint 0.
    pub const FIRST: Pos = Pos { seg: 0, step: 1 };
}

/// Where a chunk of the main walk begins.
#[derive(Debug, Clone, Copy)]
pub struct Boundary {
    /// The chunk's first sample, at least three samples into its segment (four in a joint
    /// move).
    pub pos: Pos,
    /// Path distance at the start of the sample's segment (m), summed as the walk sums it.
    pub s0: f64,
}

/// The chunk boundaries of `plan`: the first sample where the samples since the last boundary
/// (joint moves counted by the plan's estimate) reach `chunk`, then every `chunk` samples. A
/// segment too short to hold the priming samples holds no boundary.
pub fn chunk_grid(plan: &Plan, chunk: usize) -> Vec<Boundary> {
    let chunk = chunk.max(1);
    let mut grid = Vec::new();
    // Samples since the last boundary, the boundary's own included: the path's first.
    let mut since = 1usize;
    let mut s0 = 0.0;
    for k in 0..plan.segment_count() {
        let Some(seg) = plan.segment(k) else {
            continue;
        };
        // A joint move's first priming sample must come after its first (which fixes the
        // move): one sample later than on a straight line. Its plan steps are a lower bound
        // of the samples the walk gives it, so every boundary is reached (unless its end is
        // out of reach: then the walk passes the boundaries after its one sample).
        let earliest = match seg.motion {
            Motion::Linear => PRIME + 1,
            Motion::Joint => PRIME + 2,
        };
        let mut next = (chunk + 1).saturating_sub(since).max(earliest);
        let mut last = None;
        while next <= seg.steps {
            grid.push(Boundary {
                pos: Pos { seg: k, step: next },
                s0,
            });
            last = Some(next);
            next = next.saturating_add(chunk);
        }
        since = match last {
            Some(b) => seg.steps - b + 1,
            None => since.saturating_add(seg.steps),
        };
        s0 += seg.length;
    }
    grid
}

/// A guessed state at a chunk's start: joints one sample before its priming samples (before
/// the move, for a chunk starting inside a joint move), and the configuration followed there.
#[derive(Debug, Clone, Copy)]
pub(super) struct Guess {
    pub(super) q: Joints,
    pub(super) config: Config,
}

/// One closed-form step of the guess pass: `q` moves to the solution of `target` if it is
/// reached.
fn guess_step(f: &mut ClosedBranch, target: &Isometry3<f64>, q: &mut Joints) -> bool {
    let mut probe = (0.0, 0.0);
    let solved = f.sample(target, q, false, &mut probe);
    if solved.reach == Reach::Reached {
        *q = solved.q;
    }
    solved.reach == Reach::Reached
}

/// The guessed state at each boundary of `w`'s grid, `None` where the guess pass found the
/// pose out of reach: one solve on `solver`'s branches per boundary and per segment end,
/// each from the previous one's joints, from `start` in `config`, so windings follow the path
/// as long as no joint turns half a turn between two of them (where one does, the chunk is
/// walked again).
pub(super) fn guesses(
    w: &Walker,
    solver: &OrthoParallel,
    start: &StartChoice,
    config: Config,
) -> Vec<Option<Guess>> {
    let mut f = ClosedBranch::new(w.robot, solver, config, w.options);
    f.begin(start);
    let mut q = start.joints;
    let mut out = Vec::with_capacity(w.grid.len());
    for k in 0..w.plan.segment_count() {
        if out.len() == w.grid.len() {
            break;
        }
        let Some(seg) = w.plan.segment(k) else {
            continue;
        };
        match seg.motion {
            Motion::Linear if seg.steps > 0 => {
                while let Some(b) = w.grid.get(out.len()).filter(|b| b.pos.seg == k) {
                    let i = b.pos.step - PRIME - 1;
                    let target = seg.run_pose_at(i as f64 / seg.steps as f64);
                    let reached = guess_step(&mut f, &target, &mut q);
                    out.push(reached.then(|| Guess {
                        q,
                        config: f.branch().unwrap_or(config),
                    }));
                }
                guess_step(&mut f, &seg.run_pose_at(1.0), &mut q);
            }
            Motion::Linear => {}
            Motion::Joint => {
                // A boundary inside a joint move starts from the joints before it: the chunk
                // begins the move itself.
                while w.grid.get(out.len()).is_some_and(|b| b.pos.seg == k) {
                    out.push(Some(Guess {
                        q,
                        config: f.branch().unwrap_or(config),
                    }));
                }
                let end = f.move_end(&seg.end, &q);
                if end.reach == Reach::Reached {
                    q = end.q;
                }
            }
        }
    }
    out.resize(w.grid.len(), None);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boundaries_lie_a_chunk_apart_with_room_to_prime() {
        // source: common practice (the grid's own definition, counted sample by sample).
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let job = crate::job::load(
            &dir.join("paths/rib_weld.yaml"),
            &crate::job::Overrides::default(),
        )
        .unwrap();
        let plan = crate::plan::plan(&job, u64::MAX).unwrap();
        for chunk in [1, 5, 64, 300] {
            let grid = chunk_grid(&plan, chunk);
            assert!(!grid.is_empty(), "chunk {chunk}");
            // Walk every sample position in order, counting samples since the last boundary.
            let (mut since, mut s0, mut b, mut in_moves) = (1usize, 0.0f64, 0, 0);
            for k in 0..plan.segment_count() {
                let seg = plan.segment(k).unwrap();
                for i in 1..=seg.steps {
                    let here = Pos { seg: k, step: i };
                    if grid.get(b).map(|g| g.pos) == Some(here) {
                        // Room for the priming samples (after a joint move's first sample).
                        let room = match seg.motion {
                            Motion::Linear => PRIME,
                            Motion::Joint => PRIME + 1,
                        };
                        assert!(i > room, "chunk {chunk}: step {i}");
                        in_moves += usize::from(seg.motion == Motion::Joint);
                        assert!(since >= chunk, "chunk {chunk}: {since} samples");
                        assert_eq!(grid[b].s0.to_bits(), s0.to_bits());
                        since = 0;
                        b += 1;
                    }
                    since += 1;
                }
                s0 += seg.length;
            }
            assert_eq!(b, grid.len(), "chunk {chunk}: every boundary met in order");
            // The demo's approach is a joint move long enough to hold boundaries.
            if chunk <= 5 {
                assert!(
                    in_moves > 0,
                    "chunk {chunk}: boundaries inside the joint move"
                );
            }
        }
    }
}
