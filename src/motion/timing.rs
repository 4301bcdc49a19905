//! Timing of one straight-line segment as the controller runs it: an optional blend at
//! each end, and between them the acceleration-limited profile of the segment parameter
//! `u ∈ [0, 1]` (position on the line and orientation on the geodesic share `u`).
//!
//! The segment's clock starts at the nominal time of its start waypoint: the stop there,
//! or the middle of the blend window around it (the corner time of the unblended path).
//! Inside a blend window the segment runs at the corner's rate `k/D` (`D` = the time the
//! segment takes at the programmed speed, `k` = [`Corner::scale`], 1 unless the corner's
//! accelerations slowed it), which is what the blend's geometry assumes; the ramp covers the
//! rest, starting at the corner's rate after a blend and from rest after a stop, and ending
//! likewise.

use super::{Corner, Ramp};
use nalgebra::Isometry3;

/// Acceleration of the segment parameter `u` (1/s²) that keeps the TCP within `tcp_accel`
/// (m/s²) along `length` (m) and the tool within `tool_accel` (rad/s²) over `angle` (rad).
/// Infinite for a segment that neither moves nor turns.
pub fn u_acceleration(length: f64, angle: f64, tcp_accel: f64, tool_accel: f64) -> f64 {
    let mut a = f64::INFINITY;
    if length > 0.0 {
        a = a.min(tcp_accel / length);
    }
    if angle > 0.0 {
        a = a.min(tool_accel / angle);
    }
    a
}

/// How a straight-line segment runs in time. Allocation-free, every method total.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SegmentTiming {
    /// Time at the programmed speed, no ramps (s): `D`.
    cruise: f64,
    /// Length of the straight line (m), for the TCP speed.
    length: f64,
    /// Blends around the start and end waypoints, if any.
    blend_in: Option<Corner>,
    blend_out: Option<Corner>,
    /// Rates of `u` (1/s) inside the windows in and out: the corners' rates (0 without).
    rate_in: f64,
    rate_out: f64,
    /// Profile of `u` over `[u_a, u_b]`.
    ramp: Ramp,
    u_a: f64,
    u_b: f64,
}

impl SegmentTiming {
    /// Timing of a segment of `length` (m) that takes `cruise` (s) at its programmed speed,
    /// with `u` accelerating by at most `u_accel` (1/s², see [`u_acceleration`]), and blends
    /// `blend_in` / `blend_out` (each covering at most half of the segment, as
    /// [`super::Window`] ensures). Inside a window `u` runs at the corner's rate
    /// `scale/cruise` ([`Corner::scale`]); the ramp between the windows starts and ends at
    /// those rates, and a segment without blends starts and ends at rest.
    pub fn new(
        cruise: f64,
        length: f64,
        u_accel: f64,
        blend_in: Option<Corner>,
        blend_out: Option<Corner>,
    ) -> SegmentTiming {
        let rate = if cruise > 0.0 { 1.0 / cruise } else { 0.0 };
        let rate_in = blend_in.map_or(0.0, |c| c.scale() * rate);
        let rate_out = blend_out.map_or(0.0, |c| c.scale() * rate);
        let h_in = blend_in.map_or(0.0, |c| c.half());
        let h_out = blend_out.map_or(0.0, |c| c.half());
        let (u_a, u_b) = if cruise > 0.0 {
            let a = (h_in * rate_in).min(0.5);
            (a, (1.0 - h_out * rate_out).max(a))
        } else {
            (0.0, 1.0)
        };
        SegmentTiming {
            cruise,
            length,
            blend_in,
            blend_out,
            rate_in,
            rate_out,
            ramp: Ramp::new(u_b - u_a, rate_in, rate, rate_out, u_accel),
            u_a,
            u_b,
        }
    }

    /// Time (s) from the corner's middle to parameter distance `du` into its window at
    /// `rate` (1/s); 0 for a zero rate (no window).
    fn window_time(du: f64, rate: f64) -> f64 {
        if rate > 0.0 {
            du / rate
        } else {
            0.0
        }
    }

