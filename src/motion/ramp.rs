//! The 1-D speed profile of one move: accelerate at a constant rate, cruise, decelerate at
//! the same rate (a trapezoid in speed over time; a triangle when the move is too short to
//! reach the cruise speed). The move may start and end moving (a blended corner hands over
//! at cruise speed), so the profile takes a start and an end speed.
//!
//! The coordinate is any length-like quantity: metres of TCP path, or the dimensionless
//! parameter `u ∈ [0, 1]` of a segment or joint move (then speeds are 1/s and accelerations
//! 1/s²). Jerk is not limited: acceleration steps at the phase boundaries.

/// A speed profile over a length, evaluated in closed form. Every method is allocation-free
/// and accepts any input (times and distances outside the move are clamped to it).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ramp {
    length: f64,
    /// Speed at the start and the end.
    v0: f64,
    v1: f64,
    /// Highest speed reached: the cruise speed, or less for a triangle.
    peak: f64,
    /// Acceleration used in both ramps (≥ the limit asked for only when `overdriven`).
    accel: f64,
    /// Durations of the three phases (s).
    t_up: f64,
    t_flat: f64,
    t_down: f64,
    /// Distances of the first two phases.
    s_up: f64,
    s_flat: f64,
    /// The length was too short to change from `v0` to `v1` within the acceleration asked
    /// for; the profile uses the acceleration the change needs instead.
    overdriven: bool,
}

impl Ramp {
    /// The fastest profile over `length` (≥ 0) that starts at speed `v0`, ends at `v1`, never
    /// exceeds `cruise` and accelerates by at most `accel` (> 0; `f64::INFINITY` gives a
    /// constant-speed move with speed steps at its ends).
    ///
    /// `v0` and `v1` are clamped into `[0, cruise]`. When `length` is too short to change from
    /// `v0` to `v1` at `accel`, the profile is one ramp at the acceleration that change needs
    /// and [`Ramp::overdriven`] is true. Non-finite or non-positive `cruise` or a non-finite
    /// `length` give an empty profile (duration 0): callers validate their inputs first.
    pub fn new(length: f64, v0: f64, cruise: f64, v1: f64, accel: f64) -> Ramp {
        let empty = Ramp {
            length: 0.0,
            v0: 0.0,
            v1: 0.0,
            peak: 0.0,
            accel: 0.0,
            t_up: 0.0,
            t_flat: 0.0,
            t_down: 0.0,
            s_up: 0.0,
            s_flat: 0.0,
            overdriven: false,
        };
        let valid = length.is_finite() && length > 0.0 && cruise.is_finite() && cruise > 0.0;
        if !valid || accel.is_nan() || accel <= 0.0 {
            return empty;
        }
        let v0 = v0.clamp(0.0, cruise);
        let v1 = v1.clamp(0.0, cruise);
        if accel.is_infinite() {
            return Ramp {
                length,
                v0,
                v1,
                peak: cruise,
                accel,
                t_flat: length / cruise,
                s_flat: length,
                ..empty
            };
        }
        // Changing from v0 to v1 takes |v1² − v0²| / (2a) of length.
        let needed = (v1 * v1 - v0 * v0).abs() / (2.0 * length);
        let (accel, overdriven) = if needed > accel {
            (needed, true)
        } else {
            (accel, false)
        };
        // Peak of the triangle with no cruise cap: v² = a·L + (v0² + v1²)/2.
        let peak = (accel * length + 0.5 * (v0 * v0 + v1 * v1))
            .sqrt()
            .min(cruise)
            .max(v0.max(v1));
        let s_up = ((peak * peak - v0 * v0) / (2.0 * accel)).max(0.0);
        let s_down = ((peak * peak - v1 * v1) / (2.0 * accel)).max(0.0);
        let s_flat = (length - s_up - s_down).max(0.0);
        Ramp {
            length,
            v0,
            v1,
            peak,
            accel,
            t_up: (peak - v0) / accel,
            t_flat: if s_flat > 0.0 { s_flat / peak } else { 0.0 },
            t_down: (peak - v1) / accel,
            s_up,
            s_flat,
            overdriven,
        }
    }

    /// The profile from rest to rest over `length` at acceleration `accel` that lasts
    /// `duration` (s), or the fastest one when `duration` is shorter than that: used to
    /// stretch a move to a slower partner's time. The cruise speed solves
    /// `length / v + v / accel = duration` (smaller root).
    pub fn rest_to_rest_lasting(length: f64, accel: f64, duration: f64, cruise: f64) -> Ramp {
        let fastest = Ramp::new(length, 0.0, cruise, 0.0, accel);
        if duration.is_nan() || duration <= fastest.duration() {
            return fastest;
        }
        if accel.is_infinite() {
            return Ramp::new(length, 0.0, length / duration, 0.0, accel);
        }
        // v² − a·T·v + a·L = 0; the smaller root keeps v ≤ a·T/2 (a real trapezoid).
        let (a, t) = (accel, duration);
        let disc = (a * a * t * t - 4.0 * a * length).max(0.0);
        // Stable form of (aT − √disc)/2 = 2aL / (aT + √disc).
        let v = 2.0 * a * length / (a * t + disc.sqrt());
        Ramp::new(length, 0.0, v, 0.0, accel)
    }

