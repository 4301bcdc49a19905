//! The time at which the walk reaches each waypoint, for the per-segment durations of the
//! report.

use super::{SampleRecord, SampleSink};
use crate::robot::Robot;

/// A sink that notes when each of the first `cap` waypoints is reached (s from the start).
/// A waypoint the walk stands on without a sample of its own (a repeated waypoint) gets the
/// time of the one before it; memory is bounded by `cap`, whatever the path's length.
#[derive(Debug, Clone, Default)]
pub struct WaypointClock {
    cap: usize,
    times: Vec<f64>,
}

impl WaypointClock {
    /// A clock for waypoints `0..cap`.
    pub fn new(cap: usize) -> Self {
        WaypointClock {
            cap,
            times: Vec::with_capacity(cap.min(1 << 16)),
        }
    }

    /// Duration (s) of each segment whose end waypoint was reached, in path order.
    pub fn segment_durations(&self) -> Vec<f64> {
        self.times.windows(2).map(|w| w[1] - w[0]).collect()
    }
}

impl SampleSink for WaypointClock {
    fn restart(&mut self) {
        self.times.clear();
    }
    fn sample(&mut self, _robot: &Robot, rec: &SampleRecord) {
        let Some(w) = rec.waypoint else { return };
        if w >= self.cap {
            return;
        }
        let last = self.times.last().copied().unwrap_or(0.0);
        while self.times.len() < w {
            self.times.push(last);
        }
        if self.times.len() == w {
            self.times.push(rec.t);
        }
    }
}
