//! What a walk keeps from one sample to the next.

use super::super::follow::Solved;
use super::super::WalkTotals;
use crate::robot::{Joints, SingularityScreen};
use crate::solve::SampleRecord;

/// What the walk keeps between samples.
#[derive(Clone)]
pub(super) struct State {
    pub(super) prev: Option<SampleRecord>,
    /// Smallest singularity measure so far.
    pub(super) min_measure: f64,
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
        }
    }

    /// Start the singularity screen afresh, as at a walk's start: the next sample is measured
    /// exactly and the smallest measure so far is forgotten.
    pub(super) fn restart_screen(&mut self) {
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