    /// Total time (s).
    pub fn duration(&self) -> f64 {
        self.t_up + self.t_flat + self.t_down
    }

    /// Length covered.
    pub fn length(&self) -> f64 {
        self.length
    }

    /// Highest speed reached.
    pub fn peak(&self) -> f64 {
        self.peak
    }

    /// Acceleration magnitude of the ramps.
    pub fn accel(&self) -> f64 {
        self.accel
    }

    /// True when the length was too short for the acceleration asked for (see [`Ramp::new`]).
    pub fn overdriven(&self) -> bool {
        self.overdriven
    }

    /// Distance covered at time `t` (clamped to `[0, duration]`).
    pub fn s_at(&self, t: f64) -> f64 {
        let t = t.clamp(0.0, self.duration());
        if t <= self.t_up {
            return self.v0 * t + 0.5 * self.accel * t * t;
        }
        if t <= self.t_up + self.t_flat {
            return self.s_up + self.peak * (t - self.t_up);
        }
        let tau = self.duration() - t;
        (self.length - (self.v1 * tau + 0.5 * self.accel * tau * tau)).max(0.0)
    }

    /// Time at which distance `s` (clamped to `[0, length]`) is reached.
    pub fn t_at(&self, s: f64) -> f64 {
        let s = s.clamp(0.0, self.length);
        if self.length == 0.0 || s == 0.0 {
            return 0.0;
        }
        if s <= self.s_up && self.t_up > 0.0 {
            // s = v0·t + a·t²/2, solved without cancellation.
            return 2.0 * s / (self.v0 + (self.v0 * self.v0 + 2.0 * self.accel * s).sqrt());
        }
        if s <= self.s_up + self.s_flat && self.peak > 0.0 {
            return self.t_up + (s - self.s_up) / self.peak;
        }
        let r = self.length - s;
        let root = (self.v1 * self.v1 + 2.0 * self.accel * r).sqrt();
        let tau = if self.v1 + root > 0.0 {
            2.0 * r / (self.v1 + root)
        } else {
            0.0
        };
        (self.duration() - tau).max(0.0)
    }

    /// Speed at time `t` (clamped to `[0, duration]`).
    pub fn speed_at(&self, t: f64) -> f64 {
        let t = t.clamp(0.0, self.duration());
        if t < self.t_up {
            self.v0 + self.accel * t
        } else if t <= self.t_up + self.t_flat {
            self.peak
        } else {
            self.v1 + self.accel * (self.duration() - t)
        }
    }

