//! The plan: segments between waypoints in the robot base frame, with lengths, rotation
//! angles and (for straight-line moves) durations, and the sampling of each segment.
//!
//! Segment `k` runs from waypoint `k` to waypoint `k + 1`. A linear segment moves the TCP
//! along the straight line in position and along the geodesic in orientation with one shared
//! parameter `u ∈ [0, 1]`, so both arrive together. At the programmed speed it takes
//! `max(length / speed, angle / orientation_speed)` (the second term only when a
//! reorientation speed is programmed, the "cruise" time); the controller's acceleration
//! limits and corner blends stretch and shape that in time ([`SegmentTiming`]): samples stay
//! evenly spaced in `u`, their times follow the profile. Joint segments are sampled in joint
//! space by the solver, which knows their end joints.

use crate::error::{Error, Result};
use crate::job::{Job, Motion, Waypoint};
use crate::motion::{
    corner_scale, reach_scale, u_acceleration, Corner, MoveKey, SegmentTiming, Window,
};
use crate::rotation::Geodesic;
use nalgebra::{Isometry3, Translation3, Vector3};
use std::sync::Arc;

/// Samples a check may imply before it is refused: 10⁸ samples take minutes and say
/// nothing a coarser sampling would not. Raise it with `--max-samples`.
pub const DEFAULT_MAX_SAMPLES: u64 = 100_000_000;

/// One segment of the path, in the base frame.
#[derive(Debug, Clone)]
pub struct Segment {
    /// 0-based index; the segment ends at waypoint `index + 1`.
    pub index: usize,
    /// How the controller moves along the segment: straight line or joint interpolation.
    pub motion: Motion,
    /// TCP pose at the start (base frame).
    pub start: Isometry3<f64>,
    /// TCP pose at the end (base frame), where waypoint `index + 1` is programmed.
    pub end: Isometry3<f64>,
    /// Straight-line TCP distance between the end poses (m).
    pub length: f64,
    /// Orientation geodesic between the end poses.
    pub geodesic: Geodesic,
    /// Programmed TCP speed (m/s).
    pub speed: f64,
    /// Time (s) a linear segment takes at its programmed speed, without acceleration or
    /// blends (see `timing` for the time it takes as run); for a joint segment the time the
    /// Cartesian terms alone need (the solver adds the joint bounds).
    pub duration: f64,
    /// How a linear segment runs in time: ramps and blends (unused for joint segments).
    pub timing: SegmentTiming,
    /// The blend window at the end waypoint (`half == 0`: the segment ends at rest).
    pub blend: Window,
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

    /// Pose commanded at parameter `u` of a linear segment as run: on a blend's curve inside
    /// a blend window, else [`Segment::pose_at`].
    #[inline]
    pub fn run_pose_at(&self, u: f64) -> Isometry3<f64> {
        self.timing
            .blended_pose(u)
            .unwrap_or_else(|| self.pose_at(u))
    }

    /// Velocity (m/s) and spatial angular velocity (rad/s) at the programmed speed, base
    /// frame: the rates a blend hands over at its window edges.
    fn cruise_rates(&self) -> (Vector3<f64>, Vector3<f64>) {
        if self.duration.is_nan() || self.duration <= 0.0 {
            return (Vector3::zeros(), Vector3::zeros());
        }
        let v = (self.end.translation.vector - self.start.translation.vector) / self.duration;
        let body = self
            .geodesic
            .axis()
            .map_or(Vector3::zeros(), |a| a.into_inner() * self.geodesic.angle());
        (v, self.start.rotation * body / self.duration)
    }
}

/// What a segment takes from its end waypoint besides its pose.
#[derive(Debug, Clone, Copy)]
struct SegmentKeys {
    /// Programmed TCP speed (m/s).
    speed: f64,
    motion: Motion,
    process: bool,
    /// Blend radius at the end waypoint (m), 0 = stop.
    blend: f64,
}

