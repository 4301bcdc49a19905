//! armpath's own two-argument arctangent, for the per-sample loop: the closed-form solver
//! forms five to eighteen angles per pose with it, and the walk measures the tool's turn
//! between samples with it ([`crate::rotation::angle_between`]). The system library's
//! `atan2` (with its error-handling wrapper) took over three times as many instructions as
//! this table-and-polynomial version.
//!
//! Accuracy: within 2 ulp of the library's (correctly rounded or nearly so) result on finite
//! inputs; the test below checks that on over a million inputs. The solver's answers move
//! by that rounding only.
//!
//! Method: the ratio t = min(|y|, |x|) / max(|y|, |x|) ∈ [0, 1] is reduced against the
//! nearest breakpoint c = i/32 by atan t = atan c + atan r, r = (t − c)/(1 + t·c), |r| ≤ 1/64;
//! the first two breakpoints use c = 0 (then r = t exactly, |r| < 3/64), because a reduction
//! against c = 1/32 would carry the rounding of r into a result no larger than r. atan r is
//! its Taylor series to r¹¹, whose remainder (< r¹³/13) stays below 10⁻¹⁷·|r| for
//! |r| < 3/64: under a tenth of the result's last unit. atan c is stored as a rounded value
//! plus its remainder, and so are π/2 and π for the octant and quadrant shifts, so that the
//! shifts add only the final rounding.

use std::f64::consts::{FRAC_PI_2, FRAC_PI_4, PI};

/// Breakpoints per unit of t: the reduced |r| ≤ 1/64 needs the Taylor series only to r¹¹.
const PARTS: usize = 32;

/// Breakpoints c and atan c as the nearest f64 and the remainder (atan c − hi, rounded):
/// index i serves t within 1/64 of i/32. Entry 1 is c = 0 (see the module documentation).
/// source: atan(i/32) evaluated with mpmath 1.3.0 at 200 bits, split into two f64.
const TABLE: [(f64, f64, f64); PARTS + 1] = [
    (0.0, 0.0, 0.0),
    (0.0, 0.0, 0.0),
    (0.0625, 0.06241880999595735, -1.5490756308295046e-18),
    (0.09375, 0.09347678115858947, -6.2844725995420954e-18),
    (0.125, 0.12435499454676144, -3.1253241424539383e-18),
    (0.15625, 0.15499674192394097, 9.585415594114324e-18),
    (0.1875, 0.18534794999569476, 4.180692268843079e-18),
    (0.21875, 0.21535769969773805, 4.738160130078733e-19),
    (0.25, 0.24497866312686414, 1.0698755618734451e-17),
    (0.28125, 0.2741674511196588, 8.261353575163773e-18),
    (0.3125, 0.3028848683749714, -1.1010827903001369e-17),
    (0.34375, 0.3310960767041321, -7.952610375793799e-18),
    (0.375, 0.35877067027057225, -2.4623815582638635e-17),
    (0.40625, 0.38588266939807375, 2.378822732491941e-17),
    (0.4375, 0.4124104415973873, -1.587652227770689e-17),
    (0.46875, 0.43833655985795783, -2.494277030626541e-17),
    (0.5, 0.4636476090008061, 2.2698777452961687e-17),
    (0.53125, 0.48833395105640554, -1.1373236189329585e-17),
    (0.5625, 0.5123894603107377, -2.5462781472855804e-17),
    (0.59375, 0.5358112379604637, -4.0637956834825575e-18),
    (0.625, 0.5585993153435624, -5.4556305485916264e-18),
    (0.65625, 0.5807563535676704, -1.441464378193067e-17),
    (0.6875, 0.6022873461349642, 2.950430737228402e-17),
    (0.71875, 0.6231993299340659, 2.672403885140095e-17),
    (0.75, 0.6435011087932844, 1.5834785051444286e-17),
    (0.78125, 0.6632029927060933, -3.076054864429649e-17),
    (0.8125, 0.6823165548747481, 6.943223671560008e-18),
    (0.84375, 0.7008544078844502, -1.987626234335816e-17),
    (0.875, 0.7188299996216245, -2.1478388444456983e-17),
    (0.90625, 0.7362574289814281, 3.473937648299457e-17),
    (0.9375, 0.7531512809621944, -2.4256934659182068e-17),
    (0.96875, 0.7695264804056583, -3.704991905602721e-17),
    (1.0, FRAC_PI_4, 3.061616997868383e-17),
];

/// Shift, its remainder and the sign of atan t, by octant: index 2·(|y| > |x|) + (x < 0).
/// The angle is shift + sign·atan t: atan t, π − atan t, π/2 − atan t, π/2 + atan t.
/// source: the remainders of π and π/2 beyond their f64 values, mpmath 1.3.0 at 200 bits.
const OCTANT: [(f64, f64, f64); 4] = [
    (0.0, 0.0, 1.0),
    (PI, 1.2246467991473532e-16, -1.0),
    (FRAC_PI_2, 6.123233995736766e-17, -1.0),
    (FRAC_PI_2, 6.123233995736766e-17, 1.0),
];

/// Adding this (1.5·2⁵²) to a value in [0, 32.5] leaves the nearest whole number in the low
/// bits of the sum: the table index without a float-to-integer conversion.
const INDEXER: f64 = 6_755_399_441_055_744.0;

