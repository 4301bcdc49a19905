//! The synchronised joint move: every joint follows `q0 + Δq · u(t)` with one shared
//! profile `u(t)` from 0 to 1, so all joints start, accelerate, cruise, slow down and arrive
//! together and the TCP path does not depend on which joint is slowest.
//!
//! Joint `i` moves at `|Δqᵢ| · u̇` and accelerates at `|Δqᵢ| · ü`; keeping both within its
//! limits for every joint caps `u̇` at `minᵢ vᵢ / |Δqᵢ|` and `ü` at `minᵢ aᵢ / |Δqᵢ|`. The
//! profile of `u` is the [`Ramp`] over length 1 with those caps: the joint with the smallest
//! headroom runs at its limit, the others below theirs.

use super::ramp::Ramp;

/// Joint changes below this (rad or m) count as no motion: they set no bound on the shared
/// profile (dividing a speed limit by a change of 1e-300 would overflow to infinity anyway,
/// and 1e-12 rad is far below any controller's resolution).
const STILL_JOINT: f64 = 1e-12;

/// The shared profile of a joint move.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SyncedMove {
    /// Profile of the shared parameter `u` over length 1 (speeds 1/s, accelerations 1/s²).
    pub ramp: Ramp,
    /// Joint that bounds the speed of `u` (its speed reaches the limit at cruise), if any.
    pub speed_joint: Option<usize>,
    /// Joint that bounds the acceleration of `u`, if any.
    pub accel_joint: Option<usize>,
}

impl SyncedMove {
    /// The fastest synchronised move for joint changes `delta` (rad or m per joint) with
    /// per-joint allowed speeds `speed` (> 0) and accelerations `accel` (> 0), lasting at least
    /// `min_duration` (s; 0 for none). `fraction` ∈ (0, 1] is the programmed share of each
    /// joint's allowed speed. Slices shorter than `delta` leave the extra joints unbounded.
    /// A move where no joint changes lasts `min_duration` at most (0 when that is 0).
    pub fn new(
        delta: &[f64],
        speed: &[f64],
        accel: &[f64],
        fraction: f64,
        min_duration: f64,
    ) -> SyncedMove {
        let mut u_speed = f64::INFINITY;
        let mut u_accel = f64::INFINITY;
        let (mut speed_joint, mut accel_joint) = (None, None);
        for (i, d) in delta.iter().enumerate() {
            let d = d.abs();
            if d.is_nan() || d <= STILL_JOINT {
                continue;
            }
            if let Some(v) = speed.get(i) {
                let bound = fraction * v / d;
                if bound < u_speed {
                    u_speed = bound;
                    speed_joint = Some(i);
                }
            }
            if let Some(a) = accel.get(i) {
                let bound = a / d;
                if bound < u_accel {
                    u_accel = bound;
                    accel_joint = Some(i);
                }
            }
        }
        let min_duration = if min_duration.is_finite() {
            min_duration.max(0.0)
        } else {
            0.0
        };
        let ramp = if u_speed.is_finite() {
            Ramp::rest_to_rest_lasting(1.0, u_accel, min_duration, u_speed)
        } else if min_duration > 0.0 {
            // Nothing bounds the joints (none moves): the Cartesian time alone.
            Ramp::new(1.0, 0.0, 1.0 / min_duration, 0.0, f64::INFINITY)
        } else {
            Ramp::new(0.0, 0.0, 1.0, 0.0, 1.0)
        };
        SyncedMove {
            ramp,
            speed_joint,
            accel_joint,
        }
    }

    /// Duration of the move (s).
    pub fn duration(&self) -> f64 {
        self.ramp.duration()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn slowest_joint_sets_the_time_and_all_arrive_together() {
        // Joint 0 moves 1 rad at ≤ 1 rad/s, ≤ 2 rad/s²; joint 1 moves 0.5 rad with the same
        // limits. Joint 0 bounds both caps, so the move lasts its own trapezoid time
        // T = Δ/v + v/a = 1 + 0.5 = 1.5 s, and joint 1 runs at half of joint 0's speed.
        // source: trapezoidal profile T = L/v + v/a (Biagiotti & Melchiorri 2008, §3.2.2;
        // from memory); synchronisation by a shared normalised profile, common practice
        let m = SyncedMove::new(&[1.0, -0.5], &[1.0, 1.0], &[2.0, 2.0], 1.0, 0.0);
        assert_relative_eq!(m.duration(), 1.5, epsilon = 1e-12);
        assert_eq!(m.speed_joint, Some(0));
        assert_eq!(m.accel_joint, Some(0));
        // At every time the joints are the same fraction of the way: both reach u = 1 at T.
        assert_relative_eq!(m.ramp.s_at(m.duration()), 1.0, epsilon = 1e-12);
        // Joint 0 reaches exactly its speed limit at cruise; joint 1 half of its own.
        assert_relative_eq!(1.0 * m.ramp.peak(), 1.0, epsilon = 1e-12);
        assert_relative_eq!(0.5 * m.ramp.peak(), 0.5, epsilon = 1e-12);
    }

    #[test]
    fn speed_fraction_scales_the_cruise_speed() {
        // At 50 % of 1 rad/s over 1 rad with a = 2 rad/s²: T = 1/0.5 + 0.5/2 = 2.25 s.
        // source: trapezoidal profile T = L/v + v/a (Biagiotti & Melchiorri 2008, §3.2.2;
        // from memory)
        let m = SyncedMove::new(&[1.0], &[1.0], &[2.0], 0.5, 0.0);
        assert_relative_eq!(m.duration(), 2.25, epsilon = 1e-12);
        assert_relative_eq!(m.ramp.peak(), 0.5, epsilon = 1e-12);
    }

    #[test]
    fn different_joints_bound_speed_and_acceleration() {
        // Joint 0: 1 rad at 1 rad/s, 10 rad/s² → caps u̇ ≤ 1, ü ≤ 10.
        // Joint 1: 0.1 rad at 1 rad/s, 0.1 rad/s² → caps u̇ ≤ 10, ü ≤ 1.
        // Shared: u̇ = 1, ü = 1 → T = 1 + 1 = 2 s, longer than either joint alone
        // (1.1 s and 2·√(0.1/0.1) = 2 s): synchronising never shortens a move.
        // source: common practice (caps as minima over joints; T = L/v + v/a)
        let m = SyncedMove::new(&[1.0, 0.1], &[1.0, 1.0], &[10.0, 0.1], 1.0, 0.0);
        assert_eq!(m.speed_joint, Some(0));
        assert_eq!(m.accel_joint, Some(1));
        assert_relative_eq!(m.duration(), 2.0, epsilon = 1e-12);
        for i in 0..=50 {
            let t = m.duration() * i as f64 / 50.0;
            assert!(1.0 * m.ramp.speed_at(t) <= 1.0 + 1e-12);
            assert!(0.1 * m.ramp.accel_at(t).abs() <= 0.1 + 1e-12);
        }
    }

    #[test]
    fn minimum_duration_stretches_the_move() {
        // A 1 rad move that could take 1.5 s, asked to last 4 s (a slow Cartesian bound).
        // source: common practice (the stretched profile must last the time asked)
        let m = SyncedMove::new(&[1.0], &[1.0], &[2.0], 1.0, 4.0);
        assert_relative_eq!(m.duration(), 4.0, epsilon = 1e-12);
        // No joint moves: only the minimum remains.
        let still = SyncedMove::new(&[0.0, 0.0], &[1.0, 1.0], &[1.0, 1.0], 1.0, 0.0);
        assert_eq!(still.duration(), 0.0);
        assert_eq!(still.speed_joint, None);
    }
}