/// The planned path: waypoints turned into base-frame segments.
///
/// Layout: the plan keeps nothing per waypoint; it shares the job's waypoints and derives a
/// waypoint's base-frame pose (`base_T_work * work_T_tcp`, one product) and its
/// `SegmentKeys` when asked. Each [`Segment`] (end poses, length, geodesic, duration,
/// steps) is computed from them by [`Plan::segment`] or [`Plan::segments`], the same way
/// every time.
#[derive(Debug, Clone)]
pub struct Plan {
    /// Samples along linear segments plus a lower bound for joint segments, plus the first.
    pub estimated_samples: u64,
    /// The job's waypoints (work frame), shared.
    waypoints: Arc<Vec<Waypoint>>,
    base_T_work: Isometry3<f64>,
    /// The job's TCP speed (m/s), for waypoints that set none.
    speed: f64,
    orientation_speed: Option<f64>,
    step: f64,
    angle_step: f64,
    /// Largest TCP acceleration (m/s²) and tool angular acceleration (rad/s²).
    tcp_acceleration: f64,
    tool_angular_acceleration: f64,
    /// The job's per-waypoint blend radii and joint-move speeds (empty when none is set).
    move_keys: Arc<Vec<MoveKey>>,
}

impl Plan {
    /// Number of segments (one fewer than waypoints).
    pub fn segment_count(&self) -> usize {
        self.waypoints.len().saturating_sub(1)
    }

    /// Pose of waypoint `k`'s TCP in the base frame, or `None` past the last.
    #[inline]
    pub fn waypoint_base(&self, k: usize) -> Option<Isometry3<f64>> {
        self.waypoints
            .get(k)
            .map(|w| self.base_T_work * w.work_T_tcp)
    }

    /// Pose of the first waypoint's TCP in the base frame. A plan always has at least two
    /// waypoints (the job refuses fewer); an empty one would give the identity.
    #[inline]
    pub fn first_base(&self) -> Isometry3<f64> {
        self.waypoint_base(0).unwrap_or_else(Isometry3::identity)
    }

    /// Keys of segment `k`, taken from the waypoint it ends at.
    fn keys(&self, k: usize) -> Option<SegmentKeys> {
        let wp = self.waypoints.get(k + 1)?;
        Some(SegmentKeys {
            speed: wp.speed.unwrap_or(self.speed),
            motion: wp.motion,
            process: wp.process,
            blend: self.blend_radius(k + 1),
        })
    }

    /// Blend radius (m) programmed at waypoint `k`; 0 when none.
    pub fn blend_radius(&self, k: usize) -> f64 {
        self.move_keys.get(k).map_or(0.0, |m| m.blend)
    }

    /// Share of the joints' allowed speed programmed for a joint move ending at waypoint `k`,
    /// if the path file gives one (see [`MoveKey::joint_speed_fraction`]).
    pub fn joint_speed_fraction(&self, k: usize) -> Option<f64> {
        self.move_keys.get(k).and_then(|m| m.joint_speed_fraction)
    }

    /// Segment `k` (from waypoint `k` to `k + 1`), or `None` past the last.
    pub fn segment(&self, k: usize) -> Option<Segment> {
        self.segment_and_steps(k).map(|(seg, _)| seg)
    }

