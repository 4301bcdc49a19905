//! The closed-form branches: from a TCP pose to the (at most eight) canonical solutions,
//! each labelled with its configuration and special-pose flags.

use super::{Config, Elbow, OrthoParallel, Shoulder, SpecialPose, Wrist};
use crate::arctan::atan2;
use nalgebra::Isometry3;
use std::f64::consts::{PI, TAU};

/// Below this (sin θ5, or the wrist centre's distance from axis 1 as a fraction of the reach)
/// the quantity is rounding noise and its angle is a free choice. Taking the reference there
/// moves the flange by at most 2e-12 rad, respectively 2e-12 of the reach: far inside the
/// 1e-9 FK accuracy the solver guarantees.
const FREE_CHOICE: f64 = 1e-12;

/// Relative slack by which a target may lie beyond the reach boundary (elbow fully stretched
/// or folded, or inside the lateral-offset cylinder) and still be solved, as a clamp at the
/// boundary. It absorbs the rounding of a target built exactly at the boundary; the clamp
/// moves the wrist centre by at most about this fraction of the reach (1e-10 · 1.4 m ≈ 0.1 nm).
const REACH_SLACK: f64 = 1e-10;

/// Special-pose flags are set within this distance (rad, or fraction of the reach) of the
/// special pose. There the two solution branches that meet differ by less than 2e-6 rad in
/// the joints concerned (under half an arc-second): no arm tells them apart, so the label
/// between them carries no meaning. Wider singularity margins are the path checker's business.
const SPECIAL: f64 = 1e-6;

/// A closed-form solution in canonical angles, before limits and windings.
#[derive(Debug, Clone, Copy)]
pub(super) struct Raw {
    pub(super) theta: [f64; 6],
    pub(super) config: Config,
    pub(super) special: SpecialPose,
    /// A free angle was taken from [`Free`] (wrist centre on axis 1, or axes 4 and 6
    /// aligned): the solution depends on the reference, not on the pose alone.
    pub(super) free: bool,
}

impl Raw {
    pub(super) const EMPTY: Raw = Raw {
        theta: [0.0; 6],
        config: Config::ALL[0],
        special: SpecialPose::NONE,
        free: false,
    };
}

/// A set of arm branches (shoulder front/back × elbow up/down) for the closed form to solve;
/// each comes with both of its wrist solutions.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ArmSet(u8);

impl ArmSet {
    /// All four arm branches: all eight configurations.
    pub const ALL: ArmSet = ArmSet(0b1111);
    /// No branch.
    pub const EMPTY: ArmSet = ArmSet(0);

    fn bit(shoulder: Shoulder, elbow: Elbow) -> u8 {
        let s = u8::from(shoulder == Shoulder::Back);
        let e = u8::from(elbow == Elbow::Down);
        1 << (2 * s + e)
    }

    /// The set with `config`'s arm branch added.
    pub fn with(self, config: Config) -> ArmSet {
        ArmSet(self.0 | Self::bit(config.shoulder, config.elbow))
    }

    /// Does the set hold this branch?
    pub fn has(self, shoulder: Shoulder, elbow: Elbow) -> bool {
        self.0 & Self::bit(shoulder, elbow) != 0
    }

    /// Does the set hold a branch of this shoulder?
    pub fn has_shoulder(self, shoulder: Shoulder) -> bool {
        self.has(shoulder, Elbow::Up) || self.has(shoulder, Elbow::Down)
    }
}

/// Canonical angles taken where they are free (see the module documentation): θ1 of the
/// front branch and θ4 of the noflip branch.
#[derive(Debug, Clone, Copy)]
pub(super) struct Free {
    pub(super) theta1: f64,
    pub(super) theta4: f64,
}

/// Adding and subtracting this (1.5·2⁵²) rounds an f64 of magnitude below 2⁵¹ to a whole
/// number: the sum lies in [2⁵², 2⁵³), where the spacing of f64 is exactly 1, so the addition
/// itself does the rounding (to nearest, ties to even) and the subtraction is exact.
const ROUNDER: f64 = 6_755_399_441_055_744.0;

/// Nearest whole number to `x` (ties to even), as f64. The solver's hot loops avoid
/// `f64::round`/`floor`, which are library calls on baseline x86-64 and showed up in
/// profiles, and a saturating cast, which costs several compares; this is two additions.
/// Exact for |x| < 2⁵¹; beyond that `x` is whole or nearly so and the result stays within
/// one unit of it (finite for finite `x`).
#[inline]
pub(super) fn nearest_int(x: f64) -> f64 {
    (x + ROUNDER) - ROUNDER
}

/// Angle brought to (−π, π].
#[inline]
pub(super) fn wrap(x: f64) -> f64 {
    let mut y = x - TAU * nearest_int(x / TAU);
    // Rounding of the quotient can leave y a hair outside; fix the half-open end too.
    if y <= -PI {
        y += TAU;
    }
    if y > PI {
        y -= TAU;
    }
    y
}

/// Sine and cosine of an angle taken where it is free (rare): out of line so that the
/// compiler does not compute it ahead of the test on every call, which it did inline.
#[cold]
#[inline(never)]
fn sin_cos_cold(angle: f64) -> (f64, f64) {
    angle.sin_cos()
}

