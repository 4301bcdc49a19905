//! A blended corner between two straight-line moves.
//!
//! Unblended, the TCP reaches the corner waypoint at time `t_P` with the incoming segment's
//! velocity `v_in` (and spatial angular velocity `w_in`) and leaves it with `v_out`
//! (`w_out`): a step in velocity. Blended, the velocity changes linearly in time from `v_in`
//! to `v_out` over a window `[t_P − h, t_P + h]`. With `σ = τ + h ∈ [0, 2h]` (τ = t − t_P):
//!
//! - position `p(σ) = A + v_in·σ + (v_out − v_in)·σ²/(4h)`, `A = P − v_in·h`: a parabola,
//!   the quadratic Bézier curve with control points `A`, `P`, `B = P + v_out·h`. It meets
//!   both lines tangentially with their speeds, and stays in the triangle `A P B`, hence
//!   within `max(|v_in|, |v_out|)·h` (the radius) of the corner. Its acceleration is the
//!   constant `(v_out − v_in)/(2h)`.
//! - orientation `R(σ) = exp(φ(σ))·R_P` with `φ(σ) = −w_in·h + w_in·σ + (w_out − w_in)·σ²/(4h)`,
//!   the same parabola on the rotation vector about the corner orientation `R_P`. A geodesic
//!   with constant spatial angular velocity `w` through `R_P` is exactly `exp(τ·w)·R_P`, so
//!   the blend equals the incoming geodesic at `σ = 0` and the outgoing one at `σ = 2h`;
//!   there `φ` is parallel to `φ'`, so the angular velocity `J(φ)·φ'` is exactly `w_in` and
//!   `w_out`: no step in angular velocity at either end, and a smooth change between.
//!
//! The blend needs no state and no integration: every sample is evaluated in closed form.
//!
//! ## Corner speed
//!
//! At the cruise rates the blend's acceleration is `(v_out − v_in)/(2h)` with
//! `h = h₁ = r/max(|v_in|, |v_out|)` (the window at cruise, [`Window::new`]), which for a
//! tight fast corner far exceeds what the controller allows. A controller slows such a
//! corner: the blend runs with both sides' rates scaled by one factor `k ∈ (0, 1]`
//! ([`Corner::slowed`]), velocities `k·v_in`, `k·v_out` (and `k·w_in`, `k·w_out`) and half
//! window `h₁/k`. The curve is the same (the control points `P ∓ v·h` do not depend on `k`),
//! so the radius and the tangency hold for every `k`; only the time it takes changes. Its
//! TCP acceleration becomes `k·|v_out − v_in|/(2h₁/k) = k²·|v_out − v_in|/(2h₁)` and its tool
//! angular acceleration `k²·|w_out − w_in|/(2h₁)`, so the largest `k` within the limits
//! `a_max` (m/s²) and `α_max` (rad/s²) is
//!
//! `k_acc = min(1, √(2h₁·a_max / |v_out − v_in|), √(2h₁·α_max / |w_out − w_in|))`.
//!
//! For equal speeds `v` turning by `θ`, `|v_out − v_in| = 2v·sin(θ/2)` and `h₁ = r/v`, so the
//! corner speed `v_c = k·v` satisfies `v_c²·sin(θ/2)/r = a_max`: `v_c = √(a_max·r/sin(θ/2))`.
//! With unequal speeds the faster side runs at `v_c = k·max(|v_in|, |v_out|)` and the slower
//! in proportion (the ratio of the programmed speeds is kept through the corner).
//!
//! The segments on either side ramp to and from the corner's rates ([`super::SegmentTiming`]).
//! Each corner may count on half of each neighbouring segment for its ramp, where a ramp
//! from rest reaches `v² = 2·a·(L/2) = a·L` (`a` the segment's acceleration along its line,
//! `L` its length): `k ≤ √(a·L)/v` on each side ([`corner_scale`]). Two corners sharing a
//! segment then never ask it for more than its length's worth of speed change; a shorter
//! ramp left between two windows may still be overdriven ([`super::Ramp::overdriven`]).

use crate::rotation;
use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};

/// A blended corner, evaluated at time `τ` relative to the unblended corner time `t_P`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Corner {
    /// The corner waypoint (base frame).
    base_T_corner: Isometry3<f64>,
    /// Velocities (m/s) and spatial angular velocities (rad/s) in and out, base frame.
    v_in: Vector3<f64>,
    v_out: Vector3<f64>,
    w_in: Vector3<f64>,
    w_out: Vector3<f64>,
    /// Half the blend window (s), > 0.
    half: f64,
    /// Rates through the corner over the cruise rates, in (0, 1] (see the module doc).
    scale: f64,
}