    /// Every segment in path order, each computed when reached.
    pub fn segments(&self) -> impl Iterator<Item = Segment> + '_ {
        (0..self.segment_count()).filter_map(|k| self.segment(k))
    }

    /// Segment `k` and its step count as a float (which may be huge or infinite before the
    /// sample cap in [`plan`] has been checked).
    fn segment_and_steps(&self, k: usize) -> Option<(Segment, f64)> {
        let (mut seg, steps_f) = self.untimed(k)?;
        if seg.motion == Motion::Linear {
            let before = k.checked_sub(1).and_then(|j| self.untimed(j));
            let after = self.untimed(k + 1);
            let blend_in = before.and_then(|(b, _)| self.corner(&b, &seg).0);
            let (blend_out, window) = match after {
                Some((a, _)) => self.corner(&seg, &a),
                None => (None, seg.blend),
            };
            let u_accel = self.u_accel(&seg);
            seg.timing = SegmentTiming::new(seg.duration, seg.length, u_accel, blend_in, blend_out);
            seg.blend = window;
        }
        Some((seg, steps_f))
    }

    /// Acceleration of a linear segment's parameter `u` (1/s²) under the job's limits.
    fn u_accel(&self, seg: &Segment) -> f64 {
        u_acceleration(
            seg.length,
            seg.geodesic.angle(),
            self.tcp_acceleration,
            self.tool_angular_acceleration,
        )
    }

    /// The blend at the waypoint between `a` and the following `b`, and its window: only
    /// between two straight-line segments that both move the TCP. The corner runs at
    /// [`Plan::corner_scale`] times the cruise rates; the window's `half` is the slowed one.
    fn corner(&self, a: &Segment, b: &Segment) -> (Option<Corner>, Window) {
        let radius = self.keys(a.index).map_or(0.0, |k| k.blend);
        match self.cruise_corner(a, b, radius) {
            Some((cruise, mut window)) => {
                let corner = cruise.slowed(self.scale_of(&cruise, a, b));
                window.half = corner.half();
                (Some(corner), window)
            }
            None => (None, Window::new(0.0, 0.0, 0.0, 0.0, 0.0)),
        }
    }

    /// A blend of `radius` (m) between `a` and the following `b` run at the cruise rates,
    /// and its window; `None` where no blend applies (not two linear segments, a radius
    /// ≤ 0, a neighbour that does not move the TCP).
    fn cruise_corner(&self, a: &Segment, b: &Segment, radius: f64) -> Option<(Corner, Window)> {
        let both_linear = a.motion == Motion::Linear && b.motion == Motion::Linear;
        if !both_linear || radius <= 0.0 {
            return None;
        }
        let window = Window::new(radius, a.length, a.duration, b.length, b.duration);
        (window.half > 0.0).then(|| {
            let corner = Corner::new(a.end, a.cruise_rates(), b.cruise_rates(), window.half);
            (corner, window)
        })
    }

    /// [`corner_scale`] of `cruise` under the job's limits, with both segments' reach.
    fn scale_of(&self, cruise: &Corner, a: &Segment, b: &Segment) -> f64 {
        corner_scale(
            cruise,
            self.tcp_acceleration,
            self.tool_angular_acceleration,
            reach_scale(self.u_accel(a), a.duration),
            reach_scale(self.u_accel(b), b.duration),
        )
    }

    /// The share of the cruise rates, in (0, 1], at which a blend of `radius` (m) at the
    /// waypoint between segment `a` and the following `b` would run: the largest that keeps
    /// its TCP and tool accelerations within the job's limits and that both segments reach
    /// within their halves (see [`corner_scale`]). 1 where no blend applies.
    pub fn corner_scale(&self, a: &Segment, b: &Segment, radius: f64) -> f64 {
        self.cruise_corner(a, b, radius)
            .map_or(1.0, |(cruise, _)| self.scale_of(&cruise, a, b))
    }

    /// Segment `k` without its timing (a rest-to-rest placeholder), and its step count.
    fn untimed(&self, k: usize) -> Option<(Segment, f64)> {
        let keys = self.keys(k)?;
        let start = self.waypoint_base(k)?;
        let end = self.waypoint_base(k + 1)?;
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
            timing: SegmentTiming::new(duration, length, f64::INFINITY, None, None),
            blend: Window::new(0.0, 0.0, 0.0, 0.0, 0.0),
            // Exact: `plan` refuses a path whose step counts exceed the sample cap.
            steps: steps_f as usize,
            process: keys.process,
        };
        Some((seg, steps_f))
    }
}

