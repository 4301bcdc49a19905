//! The plan: segments between waypoints in the robot base frame, with lengths, rotation
//! angles and (for straight-line moves) durations, and the sampling of each segment.
//!
//! Segment `k` runs from waypoint `k` to waypoint `k + 1`. A linear segment moves the TCP
//! along the straight line in position and along the geodesic in orientation with one shared
//! parameter `u ∈ [0, 1]`, so both arrive together; its duration is
//! `max(length / speed, angle / orientation_speed)` (the second term only when a
//! reorientation speed is programmed) and `u` grows uniformly in time. Joint segments are
//! sampled in joint space by the solver, which knows their end joints.

use crate::error::{Error, Result};
use crate::job::{Job, Motion};
use crate::rotation::Geodesic;
use nalgebra::{Isometry3, Translation3, Vector3};

/// Samples a check may imply before it is refused: 10⁸ samples take minutes and say
/// nothing a coarser sampling would not. Raise it with `--max-samples`.
pub const DEFAULT_MAX_SAMPLES: u64 = 100_000_000;

/// One segment of the path, in the base frame.
#[derive(Debug, Clone)]
pub struct Segment {
    /// 0-based index; the segment ends at waypoint `index + 1`.
    pub index: usize,
    pub motion: Motion,
    /// TCP pose at the start and end (base frame).
    pub start: Isometry3<f64>,
    pub end: Isometry3<f64>,
    /// Straight-line TCP distance between the end poses (m).
    pub length: f64,
    /// Orientation geodesic between the end poses.
    pub geodesic: Geodesic,
    /// Programmed TCP speed (m/s).
    pub speed: f64,
    /// Duration (s) of a linear segment; for a joint segment the time the Cartesian terms
    /// alone need (the solver adds the joint-speed bound).
    pub duration: f64,
    /// Number of sample steps (samples after the start); 0 for a repeated waypoint. For joint
    /// segments a lower bound from the Cartesian terms, refined by the solver.
    pub steps: usize,
    /// The segment ends at a process waypoint (constant speed required).
    pub process: bool,
}

impl Segment {
    /// Pose at parameter `u ∈ [0, 1]` of a linear segment: position on the line, orientation
    /// on the geodesic.
    #[inline]
    pub fn pose_at(&self, u: f64) -> Isometry3<f64> {
        let p0 = self.start.translation.vector;
        let p1 = self.end.translation.vector;
        let p: Vector3<f64> = p0 + (p1 - p0) * u;
        Isometry3::from_parts(Translation3::from(p), self.geodesic.at(u))
    }
}

/// What a segment takes from its end waypoint: all the plan keeps per segment besides the
/// waypoint poses (16 bytes, so that a path of a million waypoints stays small).
#[derive(Debug, Clone, Copy)]
struct SegmentKeys {
    /// Programmed TCP speed (m/s).
    speed: f64,
    motion: Motion,
    process: bool,
}

/// The planned path: waypoints turned into base-frame segments.
///
/// Layout: the plan keeps one base-frame pose per waypoint and [`SegmentKeys`] per segment;
/// each [`Segment`] (end poses, length, geodesic, duration, steps) is computed from them when
/// asked for, by [`Plan::segment`] or [`Plan::segments`], the same way every time.
#[derive(Debug, Clone)]
pub struct Plan {
    /// Pose of every waypoint's TCP in the base frame.
    pub waypoints_base: Vec<Isometry3<f64>>,
    /// Samples along linear segments plus a lower bound for joint segments, plus the first.
    pub estimated_samples: u64,
    keys: Vec<SegmentKeys>,
    orientation_speed: Option<f64>,
    step: f64,
    angle_step: f64,
}

impl Plan {
    /// Number of segments (one fewer than waypoints).
    pub fn segment_count(&self) -> usize {
        self.keys.len()
    }

    /// Segment `k` (from waypoint `k` to `k + 1`), or `None` past the last.
    pub fn segment(&self, k: usize) -> Option<Segment> {
        self.segment_and_steps(k).map(|(seg, _)| seg)
    }