impl OrthoParallel {
    /// Every closed-form solution of `base_T_tcp` in canonical angles, in configuration order.
    ///
    /// Sines and cosines of θ1, θ2 and θ2 + θ3 are formed algebraically from the wrist centre
    /// (no trigonometric calls besides the atan2 that yields each output angle, the solver's
    /// own [`atan2`], and one acos per shoulder branch): that is what keeps all eight
    /// solutions near a microsecond.
    /// `arms`: compute just these shoulder and elbow branches (both wrist solutions of each
    /// come along; they cost nothing extra), as path following needs.
    pub(super) fn raw(
        &self,
        base_T_tcp: &Isometry3<f64>,
        free: Free,
        out: &mut [Raw; 8],
        arms: ArmSet,
    ) -> usize {
        let g = &self.model.geometry;
        let (t, q) = (&base_T_tcp.translation.vector, base_T_tcp.rotation.coords);
        // x·0 is zero for finite x and NaN for an infinity or NaN: one sum tests all seven.
        let probe =
            (t.x * 0.0 + t.y * 0.0 + t.z * 0.0) + (q.x * 0.0 + q.y * 0.0) + (q.z * 0.0 + q.w * 0.0);
        if probe != 0.0 {
            return 0;
        }
        let C_T_flange = self.C_T_base * base_T_tcp * self.tcp_T_flange;
        let r = *C_T_flange.rotation.to_rotation_matrix().matrix();
        let u = C_T_flange.translation.vector;
        let cx = u.x - g.c4 * r[(0, 2)];
        let cy = u.y - g.c4 * r[(1, 2)];
        let cz = u.z - g.c4 * r[(2, 2)];
        let rho2 = cx * cx + cy * cy;
        let m2 = rho2 - g.b * g.b;
        if m2 < -2.0 * g.b.abs() * REACH_SLACK * self.length {
            // Inside the cylinder of radius |b| about axis 1.
            return 0;
        }
        let root = m2.max(0.0).sqrt();
        let free_tol2 = (FREE_CHOICE * self.length).powi(2);
        // Wrist centre on axis 1 (only reachable with b = 0): θ1 is free.
        let free_shoulder = rho2 <= free_tol2;
        let (fs, fc) = if free_shoulder {
            sin_cos_cold(free.theta1)
        } else {
            (0.0, 1.0)
        };
        let on_axis = root <= SPECIAL * self.length;
        let pz = cz - g.c1;
        let two_c2k = 2.0 * g.c2 * g.k;
        let (sin_psi, cos_psi) = (g.a2 / g.k, g.c3 / g.k);
        let mut n = 0;
        for &shoulder in &[Shoulder::Front, Shoulder::Back] {
            if !arms.has_shoulder(shoulder) {
                continue;
            }
            // x1: the wrist centre's coordinate along link 1's x (toward axis 2); its y is b.
            let x1 = match shoulder {
                Shoulder::Front => root,
                Shoulder::Back => -root,
            };
            // Rz(θ1)·(x1, b) = (cx, cy).
            let (c1, s1) = if free_shoulder {
                match shoulder {
                    Shoulder::Front => (fc, fs),
                    Shoulder::Back => (-fc, -fs),
                }
            } else {
                let (c, s) = (cx * x1 + cy * g.b, cy * x1 - cx * g.b);
                let norm = (c * c + s * s).sqrt();
                (c / norm, s / norm)
            };
            let theta1 = atan2(s1, c1);
            let px = x1 - g.a1;
            let p2 = px * px + pz * pz;
            let cos3 = (p2 - g.c2 * g.c2 - g.k * g.k) / two_c2k;
            if cos3.is_nan() || cos3.abs() > 1.0 + REACH_SLACK {
                continue;
            }
            let cos3 = cos3.clamp(-1.0, 1.0);
            let phi3 = cos3.acos();
            let sin3 = ((1.0 - cos3) * (1.0 + cos3)).sqrt();
            let special_arm = SpecialPose {
                wrist_singular: false,
                elbow_stretched: phi3 <= SPECIAL,
                elbow_folded: PI - phi3 <= SPECIAL,
                wrist_centre_on_axis1: on_axis,
            };
            // Up is the positive elbow angle at the front, the negative one at the back (see
            // `config`); list up first.
            let up_sigma = match shoulder {
                Shoulder::Front => 1.0,
                Shoulder::Back => -1.0,
            };
            for &(sigma, elbow) in &[(up_sigma, Elbow::Up), (-up_sigma, Elbow::Down)] {
                if !arms.has(shoulder, elbow) {
                    continue;
                }
                let sp = sigma * sin3;
                // Upper arm direction (sin θ2, cos θ2): the shoulder-to-wrist direction turned
                // back by the triangle angle at the shoulder, atan2(k·sinφ3, c2 + k·cosφ3).
                let (fu, fv) = (g.c2 + g.k * cos3, g.k * sp);
                let (st2, ct2) = {
                    let (s, c) = (px * fu - pz * fv, pz * fu + px * fv);
                    let norm = (s * s + c * c).sqrt();
                    if p2 > free_tol2 && norm > 0.0 {
                        (s / norm, c / norm)
                    } else {
                        // Wrist centre on axis 2 (elbow folded onto an equal upper arm):
                        // any θ2 works; take 0.
                        (0.0, 1.0)
                    }
                };
                let theta2 = atan2(st2, ct2);
                let theta3 = sigma * phi3 - g.psi;
                let (ct3, st3) = (cos3 * cos_psi + sp * sin_psi, sp * cos_psi - cos3 * sin_psi);
                let s23 = st2 * ct3 + ct2 * st3;
                let c23 = ct2 * ct3 - st2 * st3;
                // Columns of R0c = Rz(θ1)·Ry(θ23); M = R0cᵀ·R needs six entries.
                let k0 = [c1 * c23, s1 * c23, -s23];
                let k1 = [-s1, c1, 0.0];
                let k2 = [c1 * s23, s1 * s23, c23];
                let dot =
                    |k: &[f64; 3], j: usize| k[0] * r[(0, j)] + k[1] * r[(1, j)] + k[2] * r[(2, j)];
                let (m00, m10, m20) = (dot(&k0, 0), dot(&k1, 0), dot(&k2, 0));
                let (m02, m12, m22) = (dot(&k0, 2), dot(&k1, 2), dot(&k2, 2));
                let h = (m02 * m02 + m12 * m12).sqrt();
                let theta5 = atan2(h, m22);
                let free_wrist = h <= FREE_CHOICE;
                let (theta4, s4, c4) = if free_wrist {
                    let (s, c) = sin_cos_cold(free.theta4);
                    (free.theta4, s, c)
                } else {
                    (atan2(m12, m02), m12 / h, m02 / h)
                };
                // θ6 from what Rz(θ4)·Ry(θ5) leaves of the wrist rotation, so that the three
                // angles reproduce it exactly even where θ4 is poorly conditioned.
                let a = c4 * m00 + s4 * m10;
                let bb = -s4 * m00 + c4 * m10;
                let theta6 = atan2(bb, m22 * a - h * m20);
                let special = SpecialPose {
                    wrist_singular: h <= SPECIAL,
                    ..special_arm
                };
                out[n] = Raw {
                    theta: [theta1, theta2, theta3, theta4, theta5, theta6],
                    config: Config::new(shoulder, elbow, Wrist::NoFlip),
                    special,
                    free: free_shoulder || free_wrist,
                };
                out[n + 1] = Raw {
                    theta: [theta1, theta2, theta3, theta4 + PI, -theta5, theta6 + PI],
                    config: Config::new(shoulder, elbow, Wrist::Flip),
                    special,
                    free: free_shoulder || free_wrist,
                };
                n += 2;
            }
        }
        n
    }

