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

/// The planned path: waypoints turned into base-frame segments.
#[derive(Debug, Clone)]
pub struct Plan {
    pub segments: Vec<Segment>,
    /// Pose of every waypoint's TCP in the base frame.
    pub waypoints_base: Vec<Isometry3<f64>>,
    /// Samples along linear segments plus a lower bound for joint segments, plus the first.
    pub estimated_samples: u64,
}

/// Build the plan. Fails when the sampling would imply more than `max_samples` samples.
pub fn plan(job: &Job, max_samples: u64) -> Result<Plan> {
    let waypoints_base: Vec<Isometry3<f64>> = job
        .waypoints
        .iter()
        .map(|w| job.base_T_work * w.work_T_tcp)
        .collect();
    let mut segments = Vec::with_capacity(waypoints_base.len().saturating_sub(1));
    let mut total: f64 = 1.0;
    for (k, pair) in waypoints_base.windows(2).enumerate() {
        let (start, end) = (pair[0], pair[1]);
        let wp = &job.waypoints[k + 1];
        let length = (end.translation.vector - start.translation.vector).norm();
        let geodesic = Geodesic::new(&start.rotation, &end.rotation);
        let angle = geodesic.angle();
        let speed = wp.speed.unwrap_or(job.speed);
        let mut duration = length / speed;
        if let Some(w) = job.orientation_speed {
            duration = duration.max(angle / w);
        }
        let steps_f = (length / job.sampling.step)
            .ceil()
            .max((angle / job.sampling.angle_step).ceil());
        total += steps_f;
        if !(total.is_finite() && total <= max_samples as f64) {
            return Err(Error::input(
                &job.source,
                "sampling",
                format!(
                    "the path would need more than {max_samples} samples (at segment {k}, ending at '{}'): \
                     raise sampling.step / sampling.angle_step, or pass --max-samples N to allow more",
                    wp.name
                ),
            ));
        }
        segments.push(Segment {
            index: k,
            motion: wp.motion,
            start,
            end,
            length,
            geodesic,
            speed,
            duration,
            steps: steps_f as usize,
            process: wp.process,
        });
    }
    Ok(Plan {
        segments,
        waypoints_base,
        estimated_samples: total as u64,
    })
}