/// Build the plan. Fails when the sampling would imply more than `max_samples` samples.
pub fn plan(job: &Job, max_samples: u64) -> Result<Plan> {
    let mut plan = Plan {
        estimated_samples: 0,
        waypoints: Arc::clone(&job.waypoints),
        base_T_work: job.base_T_work,
        speed: job.speed,
        orientation_speed: job.orientation_speed,
        step: job.sampling.step,
        angle_step: job.sampling.angle_step,
        tcp_acceleration: job.limits.tcp_acceleration,
        tool_angular_acceleration: job.limits.tool_angular_acceleration,
        move_keys: Arc::clone(&job.move_keys),
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
                    job.waypoint_name(k + 1)
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
    fn plan_shares_the_job_waypoints_instead_of_copying_them() {
        // The plan holds the job's waypoint vector itself (one shared allocation), so it adds
        // nothing per waypoint. source: common practice (the project's memory budget of 100
        // bytes per waypoint, which the job's records take up almost entirely)
        let text =
            "robot: a.urdf\nspeed: 20\nwaypoints:\n  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  \
                    - {xyz: [300, 0, 0], rpy: [180, 0, 0]}\n";
        let job = load_bytes(text.as_bytes(), Path::new("p.yaml"), &Overrides::default()).unwrap();
        let plan = plan(&job, DEFAULT_MAX_SAMPLES).unwrap();
        assert!(Arc::ptr_eq(&plan.waypoints, &job.waypoints));
        assert_eq!(
            plan.waypoint_base(1),
            Some(job.base_T_work * job.waypoints[1].work_T_tcp)
        );
        assert_eq!(plan.waypoint_base(2), None);
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
        assert_eq!(plan.segment(1).unwrap().end, plan.waypoint_base(2).unwrap());
    }

    #[test]
    fn a_slowed_corner_accelerates_the_tcp_no_more_than_the_limit() {
        // 90° corner, r = 20 mm, v = 500 mm/s, a = 2000 mm/s²: at cruise the blend would need
        // v²·sin 45°/r = 8839 mm/s². Sampled as run (pose at u, time at u), the TCP's
        // acceleration by second finite differences stays within a everywhere (ramps and
        // blend), and inside the window it is a itself: the corner speed is the largest the
        // limit allows. A quadratic in time is differenced exactly; across a phase boundary
        // the estimate is a mean of the two sides' accelerations, no larger than the larger.
        // source: common practice (finite differences); the blend's acceleration
        // v_c²·sin(θ/2)/r (src/motion/corner.rs module doc)
        let text = "robot: a.urdf\nspeed: 500\nlimits: {tcp_acceleration: 2000}\nwaypoints:\n  \
                    - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [200, 0, 0], rpy: [180, 0, 0], blend: 20}\n  \
                    - {xyz: [200, 200, 0], rpy: [180, 0, 0]}\n";
        let job = load_bytes(text.as_bytes(), Path::new("p.yaml"), &Overrides::default()).unwrap();
        let plan = plan(&job, DEFAULT_MAX_SAMPLES).unwrap();
        let segs: Vec<Segment> = plan.segments().collect();
        let a_max = 2.0;
        let n = 4000;
        // (time, position, inside the window) along both segments.
        let mut samples = Vec::new();
        let mut offset = 0.0;
        for (k, seg) in segs.iter().enumerate() {
            for i in (if k == 0 { 0 } else { 1 })..=n {
                let u = i as f64 / n as f64;
                let t = offset + seg.timing.time_at(u);
                let p = seg.run_pose_at(u).translation.vector;
                let edge = 0.02 / seg.length;
                let inside = if k == 0 { u > 1.0 - edge } else { u < edge };
                samples.push((t, p, inside));
            }
            offset += seg.timing.duration();
        }
        let (mut peak, mut window_low, mut window_high) = (0.0f64, f64::INFINITY, 0.0f64);
        for w in samples.windows(3) {
            let ((t0, p0, _), (t1, p1, in1), (t2, p2, _)) = (w[0], w[1], w[2]);
            let acc = ((p2 - p1) / (t2 - t1) - (p1 - p0) / (t1 - t0)) / (0.5 * (t2 - t0));
            peak = peak.max(acc.norm());
            if in1 && w[0].2 && w[2].2 {
                window_low = window_low.min(acc.norm());
                window_high = window_high.max(acc.norm());
            }
        }
        assert!(peak <= a_max * (1.0 + 1e-6), "{peak}");
        assert!(window_high <= a_max * (1.0 + 1e-6), "{window_high}");
        assert!(window_low.is_finite(), "no sample inside the window");
        assert!(window_low >= a_max * (1.0 - 1e-6), "{window_low}");
    }
}