    pub(super) fn default_free(&self) -> Free {
        // q1 = 0 and q4 = 0 in URDF terms.
        Free {
            theta1: self.model.offset[0],
            theta4: self.model.offset[3],
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrap_lands_in_half_open_interval() {
        // source: common practice (principal angle in (−π, π])
        assert_eq!(wrap(PI), PI);
        assert_eq!(wrap(-PI), PI);
        assert!((wrap(3.0 * PI + 0.1) - (-PI + 0.1)).abs() < 1e-12);
        assert!((wrap(-7.0) - (-7.0 + TAU)).abs() < 1e-12);
        assert_eq!(wrap(0.25), 0.25);
        assert!((wrap(40.0 * TAU + 1.0) - 1.0).abs() < 1e-12);
        assert_eq!(nearest_int(-2.6), -3.0);
        assert_eq!(nearest_int(-2.4), -2.0);
        assert_eq!(nearest_int(2.6), 3.0);
        assert_eq!(nearest_int(-0.2), 0.0);
    }

    #[test]
    fn nearest_int_rounds_to_the_nearest_whole_number() {
        // source: IEEE 754-2008 §4.3.1 (round to nearest, ties to even); the reference is
        // f64::round_ties_even of Rust's standard library (1.77 and later) away from ties.
        for x in [0.5, 1.5, 2.5, -0.5, -1.5, -2.5] {
            assert_eq!(nearest_int(x), x.round_ties_even(), "{x}");
        }
        let mut rng = crate::rng::SplitMix64::new(0x71e5);
        for _ in 0..100_000 {
            // Magnitudes from 1e-3 to 1e15, both signs.
            let mag = 10f64.powf(-3.0 + 18.0 * rng.next_f64());
            let x = if rng.next_f64() < 0.5 { -mag } else { mag };
            assert_eq!(nearest_int(x), x.round_ties_even(), "{x}");
        }
        // Largest exact magnitude and beyond: whole, within one unit.
        let big = 2f64.powi(51) - 0.5;
        assert_eq!(nearest_int(big), big.round_ties_even());
        for x in [3e15, -3e15, 1e18, -1e300, 1e300] {
            let r = nearest_int(x);
            assert!(r.is_finite() && (r - x).abs() <= 1.0f64.max(x.abs() * f64::EPSILON));
        }
    }
}
