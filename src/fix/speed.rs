//! Largest TCP speed per segment, from one check walk at the programmed speeds.
//!
//! Method. On a linear segment the TCP follows the same poses whatever the speed; only the
//! time changes (see [`crate::plan`]). The joint path is therefore the same, and every joint
//! speed, like the tool angular speed, is its change per unit of the segment parameter `u`
//! times the rate of `u`, which never exceeds the cruise rate `1 / duration` (ramps and
//! blends only slow it). One walk at the programmed speed gives, per sample, the ratio the
//! sample would have at the cruise rate: its speed ratio times `(1 / duration) / (Δu / Δt)`
//! (1 where the segment cruises); the worst over the segment is
//! `r = max(joint speed / (velocity × joint_speed_scale), tool angular speed / limit)` at
//! cruise. The segment stays within every limit when its duration grows to `duration × r`,
//! i.e. at the TCP speed `length / (duration × r)`: a bound, exact where the limit is reached
//! while cruising, cautious where it was reached only in a ramp. Where the duration comes from the TCP speed
//! (`length / speed`) this is `speed / r`. A segment that does not move the TCP (a pure
//! reorientation) cannot be slowed through its TCP speed: it is reported, not changed.
//!
//! Joint accelerations: running the same path slower in time by a factor `1/f` multiplies
//! every speed by `f` and every acceleration by `f²` when the TCP and tool accelerations are
//! scaled by `f²` too (ramps and blend windows stretch in time, not in space). A segment whose
//! worst joint acceleration is `a` times its limit therefore passes at `f = 1/√a`: its speed
//! ratio counts as `max(r, √a)`, and [`acceleration_scale`] gives the factor `f²` for the
//! accelerations.
//!
//! Joint moves are timed by the solver from the joint speeds and accelerations themselves and
//! never exceed them; they get no proposal.
//!
//! Process segments (`process: true`) must keep one speed along a run of consecutive process
//! segments: when any of them must slow down, the whole run gets the smallest speed allowed
//! over the run (or its slowest programmed speed, if lower).
//!
//! Proposals are rounded down to 0.1 mm/s (1e-4 m/s, the same in a metre file: 0.0001 m/s):
//! finer than any controller's speed setting matters, and rounding down keeps the proposal
//! inside the limit. Below 1 mm/s three significant digits are kept instead.

use crate::job::{Job, Motion};
use crate::plan::Plan;
use crate::robot::Robot;
use crate::solve::{SampleRecord, SampleSink};

/// Proposals are made only for segments whose ratio exceeds 1 by more than this: the
/// assessment's own tolerance on speeds is of the same order, and a ratio within 1e-9 of 1 is
/// rounding, not a finding.
const RATIO_TOLERANCE: f64 = 1e-9;

/// The worst speed ratio seen on each segment.
#[derive(Debug, Clone)]
pub struct RatioSink {
    /// Per segment: (worst ratio, what sets it: joint index or `None` = tool angular speed).
    pub worst: Vec<(f64, Option<Option<usize>>)>,
    /// Per segment: worst joint acceleration over its limit, and which joint.
    pub worst_acceleration: Vec<(f64, Option<usize>)>,
    tool_angular_speed: f64,
    joint_speed_scale: f64,
    joint_acceleration_scale: f64,
    /// Per segment: straight-line length (m) and time at the programmed speed (s).
    segments: Vec<(f64, f64)>,
    /// Path distance of the previous sample (m).
    prev_s: f64,
}

impl RatioSink {
    /// A sink for the walk of `plan`, the plan of `job`.
    pub fn new(job: &Job, plan: &Plan) -> Self {
        RatioSink {
            worst: vec![(0.0, None); job.waypoints.len().saturating_sub(1)],
            worst_acceleration: vec![(0.0, None); job.waypoints.len().saturating_sub(1)],
            tool_angular_speed: job.limits.tool_angular_speed,
            joint_speed_scale: job.limits.joint_speed_scale,
            joint_acceleration_scale: job.limits.joint_acceleration_scale,
            segments: plan.segments().map(|s| (s.length, s.duration)).collect(),
            prev_s: 0.0,
        }
    }

    /// How much faster than this sample the segment's cruise runs: `(1/D) / (Δu/Δt)` with
    /// `Δu = Δs / L`; 1 where that is unknown (no length or duration: nothing to scale).
    fn to_cruise(&self, rec: &SampleRecord) -> f64 {
        let Some(&(length, duration)) = self.segments.get(rec.segment) else {
            return 1.0;
        };
        let du = (rec.s - self.prev_s) / length;
        if !(length > 0.0 && duration > 0.0 && du > 0.0) {
            return 1.0;
        }
        (rec.dt / (duration * du)).max(1.0)
    }
}