/// The size of a blend window, and whether the radius asked for had to shrink.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Window {
    /// Half the window (s); 0 for no blend. [`Window::new`] gives it at the cruise rates;
    /// the plan stores the half of the corner as run ([`Corner::slowed`]), longer where the
    /// corner slows.
    pub half: f64,
    /// Distance from the corner at which the blend leaves the incoming line (m).
    pub radius_in: f64,
    /// Distance from the corner at which the blend joins the outgoing line (m).
    pub radius_out: f64,
    /// The radius asked for exceeded half of a neighbouring segment and was cut to it.
    pub clipped: bool,
}

impl Window {
    /// The window for blend radius `radius` (m) between a segment of length `len_in` (m)
    /// crossed in `dur_in` (s) at cruise and one of `len_out` crossed in `dur_out`.
    ///
    /// The window lasts `2·radius / max(speed_in, speed_out)`, so the faster side leaves or
    /// joins its line exactly `radius` from the corner and the slower side proportionally
    /// closer (the blend keeps each line's speed at its ends). It is cut so that neither side
    /// uses more than half of its segment (`h ≤ dur/2`), leaving the other half for the blend
    /// at that segment's other end; then `clipped` is set. A radius ≤ 0, a zero-length or
    /// zero-duration neighbour, or non-finite input give no blend (`half = 0`).
    pub fn new(radius: f64, len_in: f64, dur_in: f64, len_out: f64, dur_out: f64) -> Window {
        let none = Window {
            half: 0.0,
            radius_in: 0.0,
            radius_out: 0.0,
            clipped: false,
        };
        let all_finite = [radius, len_in, dur_in, len_out, dur_out]
            .iter()
            .all(|v| v.is_finite());
        if !all_finite || radius <= 0.0 || len_in <= 0.0 || len_out <= 0.0 {
            return none;
        }
        if dur_in <= 0.0 || dur_out <= 0.0 {
            return none;
        }
        let (speed_in, speed_out) = (len_in / dur_in, len_out / dur_out);
        let wanted = radius / speed_in.max(speed_out);
        let cap = 0.5 * dur_in.min(dur_out);
        let half = wanted.min(cap);
        Window {
            half,
            radius_in: speed_in * half,
            radius_out: speed_out * half,
            clipped: wanted > cap * (1.0 + 1e-12),
        }
    }
}

impl Corner {
    /// The blend at corner pose `base_T_corner` between incoming velocity `v_in`, angular
    /// velocity `w_in` and outgoing `v_out`, `w_out` (base frame, SI), over `[−half, half]`
    /// (s, > 0; see [`Window`]).
    pub fn new(
        base_T_corner: Isometry3<f64>,
        (v_in, w_in): (Vector3<f64>, Vector3<f64>),
        (v_out, w_out): (Vector3<f64>, Vector3<f64>),
        half: f64,
    ) -> Corner {
        Corner {
            base_T_corner,
            v_in,
            v_out,
            w_in,
            w_out,
            half,
            scale: 1.0,
        }
    }

    /// The same corner run with every rate scaled by `scale` (clamped into (0, 1]; a
    /// non-finite or non-positive value leaves the corner as it is): the same curve in
    /// `1/scale` times the time, velocities `scale` times, accelerations `scale²` times. Scales
    /// compose.
    pub fn slowed(self, scale: f64) -> Corner {
        if !(scale.is_finite() && scale > 0.0) {
            return self;
        }
        let k = scale.min(1.0);
        Corner {
            v_in: self.v_in * k,
            v_out: self.v_out * k,
            w_in: self.w_in * k,
            w_out: self.w_out * k,
            half: self.half / k,
            scale: self.scale * k,
            ..self
        }
    }

    /// Rates through the corner over the cruise rates the corner was built with, in (0, 1]:
    /// 1 unless [`Corner::slowed`].
    pub fn scale(&self) -> f64 {
        self.scale
    }

    /// Tool angular acceleration inside the window (rad/s², base frame, the second
    /// derivative of the rotation vector `φ`): `(w_out − w_in)/(2h)`.
    pub fn angular_acceleration(&self) -> Vector3<f64> {
        (self.w_out - self.w_in) / (2.0 * self.half)
    }

