//! The never-meet filter of the model's robot body pairs: pairs that cannot come close in
//! any pose of the arm are not tested along the path. It measures drawn poses with the same
//! probe the path check uses, so it lives beside the model rather than inside it.

use super::model::{CellModel, NEVER_MEET_MARGIN_M, NEVER_MEET_SAMPLES, NEVER_MEET_SEED};
use super::probe::CellProbe;
use crate::robot::Robot;

impl CellModel {
    /// Drops the robot body pairs (indices `candidates` into `pairs`) that stay more than
    /// [`NEVER_MEET_MARGIN_M`] apart, or that overlap, in every drawn configuration (the
    /// latter is geometry drawn overlapping at a joint, which no path can change).
    pub(super) fn filter_never_meet(&mut self, candidates: &[usize], robot: &Robot) {
        if candidates.is_empty() {
            return;
        }
        let mut nearest = vec![f64::INFINITY; self.pairs.len()];
        let mut farthest = vec![f64::NEG_INFINITY; self.pairs.len()];
        let mut probe = CellProbe::new(self);
        // Beyond the margin a pair counts as apart whatever its exact distance, and an
        // overlap needs no depth here.
        probe.exact_within = NEVER_MEET_MARGIN_M;
        probe.depth_wanted = false;
        let mut rng = crate::rng::SplitMix64::new(NEVER_MEET_SEED);
        for _ in 0..NEVER_MEET_SAMPLES {
            let q = robot.random_config(&mut rng);
            probe.measure(self, &q, candidates);
            for &p in candidates {
                let d = probe.distance(p);
                nearest[p] = nearest[p].min(d);
                farthest[p] = farthest[p].max(d);
            }
        }
        let mut dropped_far = Vec::new();
        let mut dropped_overlap = Vec::new();
        let mut keep = vec![true; self.pairs.len()];
        for &p in candidates {
            let pair = &self.pairs[p];
            let label = format!("{}–{}", self.bodies[pair.a].name, self.bodies[pair.b].name);
            if nearest[p] > NEVER_MEET_MARGIN_M {
                keep[p] = false;
                dropped_far.push(label);
            } else if farthest[p] <= 0.0 {
                keep[p] = false;
                dropped_overlap.push(label);
            }
        }
        let mut i = 0;
        self.pairs.retain(|_| {
            i += 1;
            keep[i - 1]
        });
        if !dropped_far.is_empty() {
            self.notes.push(format!(
                "robot body pairs that never came within {} mm in {NEVER_MEET_SAMPLES} drawn poses, not tested: {}",
                NEVER_MEET_MARGIN_M * 1e3,
                dropped_far.join(", ")
            ));
        }
        if !dropped_overlap.is_empty() {
            self.notes.push(format!(
                "robot body pairs overlapping in every drawn pose (geometry drawn through a joint), not tested: {}",
                dropped_overlap.join(", ")
            ));
        }
    }
}