impl SampleSink for RatioSink {
    fn restart(&mut self) {
        self.worst.fill((0.0, None));
        self.worst_acceleration.fill((0.0, None));
        self.prev_s = 0.0;
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        let to_cruise = self.to_cruise(rec);
        self.prev_s = rec.s;
        if rec.motion != Motion::Linear || rec.dt <= 0.0 {
            return;
        }
        let Some(slot) = self.worst.get_mut(rec.segment) else {
            return;
        };
        let w = rec.tool_angular_speed / self.tool_angular_speed * to_cruise;
        if w > slot.0 {
            *slot = (w, Some(None));
        }
        for (k, j) in robot.joints().iter().enumerate() {
            let allowed = j.velocity * self.joint_speed_scale;
            let r = rec.joint_speed[k].abs() / allowed * to_cruise;
            if r.is_finite() && r > slot.0 {
                *slot = (r, Some(Some(k)));
            }
        }
        if let Some(acc) = self.worst_acceleration.get_mut(rec.segment) {
            for (k, j) in robot.joints().iter().enumerate() {
                let allowed = j.acceleration_limit(self.joint_acceleration_scale);
                let a = rec.joint_acceleration[k].abs() / allowed;
                if a.is_finite() && a > acc.0 {
                    *acc = (a, Some(k));
                }
            }
        }
    }
}

/// The speed finding of one segment (SI: m/s).
#[derive(Debug, Clone, serde::Serialize)]
pub struct SegmentSpeed {
    /// Segment index (0 = from the first waypoint to the second).
    pub segment: usize,
    /// Name of the waypoint the segment starts at.
    pub from: String,
    /// Name of the waypoint the segment ends at.
    pub to: String,
    /// Motion of the segment.
    pub motion: Motion,
    /// A process segment (one speed along a run of them).
    pub process: bool,
    /// Programmed TCP speed (m/s).
    pub programmed: f64,
    /// Worst ratio of speed to allowed speed over the segment at the programmed speed.
    pub ratio: f64,
    /// Worst ratio of a joint's acceleration to its allowed acceleration over the segment.
    pub acceleration_ratio: f64,
    /// What sets the ratio: a joint name, `tool angular speed`, or `-` when nothing moves.
    pub limited_by: String,
    /// Largest TCP speed within every limit (m/s); `None` when the TCP speed does not set it
    /// (joint move, pure reorientation) or nothing limits it.
    pub max_speed: Option<f64>,
    /// Proposed TCP speed (m/s) when the programmed one is too high.
    pub proposed: Option<f64>,
    /// Why no proposal could be made although the segment is too fast.
    pub note: Option<String>,
}

/// Round a speed (m/s) down to the proposal precision (see module docs).
pub fn round_down(v: f64) -> f64 {
    let step = if v >= 1e-3 {
        1e-4
    } else if v > 0.0 {
        10f64.powf(v.log10().floor() - 2.0)
    } else {
        return 0.0;
    };
    // The small nudge keeps a value that is a whole number of steps (up to rounding) on its
    // own step instead of one below.
    ((v / step) * (1.0 + 1e-12)).floor() * step
}