    /// Half the blend window (s).
    pub fn half(&self) -> f64 {
        self.half
    }

    /// `σ` (clamped to the window) and the quadratic's coefficient `σ²/(4h)`.
    fn sigma(&self, tau: f64) -> (f64, f64) {
        let s = (tau + self.half).clamp(0.0, 2.0 * self.half);
        (s, s * s / (4.0 * self.half))
    }

    /// TCP pose at time `tau` (s) from the unblended corner time, clamped to the window.
    pub fn pose_at(&self, tau: f64) -> Isometry3<f64> {
        let (s, q) = self.sigma(tau);
        let h = self.half;
        let p = self.base_T_corner.translation.vector - self.v_in * h
            + self.v_in * s
            + (self.v_out - self.v_in) * q;
        let phi = self.w_in * (s - h) + (self.w_out - self.w_in) * q;
        let r: UnitQuaternion<f64> = rotation::exp(&phi) * self.base_T_corner.rotation;
        Isometry3::from_parts(Translation3::from(p), r)
    }

    /// TCP velocity (m/s, base frame) at time `tau`, clamped to the window.
    pub fn velocity_at(&self, tau: f64) -> Vector3<f64> {
        let (s, _) = self.sigma(tau);
        self.v_in + (self.v_out - self.v_in) * (s / (2.0 * self.half))
    }

    /// The constant TCP acceleration inside the window (m/s², base frame).
    pub fn acceleration(&self) -> Vector3<f64> {
        (self.v_out - self.v_in) / (2.0 * self.half)
    }

    /// Length of the rounded curve (m): `∫|velocity|` over the window by 8-point
    /// Gauss–Legendre on 4 panels (the speed is the square root of a quadratic in time, so
    /// the rule is accurate to far below a micrometre for any corner).
    pub fn length(&self) -> f64 {
        const NODES: [f64; 4] = [
            0.183_434_642_495_649_8,
            0.525_532_409_916_329,
            0.796_666_477_413_626_7,
            0.960_289_856_497_536_3,
        ];
        const WEIGHTS: [f64; 4] = [
            0.362_683_783_378_362,
            0.313_706_645_877_887_3,
            0.222_381_034_453_374_5,
            0.101_228_536_290_376_3,
        ];
        const PANELS: usize = 4;
        let width = 2.0 * self.half / PANELS as f64;
        let mut total = 0.0;
        for p in 0..PANELS {
            let mid = -self.half + width * (p as f64 + 0.5);
            for (x, w) in NODES.iter().zip(WEIGHTS) {
                for sign in [-1.0, 1.0] {
                    let tau = mid + sign * x * 0.5 * width;
                    total += w * 0.5 * width * self.velocity_at(tau).norm();
                }
            }
        }
        total
    }
}

/// The largest rate scale `k ∈ (0, 1]` for `corner` (built at the cruise rates) that keeps
/// its TCP acceleration within `tcp_accel` (m/s²) and its tool angular acceleration within
/// `tool_accel` (rad/s²), and that the neighbouring segments can reach: `reach_in` /
/// `reach_out` are the incoming / outgoing segment's [`reach_scale`]. See the module doc for
/// the derivation. A corner whose velocity and angular velocity do not change (a straight
/// continuation) is bound by the reach only; a non-positive or NaN limit bounds nothing
/// (the caller validates limits), and the result is never below the smallest positive bound.
pub fn corner_scale(
    corner: &Corner,
    tcp_accel: f64,
    tool_accel: f64,
    reach_in: f64,
    reach_out: f64,
) -> f64 {
    let two_h = 2.0 * corner.half;
    let bound = |limit: f64, change: f64| {
        if limit > 0.0 && change > 0.0 {
            (two_h * limit / change).sqrt()
        } else {
            f64::INFINITY
        }
    };
    [
        bound(tcp_accel, (corner.v_out - corner.v_in).norm()),
        bound(tool_accel, (corner.w_out - corner.w_in).norm()),
        reach_in,
        reach_out,
    ]
    .into_iter()
    .filter(|k| *k > 0.0)
    .fold(1.0, f64::min)
}

