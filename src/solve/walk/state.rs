//! What a walk keeps from one sample to the next.

use super::super::follow::Solved;
use super::super::WalkTotals;
use crate::robot::{Joints, SingularityScreen};
use crate::solve::SampleRecord;

/// Chunks by which the screen's floor lags ([`State::floor`]): the walk in chunks knows the
/// smallest measures of the chunks this far back when it sends a chunk to a worker, so it
/// keeps at most this many chunks in flight.
pub(super) const FLOOR_LAG: usize = 8;

/// A joint move under way: what its samples are interpolated from, fixed at its start.
#[derive(Debug, Clone, Copy)]
pub(super) struct JointMove {
    /// Segment index of the move.
    pub(super) seg: usize,
    /// Joints at the start and the end.
    pub(super) q0: Joints,
    pub(super) q1: Joints,
    /// Residuals of the end's solve (position m, orientation rad).
    pub(super) end_errors: (f64, f64),
    /// Samples of the move and its shared profile.
    pub(super) steps: usize,
    pub(super) synced: crate::motion::SyncedMove,
}

/// What the walk keeps between samples.
#[derive(Clone)]
pub(super) struct State {
    pub(super) prev: Option<SampleRecord>,
    /// Smallest singularity measure so far in the chunk (see [`super::Walker::with_grid`]).
    pub(super) min_measure: f64,
    /// A singularity measure that some sample of the walk has, at most that of the path's
    /// first sample and of every chunk at least [`FLOOR_LAG`] chunks back: the smallest
    /// measure of the whole path is at most this, so a sample proven above it (and above the
    /// chunk's own smallest) cannot be the path's smallest. It depends on the path alone, not
    /// on how the walk is split over threads.
    pub(super) floor: f64,
    /// The smallest measure of each of the last [`FLOOR_LAG`] chunks, by chunk index modulo
    /// the lag (folded into `floor` once it lags enough).
    pub(super) recent: [f64; FLOOR_LAG],
    /// `floor` was set for this chunk by the walk in chunks and is not folded at its start.
    pub(super) floor_given: bool,
    /// The joint move under way, between its first and last samples.
    pub(super) joint: Option<JointMove>,
    pub(super) index: usize,
    pub(super) s: f64,
    pub(super) t: f64,
    pub(super) last_good: Joints,
    /// Unreachable samples since the last reached one.
    pub(super) unreachable_run: usize,
    /// Distance (position m, orientation rad) of the last measured unreachable sample.
    pub(super) probe: (f64, f64),
    /// The work counters of [`WalkTotals`] (its other fields stay zero here).
    pub(super) work: WalkTotals,
    /// The previous sample's joint speeds are known (see [`acceleration_between`]).
    pub(super) prev_speed_valid: bool,
    /// The singularity measure's screen (its anchor is this walk's last exact sample).
    pub(super) screen: SingularityScreen,
    /// The next boundary of the walker's grid ([`Walker::with_grid`]) ahead.
    pub(super) grid_next: usize,
}

impl State {
    /// The state of a walk whose last reached joints are `last_good` and that has no
    /// previous sample yet.
    pub(super) fn resumed(last_good: Joints) -> Self {
        State {
            prev: None,
            min_measure: f64::INFINITY,
            index: 0,
            s: 0.0,
            t: 0.0,
            last_good,
            unreachable_run: 0,
            probe: (0.0, 0.0),
            work: WalkTotals::default(),
            prev_speed_valid: false,
            screen: SingularityScreen::new(),
            grid_next: 0,
            floor: f64::INFINITY,
            recent: [f64::INFINITY; FLOOR_LAG],
            floor_given: false,
            joint: None,
        }
    }

    /// Enter chunk `c` (at its first sample): the chunk `c - FLOOR_LAG` now lags enough to
    /// lower the floor, the chunk just ended is remembered, and the singularity screen starts
    /// afresh: the next sample is measured exactly and the chunk's smallest measure is
    /// forgotten.
    pub(super) fn enter_chunk(&mut self, c: usize) {
        if !self.floor_given {
            if c >= FLOOR_LAG {
                self.floor = self.floor.min(self.recent[c % FLOOR_LAG]);
            }
            self.recent[(c - 1) % FLOOR_LAG] = self.min_measure;
        }
        self.screen = SingularityScreen::new();
        self.min_measure = f64::INFINITY;
    }

    /// The totals of the walk so far.
    pub(super) fn totals(&self) -> WalkTotals {
        WalkTotals {
            samples: self.index,
            length: self.s,
            duration: self.t,
            ..self.work
        }
    }

    /// Count one solve handed to the follower.
    pub(super) fn count(&mut self, solved: &Solved) {
        self.work.ik_solves += 1;
        self.work.full_searches += usize::from(solved.full_search);
        self.work.restarts += solved.restarts as usize;
    }
}