/// Largest speeds and proposals for every segment of `plan` from the ratios of one walk.
pub fn proposals(job: &Job, plan: &Plan, robot: &Robot, sink: &RatioSink) -> Vec<SegmentSpeed> {
    let mut out: Vec<SegmentSpeed> = plan
        .segments()
        .map(|seg| {
            let (speed_ratio, by) = sink.worst.get(seg.index).copied().unwrap_or((0.0, None));
            let (acc_ratio, acc_by) = sink
                .worst_acceleration
                .get(seg.index)
                .copied()
                .unwrap_or((0.0, None));
            // The speed ratio the segment's time scaling must cover (see the module docs).
            let acc_share = if acc_ratio > 1.0 + RATIO_TOLERANCE {
                acc_ratio.sqrt()
            } else {
                0.0
            };
            let ratio = speed_ratio.max(acc_share);
            let limited_by = match (by, acc_by) {
                (_, Some(k)) if acc_share > speed_ratio => {
                    format!("{} acceleration", robot.joints()[k].name)
                }
                (Some(Some(k)), _) => robot.joints()[k].name.clone(),
                (Some(None), _) => "tool angular speed".to_string(),
                (None, _) => "-".to_string(),
            };
            let linear = seg.motion == Motion::Linear;
            let max_speed = (linear && seg.length > 0.0 && ratio > 0.0 && seg.duration > 0.0)
                .then(|| seg.length / (seg.duration * ratio));
            let too_fast = linear && ratio > 1.0 + RATIO_TOLERANCE;
            let note = (too_fast && seg.length <= 0.0).then(|| {
                "the segment only turns the tool: lower orientation_speed instead of the TCP speed"
                    .to_string()
            });
            SegmentSpeed {
                segment: seg.index,
                from: job.waypoint_name(seg.index),
                to: job.waypoint_name(seg.index + 1),
                motion: seg.motion,
                process: seg.process,
                programmed: seg.speed,
                ratio: speed_ratio,
                acceleration_ratio: acc_ratio,
                limited_by,
                max_speed,
                proposed: if too_fast {
                    max_speed.map(round_down)
                } else {
                    None
                },
                note,
            }
        })
        .collect();
    // Process runs: one speed over consecutive linear process segments.
    let mut k = 0;
    while k < out.len() {
        if !(out[k].process && out[k].motion == Motion::Linear) {
            k += 1;
            continue;
        }
        let start = k;
        while k < out.len() && out[k].process && out[k].motion == Motion::Linear {
            k += 1;
        }
        let run = &out[start..k];
        if run.iter().all(|s| s.proposed.is_none()) {
            continue;
        }
        let slowest_programmed = run
            .iter()
            .map(|s| s.programmed)
            .fold(f64::INFINITY, f64::min);
        let smallest_allowed = run
            .iter()
            .filter_map(|s| s.max_speed)
            .fold(f64::INFINITY, f64::min);
        let speed = round_down(smallest_allowed).min(slowest_programmed);
        for s in out[start..k].iter_mut() {
            s.proposed = Some(speed);
        }
    }
    out
}

/// The factor `f² ≤ 1` on the TCP and tool accelerations that goes with the speed proposals
/// when a straight-line segment's joint accelerations exceed their limits (the largest
/// excess sets it), or `None` when none does.
pub fn acceleration_scale(speeds: &[SegmentSpeed]) -> Option<f64> {
    let worst = speeds
        .iter()
        .filter(|s| s.motion == Motion::Linear)
        .map(|s| s.acceleration_ratio)
        .fold(0.0f64, f64::max);
    (worst > 1.0 + RATIO_TOLERANCE).then(|| 1.0 / worst)
}

/// Round a positive value down to three significant digits (acceleration proposals: finer
/// than any controller setting, and rounding down keeps them inside the limit).
pub fn round_down_3(v: f64) -> f64 {
    if !(v.is_finite() && v > 0.0) {
        return 0.0;
    }
    let exponent = v.log10().floor() as i32 - 2;
    let step = 10f64.powi(exponent);
    let digits = ((v / step) * (1.0 + 1e-12)).floor();
    // Read back from its decimal form so that 933 × 10⁻¹ is the double nearest 93.3, which
    // the file then shows as `93.3`, not the product's `93.30000000000001`.
    format!("{digits}e{exponent}")
        .parse()
        .unwrap_or(digits * step)
}

/// Set the proposed speeds on the waypoints (the waypoint ending each segment carries its
/// speed). Returns how many segments changed.
pub fn apply(job: &mut Job, speeds: &[SegmentSpeed]) -> usize {
    let mut changed = 0;
    for s in speeds {
        if let Some(v) = s.proposed {
            if (v - s.programmed).abs() > 1e-12 {
                std::sync::Arc::make_mut(&mut job.waypoints)[s.segment + 1].speed = Some(v);
                changed += 1;
            }
        }
    }
    changed
}

#[cfg(test)]
mod tests {
    use super::{round_down, round_down_3};

    #[test]
    fn three_significant_digits_read_as_their_shortest_decimal() {
        // source: common practice (floor to three significant digits; the value written is
        // the decimal a person would type)
        assert_eq!(round_down_3(93.37), 93.3);
        assert_eq!(round_down_3(93.37).to_string(), "93.3");
        assert_eq!(round_down_3(4660.9), 4660.0);
        assert_eq!(round_down_3(0.012_345), 0.0123);
        assert_eq!(round_down_3(-1.0), 0.0);
    }

    #[test]
    fn rounding_goes_down_to_a_tenth_of_a_millimetre_per_second() {
        // source: common practice (floor to the display precision)
        assert!((round_down(0.046_666) - 0.0466).abs() < 1e-12);
        assert!((round_down(0.0466) - 0.0466).abs() < 1e-12);
        assert!(round_down(0.000_123_4) <= 0.000_123_4);
        assert!((round_down(0.000_123_4) - 0.000_123).abs() < 1e-12);
        assert_eq!(round_down(0.0), 0.0);
    }
}