    /// Signed acceleration at time `t`: `+accel` while speeding up, 0 cruising, `−accel`
    /// slowing down (the later phase at a boundary).
    pub fn accel_at(&self, t: f64) -> f64 {
        if t < self.t_up {
            self.accel
        } else if t < self.t_up + self.t_flat || self.t_down == 0.0 {
            0.0
        } else {
            -self.accel
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn trapezoid_time_matches_closed_form() {
        // Rest to rest over L = 0.3 m at v = 0.1 m/s, a = 0.5 m/s²: v²/a = 0.02 m < L, so the
        // cruise speed is reached and T = L/v + v/a = 3.0 + 0.2 = 3.2 s.
        // source: trapezoidal velocity profile, T = L/v + v/a (Biagiotti & Melchiorri 2008,
        // §3.2.2; from memory)
        let r = Ramp::new(0.3, 0.0, 0.1, 0.0, 0.5);
        assert_relative_eq!(r.duration(), 3.2, epsilon = 1e-12);
        assert_relative_eq!(r.peak(), 0.1, epsilon = 1e-15);
        assert!(!r.overdriven());
        // Half way in time is half way in distance (the profile is symmetric).
        // source: common practice (symmetry of the rest-to-rest trapezoid)
        assert_relative_eq!(r.s_at(1.6), 0.15, epsilon = 1e-12);
    }

    #[test]
    fn triangle_time_matches_closed_form() {
        // L = 0.01 m, v = 0.5 m/s, a = 1 m/s²: v²/a = 0.25 m > L, so the profile is a triangle
        // with T = 2·√(L/a) = 0.2 s and peak √(a·L) = 0.1 m/s.
        // source: triangular velocity profile (Biagiotti & Melchiorri 2008, §3.2.2; from memory)
        let r = Ramp::new(0.01, 0.0, 0.5, 0.0, 1.0);
        assert_relative_eq!(r.duration(), 0.2, epsilon = 1e-12);
        assert_relative_eq!(r.peak(), 0.1, epsilon = 1e-12);
    }

    #[test]
    fn moving_ends_shorten_the_ramps() {
        // From cruise v = 0.1 m/s to rest over 0.3 m at 0.5 m/s²: the cruise lasts
        // (0.3 − 0.01)/0.1 = 2.9 s, the stop v/a = 0.2 s: T = 3.1 s.
        // source: common practice (kinematics of constant acceleration, s = v²/2a)
        let r = Ramp::new(0.3, 0.1, 0.1, 0.0, 0.5);
        assert_relative_eq!(r.duration(), 3.1, epsilon = 1e-12);
        assert_relative_eq!(r.speed_at(0.0), 0.1, epsilon = 1e-15);
        assert_relative_eq!(r.accel_at(3.0), -0.5, epsilon = 1e-15);
    }

    #[test]
    fn time_of_distance_inverts_distance_of_time() {
        // source: common practice (t_at is the inverse of s_at on a monotone profile)
        for r in [
            Ramp::new(0.3, 0.0, 0.1, 0.0, 0.5),
            Ramp::new(0.01, 0.0, 0.5, 0.0, 1.0),
            Ramp::new(0.2, 0.05, 0.1, 0.02, 0.3),
        ] {
            for i in 0..=100 {
                let t = r.duration() * i as f64 / 100.0;
                assert_relative_eq!(r.t_at(r.s_at(t)), t, epsilon = 1e-9);
            }
            assert_relative_eq!(r.s_at(r.duration()), r.length(), epsilon = 1e-12);
        }
    }

    #[test]
    fn speed_is_the_derivative_of_distance() {
        // Central differences of s(t) against speed_at. source: common practice
        let r = Ramp::new(0.2, 0.05, 0.1, 0.02, 0.3);
        let h = 1e-6;
        for i in 1..100 {
            let t = r.duration() * i as f64 / 100.0;
            let fd = (r.s_at(t + h) - r.s_at(t - h)) / (2.0 * h);
            assert!(
                (fd - r.speed_at(t)).abs() < 1e-6,
                "t {t}: {fd} vs {}",
                r.speed_at(t)
            );
        }
    }

    #[test]
    fn too_short_to_brake_is_overdriven() {
        // Braking from 0.1 m/s to rest in 1 mm needs a = v²/(2L) = 5 m/s², above the 0.5 asked.
        // source: common practice (s = v²/2a)
        let r = Ramp::new(0.001, 0.1, 0.1, 0.0, 0.5);
        assert!(r.overdriven());
        assert_relative_eq!(r.accel(), 5.0, epsilon = 1e-12);
        assert_relative_eq!(r.duration(), 0.02, epsilon = 1e-12);
    }

    #[test]
    fn degenerate_inputs_give_an_empty_profile() {
        // source: common practice (no panic, no NaN on any input)
        for r in [
            Ramp::new(0.0, 0.0, 0.1, 0.0, 1.0),
            Ramp::new(f64::NAN, 0.0, 0.1, 0.0, 1.0),
            Ramp::new(1.0, 0.0, 0.0, 0.0, 1.0),
            Ramp::new(1.0, 0.0, 0.1, 0.0, f64::NAN),
        ] {
            assert_eq!(r.duration(), 0.0);
            assert_eq!(r.t_at(0.5), 0.0);
            assert!(r.s_at(1.0).is_finite());
        }
        let flat = Ramp::new(1.0, 0.0, 0.5, 0.0, f64::INFINITY);
        assert_relative_eq!(flat.duration(), 2.0, epsilon = 1e-15);
        assert_relative_eq!(flat.t_at(0.5), 1.0, epsilon = 1e-15);
    }

    #[test]
    fn stretched_profile_lasts_the_time_asked() {
        // L = 1, a = 2: fastest with cruise 1 is 1/1 + 1/2 = 1.5 s; stretched to 3 s the cruise
        // speed solves 1/v + v/2 = 3, v = 3 − √7 ≈ 0.354 (smaller root).
        // source: common practice (quadratic v² − aTv + aL = 0)
        let r = Ramp::rest_to_rest_lasting(1.0, 2.0, 3.0, 1.0);
        assert_relative_eq!(r.duration(), 3.0, epsilon = 1e-12);
        assert_relative_eq!(r.peak(), 3.0 - 7f64.sqrt(), epsilon = 1e-12);
        let fastest = Ramp::rest_to_rest_lasting(1.0, 2.0, 0.5, 1.0);
        assert_relative_eq!(fastest.duration(), 1.5, epsilon = 1e-12);
    }
}