/// Angle (rad) of the point (x, y) from the positive x axis, in [−π, π], for finite `y`, `x`:
/// the same contract as `f64::atan2`, signed zeros included (atan2(±0, −0) = ±π,
/// atan2(±0, +0) = ±0), within 2 ulp of it. Infinite or NaN inputs give an unspecified value
/// (NaN for most), never a panic; the solver tests its target for them first.
#[inline]
pub(crate) fn atan2(y: f64, x: f64) -> f64 {
    let (ax, ay) = (x.abs(), y.abs());
    let steep = ay > ax;
    let (num, den) = if steep { (ax, ay) } else { (ay, ax) };
    // At the origin 0/0 would be NaN; the angle there comes from the signs alone.
    let t = if num == 0.0 { 0.0 } else { num / den };
    let i = (t * PARTS as f64 + INDEXER).to_bits() as usize & (2 * PARTS - 1);
    let (c, hi, lo) = TABLE[i.min(PARTS)];
    let r = (t - c) / (1.0 + t * c);
    let z = r * r;
    let tail = r
        * z
        * (-1.0 / 3.0 + z * (1.0 / 5.0 + z * (-1.0 / 7.0 + z * (1.0 / 9.0 + z * (-1.0 / 11.0)))));
    let atan_t = hi + (r + (tail + lo));
    let (shift, shift_lo, sign) =
        OCTANT[2 * usize::from(steep) + usize::from(x.is_sign_negative())];
    (shift + (sign * atan_t + shift_lo)).copysign(y)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    /// Distance in units in the last place, across zero too.
    fn ulps(a: f64, b: f64) -> u64 {
        let ordered = |v: f64| {
            let bits = v.to_bits() as i64;
            if bits < 0 {
                i64::MIN - bits
            } else {
                bits
            }
        };
        ordered(a).abs_diff(ordered(b))
    }

    #[test]
    fn table_holds_atan_of_its_breakpoints() {
        // source: the system libm's atan (glibc 2.36) for the rounded part, within one ulp;
        // the remainder must be below half an ulp of it (common practice for a two-f64 value).
        for (i, &(c, hi, lo)) in TABLE.iter().enumerate() {
            assert_eq!(
                c,
                if i == 1 { 0.0 } else { i as f64 / PARTS as f64 },
                "breakpoint {i}"
            );
            assert!(ulps(hi, c.atan()) <= 1, "atan of breakpoint {i}");
            let half_ulp = if hi == 0.0 {
                0.0
            } else {
                hi * f64::EPSILON / 2.0
            };
            assert!(lo.abs() <= half_ulp, "remainder of breakpoint {i}");
        }
    }

    #[test]
    fn atan2_is_within_two_ulp_of_the_system_library() {
        // source: the system libm's atan2 through f64::atan2 (glibc 2.36, Debian 12) as the
        // reference library.
        let mut rng = SplitMix64::new(0xa7a2);
        let mut worst = (0u64, 0.0, 0.0);
        let (mut count, mut exact) = (0usize, 0usize);
        let mut check = |y: f64, x: f64| {
            let (got, want) = (atan2(y, x), y.atan2(x));
            let d = ulps(got, want);
            assert!(
                d <= 2,
                "atan2({y:e}, {x:e}) = {got:e}, libm {want:e}: {d} ulp"
            );
            if d > worst.0 {
                worst = (d, y, x);
            }
            count += 1;
            exact += usize::from(d == 0);
        };
        let sign = |rng: &mut SplitMix64, v: f64| if rng.next_f64() < 0.5 { -v } else { v };
        let magnitude = |rng: &mut SplitMix64| 10f64.powf(600.0 * rng.next_f64() - 300.0);
        // Points all round the circle at radii from 1e-300 to 1e300.
        for _ in 0..600_000 {
            let angle = std::f64::consts::PI * (2.0 * rng.next_f64() - 1.0);
            let radius = magnitude(&mut rng);
            check(radius * angle.sin(), radius * angle.cos());
        }
        // Independent magnitudes: ratios from 1e-600 (underflow to zero) to 1e600.
        for _ in 0..300_000 {
            let (my, mx) = (magnitude(&mut rng), magnitude(&mut rng));
            let (y, x) = (sign(&mut rng, my), sign(&mut rng, mx));
            check(y, x);
        }
        // Ratios next to each boundary between breakpoints, (2i+1)/64, and next to 1, where
        // the table index and the octant change, a few ulp to each side.
        for _ in 0..200_000 {
            let j = rng.next_u64() % (PARTS as u64 + 1);
            let edge = if j == PARTS as u64 {
                1.0
            } else {
                (2 * j + 1) as f64 / (2 * PARTS) as f64
            };
            let nudge = (rng.next_u64() % 9) as i64 - 4;
            let t = f64::from_bits((edge.to_bits() as i64 + nudge) as u64);
            let mx = 0.5 + rng.next_f64();
            let x = sign(&mut rng, mx);
            let y = sign(&mut rng, t * mx);
            check(y, x);
            check(x, y);
        }
        // Signed zeros, axes, diagonals, subnormals and the largest values.
        let specials = [
            0.0,
            -0.0,
            1.0,
            -1.0,
            f64::MIN_POSITIVE,
            -f64::MIN_POSITIVE,
            5e-324,
            -5e-324,
            1e-310,
            -3e-315,
            f64::MAX,
            f64::MIN,
            0.5,
            -2.0,
        ];
        for &y in &specials {
            for &x in &specials {
                check(y, x);
                assert_eq!(
                    atan2(y, x).is_sign_negative(),
                    y.atan2(x).is_sign_negative(),
                    "sign of atan2({y:e}, {x:e})"
                );
            }
        }
        assert!(count > 1_300_000, "only {count} inputs");
        assert_eq!(atan2(0.0, -0.0), std::f64::consts::PI);
        assert_eq!(atan2(-0.0, 0.0).to_bits(), (-0.0f64).to_bits());
        eprintln!(
            "atan2: {count} inputs, {exact} equal to libm's, worst {} ulp at atan2({:e}, {:e})",
            worst.0, worst.1, worst.2
        );
    }
}