    /// Half windows of the blends in and out (s; 0 without).
    fn halves(&self) -> (f64, f64) {
        (
            self.blend_in.map_or(0.0, |c| c.half()),
            self.blend_out.map_or(0.0, |c| c.half()),
        )
    }

    /// Time the segment takes (s), from the nominal time of its start waypoint to that of
    /// its end waypoint.
    pub fn duration(&self) -> f64 {
        let (h_in, h_out) = self.halves();
        h_in + self.ramp.duration() + h_out
    }

    /// The profile between the blends (for its acceleration and whether it was overdriven).
    pub fn ramp(&self) -> &Ramp {
        &self.ramp
    }

    /// The blend at the end waypoint, if any.
    pub fn blend_out(&self) -> Option<&Corner> {
        self.blend_out.as_ref()
    }

    /// The blend at the start waypoint, if any.
    pub fn blend_in(&self) -> Option<&Corner> {
        self.blend_in.as_ref()
    }

    /// Time (s, from the segment's start) at which parameter `u` (clamped to [0, 1]) is
    /// commanded.
    pub fn time_at(&self, u: f64) -> f64 {
        let u = u.clamp(0.0, 1.0);
        let (h_in, _) = self.halves();
        if u < self.u_a {
            return Self::window_time(u, self.rate_in);
        }
        if u <= self.u_b {
            return h_in + self.ramp.t_at(u - self.u_a);
        }
        h_in + self.ramp.duration() + Self::window_time(u - self.u_b, self.rate_out)
    }

    /// The blended pose at parameter `u`, when `u` lies in a blend window; `None` where the
    /// TCP is on the straight line (the caller's unblended pose applies).
    pub fn blended_pose(&self, u: f64) -> Option<Isometry3<f64>> {
        if let Some(c) = &self.blend_in {
            if u < self.u_a {
                return Some(c.pose_at(Self::window_time(u, self.rate_in)));
            }
        }
        if let Some(c) = &self.blend_out {
            if u > self.u_b {
                return Some(c.pose_at(-Self::window_time(1.0 - u, self.rate_out)));
            }
        }
        None
    }