/// The largest rate scale a segment reaches from rest within half of its length: with `u`
/// (the segment parameter, length 1) accelerating by `u_accel` (1/s²) and the cruise rate
/// `1/cruise` (`cruise` in s), `(k/cruise)² ≤ 2·u_accel·½` gives `k ≤ cruise·√u_accel`.
/// Infinite for an unbounded acceleration; 0 only for a zero input (then
/// [`corner_scale`] ignores it).
pub fn reach_scale(u_accel: f64, cruise: f64) -> f64 {
    cruise * u_accel.sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use nalgebra::Vector3;

    /// A 90° corner at the origin: in along +x, out along +y, both at `v`, blend radius `r`.
    fn right_angle(v: f64, r: f64) -> Corner {
        let w = Window::new(r, 1.0, 1.0 / v, 1.0, 1.0 / v);
        Corner::new(
            Isometry3::identity(),
            (Vector3::x() * v, Vector3::zeros()),
            (Vector3::y() * v, Vector3::zeros()),
            w.half,
        )
    }

    /// The window of a [`right_angle`] corner of radius `r` begins `r` before the corner
    /// along x and ends `r` after it along y. source: common practice (the blend's control
    /// points `P ∓ v·h`, module doc)
    fn assert_ends_on_the_lines(c: &Corner, r: f64) {
        assert_relative_eq!(
            c.pose_at(-c.half()).translation.vector,
            Vector3::new(-r, 0.0, 0.0),
            epsilon = 1e-15
        );
        assert_relative_eq!(
            c.pose_at(c.half()).translation.vector,
            Vector3::new(0.0, r, 0.0),
            epsilon = 1e-15
        );
    }

    #[test]
    fn right_angle_blend_stays_within_radius_and_has_the_analytic_length() {
        // In along +x, out along +y at 0.1 m/s, r = 10 mm. The curve is the quadratic Bézier
        // A = (−r, 0), P = 0, B = (0, r) with |dp/dt| = 2r·√(2t² − 2t + 1), t ∈ [0, 1]; with
        // w = t − ½ its length is 2r·√2·∫_{−½}^{½} √(w² + ¼) dw = r·(1 + asinh(1)/√2) ≈ 1.6232·r.
        // source: standard integral ∫√(w²+a²)dw = (w√(w²+a²) + a²·ln(w+√(w²+a²)))/2
        // (from memory)
        let (v, r) = (0.1, 0.01);
        let c = right_angle(v, r);
        let a: f64 = 0.5;
        let f =
            |w: f64| 0.5 * (w * (w * w + a * a).sqrt() + a * a * (w + (w * w + a * a).sqrt()).ln());
        let analytic = 2.0 * r * 2f64.sqrt() * (f(0.5) - f(-0.5));
        assert_relative_eq!(c.length(), analytic, epsilon = 1e-12);
        // The same value written with asinh, shorter than the sharp corner's 2r.
        // source: ln((1+√2)/(√2−1)) = 2·asinh(1) (from memory)
        assert_relative_eq!(
            c.length(),
            r * (1.0 + 1f64.asinh() / 2f64.sqrt()),
            epsilon = 1e-12
        );
        // Within r of the corner everywhere (sampled finely), ends exactly r along each line.
        // source: common practice (convex hull of the Bézier control points)
        for i in 0..=1000 {
            let tau = -c.half() + 2.0 * c.half() * i as f64 / 1000.0;
            let d = c.pose_at(tau).translation.vector.norm();
            assert!(d <= r * (1.0 + 1e-12), "{d} > {r}");
        }
        assert_ends_on_the_lines(&c, r);
    }

    #[test]
    fn blend_meets_both_lines_tangentially_with_their_speeds() {
        // Finite differences of the position at the window ends equal v_in and v_out, and
        // the sampled polyline length converges to the quadrature length.
        // source: common practice (C¹ continuity checked by finite differences)
        let (v, r) = (0.2, 0.005);
        let c = right_angle(v, r);
        let eps = 1e-7;
        let h = c.half();
        let start =
            (c.pose_at(-h + eps).translation.vector - c.pose_at(-h).translation.vector) / eps;
        let end = (c.pose_at(h).translation.vector - c.pose_at(h - eps).translation.vector) / eps;
        assert_relative_eq!(start, Vector3::new(v, 0.0, 0.0), epsilon = 1e-6);
        assert_relative_eq!(end, Vector3::new(0.0, v, 0.0), epsilon = 1e-6);
        let n = 20_000;
        let mut polyline = 0.0;
        for i in 0..n {
            let a = c
                .pose_at(-h + 2.0 * h * i as f64 / n as f64)
                .translation
                .vector;
            let b = c
                .pose_at(-h + 2.0 * h * (i + 1) as f64 / n as f64)
                .translation
                .vector;
            polyline += (b - a).norm();
        }
        assert!((polyline - c.length()).abs() < 1e-9 * r.max(1.0));
        // The speed dips to v/√2 at the middle of a right-angle corner.
        // source: common practice (|v_in + v_out|/2 with v_in ⊥ v_out)
        assert_relative_eq!(c.velocity_at(0.0).norm(), v / 2f64.sqrt(), epsilon = 1e-15);
    }

    /// Spatial angular velocity by a central difference: log(R(τ+ε)·R(τ−ε)ᵀ)/(2ε).
    fn omega(c: &Corner, tau: f64, eps: f64) -> Vector3<f64> {
        let a = c.pose_at(tau - eps).rotation;
        let b = c.pose_at(tau + eps).rotation;
        rotation::log(&(b * a.inverse())) / (2.0 * eps)
    }

    #[test]
    fn angular_velocity_is_continuous_across_a_blended_corner() {
        // Incoming: 0.5 rad/s about z; outgoing: 0.4 rad/s about x (plus some y), corner
        // orientation arbitrary. Outside the window the tool turns on each segment's
        // geodesic exp(τ·w)·R_P; the blend must join both without a step in angular
        // velocity, and change smoothly inside.
        // source: common practice (continuity checked by finite differences)
        let r_p = rotation::from_rpy(0.3, -0.4, 1.1);
        let w_in = Vector3::new(0.0, 0.0, 0.5);
        let w_out = Vector3::new(0.4, 0.1, 0.0);
        let v = 0.1;
        let half = 0.2;
        let c = Corner::new(
            Isometry3::from_parts(Translation3::identity(), r_p),
            (Vector3::x() * v, w_in),
            (Vector3::y() * v, w_out),
            half,
        );
        // At the window ends the blend turns like the segments: estimates 10 µs inside the
        // window differ from w_in / w_out only by the blend's angular acceleration
        // (|w_out − w_in|/2h ≈ 1.6 rad/s²) times 10 µs, where a step would differ by 0.64.
        let (inside, eps) = (1e-5, 1e-7);
        assert_relative_eq!(omega(&c, -half + inside, eps), w_in, epsilon = 5e-5);
        assert_relative_eq!(omega(&c, half - inside, eps), w_out, epsilon = 5e-5);
        let eps = 1e-6;
        // And it sits on the geodesics there: exp(∓h·w)·R_P.
        let on_in = rotation::exp(&(-w_in * half)) * r_p;
        let on_out = rotation::exp(&(w_out * half)) * r_p;
        assert!(rotation::angle_between(&c.pose_at(-half).rotation, &on_in) < 1e-14);
        assert!(rotation::angle_between(&c.pose_at(half).rotation, &on_out) < 1e-14);
        // Across the window the angular velocity changes by small steps only: the largest
        // change between neighbouring estimates 1/400 of the window apart stays below 1 %
        // of |w_out − w_in|, and the estimates just outside the window match inside.
        let n = 400;
        let mut prev = omega(&c, -half + eps, eps);
        let total = (w_out - w_in).norm();
        for i in 1..=n {
            let tau = -half + 2.0 * half * i as f64 / n as f64;
            let now = omega(&c, tau.min(half - eps), eps);
            assert!((now - prev).norm() < 0.01 * total, "step at {tau}");
            prev = now;
        }
    }

    #[test]
    fn a_fast_right_angle_slows_to_the_corner_speed_the_tcp_limit_allows() {
        // 90° at v = 0.5 m/s, r = 20 mm, a = 2 m/s²: at cruise the blend accelerates by
        // v²·sin 45°/r = 8.84 m/s²; the corner speed v_c = √(a·r/sin 45°) = 0.23784 m/s
        // brings it to a. Slowed, the window lasts 2r/v_c, the speed in its middle is
        // v_c·cos 45°, and its ends still lie r along each line.
        // source: |v_out − v_in| = 2v·sin(θ/2) for equal speeds (common practice); the
        // acceleration (v_out − v_in)/(2h) of a linear velocity change (module doc)
        let (v, r, a) = (0.5, 0.02, 2.0);
        let c = right_angle(v, r);
        assert_relative_eq!(
            c.acceleration().norm(),
            v * v * 45f64.to_radians().sin() / r,
            epsilon = 1e-12
        );
        let v_c = (a * r / 45f64.to_radians().sin()).sqrt();
        assert_relative_eq!(v_c, 0.23784, epsilon = 1e-5);
        let k = corner_scale(&c, a, f64::INFINITY, f64::INFINITY, f64::INFINITY);
        assert_relative_eq!(k * v, v_c, epsilon = 1e-12);
        let s = c.slowed(k);
        assert_relative_eq!(s.scale(), k, epsilon = 1e-15);
        assert_relative_eq!(s.acceleration().norm(), a, epsilon = 1e-12);
        assert_relative_eq!(s.half(), r / v_c, epsilon = 1e-12);
        assert_relative_eq!(
            s.velocity_at(0.0).norm(),
            v_c * 45f64.to_radians().cos(),
            epsilon = 1e-12
        );
        assert_ends_on_the_lines(&s, r);
        // Slow enough already: k = 1. A reach bound below the acceleration's wins; a zero or
        // NaN bound is ignored.
        // source: common practice (the smallest of the bounds holds them all)
        let slow = right_angle(0.01, r);
        assert_eq!(
            corner_scale(&slow, a, 1.0, f64::INFINITY, f64::INFINITY),
            1.0
        );
        assert_eq!(corner_scale(&c, a, f64::INFINITY, 0.3, 0.4), 0.3);
        assert_relative_eq!(
            corner_scale(&c, a, f64::NAN, 0.0, f64::NAN),
            k,
            epsilon = 1e-15
        );
    }

    #[test]
    fn a_fast_reorientation_in_a_corner_is_slowed_by_the_tool_limit() {
        // Straight on at 0.1 m/s (no TCP acceleration), the tool's angular velocity changing
        // from 0 to 1 rad/s about z over a window of 2h₁ = 0.2 s: 5 rad/s² at cruise. With
        // α = 0.5 rad/s², k² = 2h₁·α/|Δw| = 0.2·0.5/1 = 0.1, and the slowed corner's angular
        // acceleration k·|Δw|/(2h₁/k) is α.
        // source: the angular part of the corner speed (module doc, derived there)
        let c = Corner::new(
            Isometry3::identity(),
            (Vector3::x() * 0.1, Vector3::zeros()),
            (Vector3::x() * 0.1, Vector3::z()),
            0.1,
        );
        assert_relative_eq!(c.angular_acceleration().norm(), 5.0, epsilon = 1e-12);
        let k = corner_scale(&c, 2.0, 0.5, f64::INFINITY, f64::INFINITY);
        assert_relative_eq!(k, 0.1f64.sqrt(), epsilon = 1e-12);
        let s = c.slowed(k);
        assert_relative_eq!(s.angular_acceleration().norm(), 0.5, epsilon = 1e-12);
        assert_relative_eq!(s.acceleration().norm(), 0.0, epsilon = 1e-15);
        // The same rotation at the window's end: slowing changes time, not the path.
        assert!(
            rotation::angle_between(&s.pose_at(s.half()).rotation, &c.pose_at(c.half()).rotation)
                < 1e-14
        );
    }

    #[test]
    fn window_is_clipped_to_half_of_each_neighbour() {
        // 10 mm radius asked for between a 12 mm and a 100 mm segment at the same speed:
        // cut to 6 mm (half of 12 mm), and flagged.
        // source: common practice (two blends on one segment must not overlap)
        let w = Window::new(0.010, 0.012, 0.12, 0.100, 1.0);
        assert!(w.clipped);
        assert_relative_eq!(w.radius_in, 0.006, epsilon = 1e-15);
        assert_relative_eq!(w.radius_out, 0.006, epsilon = 1e-15);
        // Slower outgoing side (half the speed) joins its line at half the distance.
        let w = Window::new(0.010, 0.1, 1.0, 0.1, 2.0);
        assert!(!w.clipped);
        assert_relative_eq!(w.radius_in, 0.010, epsilon = 1e-15);
        assert_relative_eq!(w.radius_out, 0.005, epsilon = 1e-15);
        // No blend for radius 0, a zero-length neighbour or non-finite input.
        assert_eq!(Window::new(0.0, 1.0, 1.0, 1.0, 1.0).half, 0.0);
        assert_eq!(Window::new(0.01, 0.0, 1.0, 1.0, 1.0).half, 0.0);
        assert_eq!(Window::new(f64::NAN, 1.0, 1.0, 1.0, 1.0).half, 0.0);
    }
}
