//! The arm poses the page draws, kept while the path is walked: the first and the last
//! reached sample, and up to [`SLIDER_POSES`] evenly spaced reached samples for the pose
//! slider. The findings' worst poses come with the findings themselves (each finding keeps
//! the joints at its worst sample), so nothing here depends on the findings.

use crate::robot::Joints;
use crate::solve::{Reach, SampleRecord};

/// Largest number of poses the slider scrubs through. Each pose is a few joint origins per
/// view on the page (about 0.2 kB for all three views); 200 poses move the arm in steps of
/// half a per cent of the path, finer than a slider's pixel at the page's width.
pub const SLIDER_POSES: usize = 200;

/// One kept sample: where it is and the joints there (rad or m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KeptPose {
    /// Sample index from the path start.
    pub index: usize,
    /// Path distance (m).
    pub s: f64,
    /// Time from the path start (s).
    pub t: f64,
    /// Joint vector at the sample.
    pub joints: Joints,
}

/// Keeps the first, the last and evenly spaced reached samples in fixed memory: the buffer is
/// allocated once and [`PoseKeeper::push`] never allocates. When the buffer is full, every
/// other kept pose is dropped and the spacing doubles, so between half and all of the
/// buffer is in use and the kept poses stay evenly spaced in samples.
#[derive(Debug, Clone)]
pub struct PoseKeeper {
    cap: usize,
    /// Keep every `stride`-th reached sample.
    stride: u64,
    /// Reached samples seen.
    seen: u64,
    kept: Vec<KeptPose>,
    first: Option<KeptPose>,
    last: Option<KeptPose>,
}

impl PoseKeeper {
    /// A keeper of at most `cap` (at least 2) slider poses.
    pub fn new(cap: usize) -> Self {
        let cap = cap.max(2);
        PoseKeeper {
            cap,
            stride: 1,
            seen: 0,
            kept: Vec::with_capacity(cap),
            first: None,
            last: None,
        }
    }

    /// Sets the first spacing from the walk's estimate of its sample count, so that a path of
    /// the estimated length fills the buffer without thinning. Only before the first sample.
    pub fn expect(&mut self, estimated_samples: u64) {
        if self.seen == 0 {
            self.stride = estimated_samples.div_ceil(self.cap as u64).max(1);
        }
    }

    /// Takes in the next sample in path order; unreachable samples (their joints are the last
    /// reached ones, not a pose of the path) are left out.
    pub fn push(&mut self, rec: &SampleRecord) {
        if rec.reach == Reach::Unreachable {
            return;
        }
        let pose = KeptPose {
            index: rec.index,
            s: rec.s,
            t: rec.t,
            joints: rec.joints,
        };
        if self.first.is_none() {
            self.first = Some(pose);
        }
        self.last = Some(pose);
        if self.seen.is_multiple_of(self.stride) {
            if self.kept.len() == self.cap {
                let mut i = 0;
                self.kept.retain(|_| {
                    i += 1;
                    i % 2 == 1
                });
                self.stride *= 2;
            }
            if self.seen.is_multiple_of(self.stride) {
                self.kept.push(pose);
            }
        }
        self.seen += 1;
    }

    /// The first reached sample.
    pub fn first(&self) -> Option<&KeptPose> {
        self.first.as_ref()
    }

    /// The last reached sample.
    pub fn last(&self) -> Option<&KeptPose> {
        self.last.as_ref()
    }

    /// The slider's poses in path order, ending with the last reached sample.
    pub fn slider(&self) -> Vec<KeptPose> {
        let mut v = self.kept.clone();
        if let Some(l) = self.last {
            if v.last().map(|p| p.index) != Some(l.index) {
                v.push(l);
            }
        }
        v
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::job::Motion;
    use nalgebra::Isometry3;

    fn rec(i: usize, reach: Reach) -> SampleRecord {
        SampleRecord {
            index: i,
            segment: 0,
            waypoint: None,
            motion: Motion::Linear,
            s: i as f64 * 1e-3,
            t: i as f64 * 1e-2,
            dt: 1e-2,
            target: Isometry3::identity(),
            reach,
            position_error: 0.0,
            orientation_error: 0.0,
            joints: Joints::from([i as f64, 0.0, 0.0, 0.0, 0.0, 0.0]),
            joint_speed: Joints::zeros(6),
            joint_acceleration: Joints::zeros(6),
            tcp_speed: 0.0,
            tool_angular_speed: 0.0,
            singularity: 1.0,
            singularity_class: None,
            jump: None,
        }
    }

    #[test]
    fn kept_poses_are_bounded_evenly_spaced_and_end_at_the_last_sample() {
        // source: common practice (decimation by doubling strides); counts by hand: 10,000
        // samples into 200 slots with no estimate thin to a stride of 64: 157 poses and the last
        let mut k = PoseKeeper::new(200);
        for i in 0..10_000 {
            k.push(&rec(i, Reach::Reached));
        }
        let v = k.slider();
        assert!(v.len() <= 201 && v.len() >= 100, "{}", v.len());
        let steps: Vec<usize> = v.windows(2).map(|w| w[1].index - w[0].index).collect();
        assert!(
            steps[..steps.len() - 1].iter().all(|&d| d == 64),
            "{steps:?}"
        );
        assert_eq!(v[0].index, 0);
        assert_eq!(v.last().map(|p| p.index), Some(9_999));
        assert_eq!(k.first().map(|p| p.index), Some(0));
    }

    #[test]
    fn the_estimate_sets_the_spacing_and_unreachable_samples_are_left_out() {
        // source: common practice; by hand: 1,000 expected into 200 slots is every 5th
        let mut k = PoseKeeper::new(200);
        k.expect(1000);
        for i in 0..1000 {
            let reach = if (500..510).contains(&i) {
                Reach::Unreachable
            } else {
                Reach::Reached
            };
            k.push(&rec(i, reach));
        }
        let v = k.slider();
        assert!(v.iter().all(|p| !(500..510).contains(&p.index)));
        assert_eq!(v[1].index - v[0].index, 5);
        assert!(v.len() <= 201, "{}", v.len());
        assert_eq!(k.last().map(|p| p.index), Some(999));
    }
}