    /// Every segment in path order, each computed when reached.
    pub fn segments(&self) -> impl Iterator<Item = Segment> + '_ {
        (0..self.keys.len()).filter_map(|k| self.segment(k))
    }

    /// Segment `k` and its step count as a float (which may be huge or infinite before the
    /// sample cap in [`plan`] has been checked).
    fn segment_and_steps(&self, k: usize) -> Option<(Segment, f64)> {
        let keys = self.keys.get(k)?;
        let start = *self.waypoints_base.get(k)?;
        let end = *self.waypoints_base.get(k + 1)?;
        let length = (end.translation.vector - start.translation.vector).norm();
        let geodesic = Geodesic::new(&start.rotation, &end.rotation);
        let angle = geodesic.angle();
        let mut duration = length / keys.speed;
        if let Some(w) = self.orientation_speed {
            duration = duration.max(angle / w);
        }
        let steps_f = (length / self.step)
            .ceil()
            .max((angle / self.angle_step).ceil());
        let seg = Segment {
            index: k,
            motion: keys.motion,
            start,
            end,
            length,
            geodesic,
            speed: keys.speed,
            duration,
            // Exact: `plan` refuses a path whose step counts exceed the sample cap.
            steps: steps_f as usize,
            process: keys.process,
        };
        Some((seg, steps_f))
    }
}

/// Build the plan. Fails when the sampling would imply more than `max_samples` samples.
pub fn plan(job: &Job, max_samples: u64) -> Result<Plan> {
    let waypoints_base: Vec<Isometry3<f64>> = job
        .waypoints
        .iter()
        .map(|w| job.base_T_work * w.work_T_tcp)
        .collect();
    let keys = job
        .waypoints
        .iter()
        .skip(1)
        .map(|wp| SegmentKeys {
            speed: wp.speed.unwrap_or(job.speed),
            motion: wp.motion,
            process: wp.process,
        })
        .collect();
    let mut plan = Plan {
        waypoints_base,
        estimated_samples: 0,
        keys,
        orientation_speed: job.orientation_speed,
        step: job.sampling.step,
        angle_step: job.sampling.angle_step,
    };
    let mut total: f64 = 1.0;
    for k in 0..plan.segment_count() {
        let steps_f = plan.segment_and_steps(k).map_or(0.0, |(_, n)| n);
        total += steps_f;
        if !(total.is_finite() && total <= max_samples as f64) {
            return Err(Error::input(
                &job.source,
                "sampling",
                format!(
                    "the path would need more than {max_samples} samples (at segment {k}, ending at '{}'): \
                     raise sampling.step / sampling.angle_step, or pass --max-samples N to allow more",
                    job.waypoints[k + 1].name
                ),
            ));
        }
    }
    plan.estimated_samples = total as u64;
    Ok(plan)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::job::{load_bytes, Overrides};
    use std::path::Path;

    #[test]
    fn per_segment_storage_stays_small() {
        // The plan keeps one base pose (7 f64 = 56 bytes) per waypoint and these keys per
        // segment; a million-waypoint path must not carry a full segment (some 200 bytes) each.
        // source: common practice (memory per waypoint bounded by the data layout)
        assert!(std::mem::size_of::<SegmentKeys>() <= 16);
        assert_eq!(std::mem::size_of::<Isometry3<f64>>(), 56);
    }

    #[test]
    fn segments_computed_on_demand_match_the_job() {
        // A 300 mm line at 20 mm/s takes 15 s; at a 2 mm step it has 150 steps; the turn of
        // 90° in place of the second segment at 45 deg/s takes 2 s and, at 1° steps, 90 steps.
        // source: from memory (duration = length / speed, steps = ceil(length / step))
        let text = "robot: a.urdf\nspeed: 20\norientation_speed: 45\nsampling: {step: 2, angle_step: 1}\n\
                    waypoints:\n  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [300, 0, 0], rpy: [180, 0, 0]}\n  \
                    - {xyz: [300, 0, 0], rpy: [180, 0, 90]}\n";
        let job = load_bytes(text.as_bytes(), Path::new("p.yaml"), &Overrides::default()).unwrap();
        let plan = plan(&job, DEFAULT_MAX_SAMPLES).unwrap();
        assert_eq!(plan.segment_count(), 2);
        let segs: Vec<Segment> = plan.segments().collect();
        assert!((segs[0].length - 0.3).abs() < 1e-12);
        assert!((segs[0].duration - 15.0).abs() < 1e-9);
        assert_eq!(segs[0].steps, 150);
        assert!((segs[1].duration - 2.0).abs() < 1e-9);
        assert_eq!(segs[1].steps, 90);
        assert_eq!(plan.estimated_samples, 1 + 150 + 90);
        assert!(plan.segment(2).is_none());
        assert_eq!(segs[1].index, 1);
        assert_eq!(plan.segment(1).unwrap().end, plan.waypoints_base[2]);
    }
}