    /// Commanded TCP speed (m/s) at parameter `u`: the blend's speed inside a window, the
    /// profile's elsewhere.
    pub fn tcp_speed(&self, u: f64) -> f64 {
        let u = u.clamp(0.0, 1.0);
        if let Some(c) = &self.blend_in {
            if u < self.u_a {
                return c.velocity_at(Self::window_time(u, self.rate_in)).norm();
            }
        }
        if let Some(c) = &self.blend_out {
            if u > self.u_b {
                return c
                    .velocity_at(-Self::window_time(1.0 - u, self.rate_out))
                    .norm();
            }
        }
        let (h_in, _) = self.halves();
        self.length * self.ramp.speed_at(self.time_at(u) - h_in)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::motion::Window;
    use approx::assert_relative_eq;
    use nalgebra::{Translation3, Vector3};

    #[test]
    fn unblended_segment_is_a_rest_to_rest_trapezoid() {
        // 0.3 m at 0.1 m/s (D = 3 s) with a = 0.5 m/s²: T = L/v + v/a = 3.2 s; at u = ½ the
        // time is T/2 and the speed the cruise speed.
        // source: trapezoidal profile T = L/v + v/a (Biagiotti & Melchiorri 2008, §3.2.2;
        // from memory)
        let t = SegmentTiming::new(3.0, 0.3, u_acceleration(0.3, 0.0, 0.5, 1.0), None, None);
        assert_relative_eq!(t.duration(), 3.2, epsilon = 1e-12);
        assert_relative_eq!(t.time_at(0.5), 1.6, epsilon = 1e-12);
        assert_relative_eq!(t.tcp_speed(0.5), 0.1, epsilon = 1e-12);
        assert_eq!(t.tcp_speed(1.0), 0.0);
        assert!(t.blended_pose(0.99).is_none());
    }

    /// 0.3 m at 0.1 m/s (D = 3 s) with a = 0.5 m/s², ending in a 10 mm right-angle blend
    /// into an equally fast segment, run at `scale` times the cruise rates.
    fn ending_in_right_angle(scale: f64) -> SegmentTiming {
        let w = Window::new(0.01, 0.3, 3.0, 0.3, 3.0);
        let corner = Corner::new(
            nalgebra::Isometry3::from_parts(Translation3::new(0.3, 0.0, 0.0), Default::default()),
            (Vector3::x() * 0.1, Vector3::zeros()),
            (Vector3::y() * 0.1, Vector3::zeros()),
            w.half,
        )
        .slowed(scale);
        let u_accel = u_acceleration(0.3, 0.0, 0.5, 1.0);
        SegmentTiming::new(3.0, 0.3, u_accel, None, Some(corner))
    }

    /// No step in time across the window edge of [`ending_in_right_angle`] (10 mm before the
    /// end), and the TCP speed `speed` (m/s) on both sides. source: common practice
    fn assert_window_edge(t: &SegmentTiming, speed: f64) {
        let edge = 1.0 - 0.01 / 0.3;
        assert_relative_eq!(
            t.time_at(edge - 1e-12),
            t.time_at(edge + 1e-12),
            epsilon = 1e-9
        );
        assert_relative_eq!(t.tcp_speed(edge - 1e-9), speed, epsilon = 1e-6);
        assert_relative_eq!(t.tcp_speed(edge + 1e-9), speed, epsilon = 1e-6);
    }

    #[test]
    fn blended_end_keeps_cruise_into_the_window() {
        // The same segment with a 10 mm blend at its end (next segment equally fast): the
        // window's half is 0.1 s, so the ramp covers 0.29 m from rest to cruise
        // (0.29/0.1 + 0.1/(2·0.5) = 3.0 s) and the segment ends 0.1 s later: 3.1 s.
        // source: common practice (kinematics of constant acceleration)
        let t = ending_in_right_angle(1.0);
        assert_relative_eq!(t.duration(), 3.1, epsilon = 1e-12);
        // Continuous time across the window edge, and the speed of the blend there.
        assert_window_edge(&t, 0.1);
        // The last sample stands at the blend's middle, not at the corner.
        let mid = t.blended_pose(1.0).unwrap().translation.vector;
        assert!((mid - Vector3::new(0.3, 0.0, 0.0)).norm() > 1e-3);
    }

    #[test]
    fn a_slowed_corner_is_entered_at_its_corner_speed() {
        // The segment above ending in the same corner slowed to half its rates (v_c = 50 mm/s):
        // the window's half is r/v_c = 0.2 s, and the ramp covers 0.29 m from rest to cruise
        // and down to v_c: L/v + v/(2a) + (v − v_c)²/(2a·v) = 2.9 + 0.1 + 0.05²/0.1 = 3.025 s,
        // 3.225 s with the half window. The speed at the window's edge is v_c from both sides.
        // source: trapezoidal profile (Biagiotti & Melchiorri 2008, §3.2.2; from memory), its
        // deceleration to v_c from constant-acceleration kinematics (common practice)
        let t = ending_in_right_angle(0.5);
        assert_relative_eq!(t.duration(), 3.225, epsilon = 1e-12);
        assert_window_edge(&t, 0.05);
        // The blend's middle, reached at the segment's end: v_c·cos 45°.
        assert_relative_eq!(t.tcp_speed(1.0), 0.05 / 2f64.sqrt(), epsilon = 1e-12);
    }

    #[test]
    fn acceleration_bound_takes_the_stricter_of_position_and_orientation() {
        // 0.1 m at 1 m/s² → 10 /s²; a 90° turn at π rad/s² → 2 /s²: the turn bounds u.
        // source: common practice (both limits hold when u's acceleration is the minimum)
        let pi = std::f64::consts::PI;
        assert_relative_eq!(u_acceleration(0.1, pi / 2.0, 1.0, pi), 2.0, epsilon = 1e-12);
        assert!(u_acceleration(0.0, 0.0, 1.0, pi).is_infinite());
    }
}
