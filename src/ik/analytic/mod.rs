//! Closed-form inverse kinematics for 6-axis arms with an ortho-parallel base and a spherical
//! wrist: every solution of a pose, each labelled with its arm configuration.
//!
//! The family (Brandstötter, Angerer & Hofbaur 2014): axis 1 perpendicular to axes 2 and 3,
//! axes 2 and 3 parallel, axes 4, 5 and 6 meeting in the wrist centre, with seven lengths:
//!
//! | parameter | meaning (in the canonical frame described below) |
//! |---|---|
//! | a1 | shoulder offset: distance from axis 1 to axis 2 along their common normal (x) |
//! | a2 | elbow offset: distance between axis 3 and axis 4 |
//! | b  | lateral offset: distance of the arm plane from axis 1, along axis 2 (y) |
//! | c1 | height of axis 2 above joint 1's frame origin, along axis 1 (z) |
//! | c2 | upper arm: distance from axis 2 to axis 3 |
//! | c3 | forearm: from the foot of the a2 normal on axis 4 to the wrist centre, along axis 4 |
//! | c4 | wrist centre to the flange (URDF tip link) origin, along axis 6 |
//!
//! The canonical frame `C` has z along axis 1 (pointing from the base toward the shoulder),
//! its origin at joint 1's frame origin (on axis 1), and x pointing from axis 1 toward axis 2
//! at q1 = 0 (so a1 ≥ 0; y = z × x is along axis 2). Its pose in the URDF base frame is
//! arbitrary and found by detection. In `C` and canonical angles θ (θ23 = θ2 + θ3):
//!
//! ```text
//! wrist centre = Rz(θ1)·(a1 + c2 sinθ2 + c3 sinθ23 + a2 cosθ23, b,
//!                        c2 cosθ2 + c3 cosθ23 − a2 sinθ23) + (0, 0, c1)
//! flange orientation = Rz(θ1)·Ry(θ23)·Rz(θ4)·Ry(θ5)·Rz(θ6)
//! flange origin = wrist centre + c4 · (flange z axis)
//! ```
//!
//! Inverting this: the wrist centre
//! gives θ1 (two ways: shoulder front/back) and then θ2, θ3 from the triangle shoulder–elbow–
//! wrist (two ways each: elbow up/down); the remaining rotation gives θ4, θ5, θ6 as z-y-z
//! angles (two ways: wrist noflip/flip). At most 2·2·2 = 8 solutions (Pieper 1968).
//!
//! Joint values are the URDF's: `θ_i = sign_i·q_i + offset_i` (see [`Parameters`]). Each
//! closed-form solution is first brought to (−π, π] per joint; joints whose range spans more
//! than one turn then get every 2π shift (winding) that stays within the range.
//!
//! Special poses (each flagged in [`SpecialPose`]) never give NaN:
//! - wrist singular (θ5 = 0 or π, axes 4 and 6 aligned): only θ4 ± θ6 is fixed; θ4 is set to
//!   the reference (q4 = 0 in [`OrthoParallel::solve`], `q_ref[3]` in
//!   [`OrthoParallel::solve_near`]) and θ6 takes the rest;
//! - elbow stretched or folded: up and down coincide and are both returned;
//! - wrist centre on axis 1 (b = 0): θ1 is free and set to the reference (q1 = 0 or
//!   `q_ref[0]`); front and back then differ by half a turn of axis 1.
//!
//! All solving is allocation-free; results live in a fixed-capacity [`Solutions`].

mod branches;
mod config;
mod detect;
mod geometry;
mod singular;
mod solutions;

pub use config::{Config, Elbow, Shoulder, Wrist};
pub use geometry::Parameters;
pub use solutions::{AnalyticSolution, Solutions, SpecialPose, MAX_SOLUTIONS};

use crate::robot::{Joints, Robot};
pub use branches::ArmSet;
use branches::{nearest_int, wrap, Free, Raw};
use nalgebra::Isometry3;
use std::f64::consts::{PI, TAU};

/// Most windings kept per joint: a range of up to three full turns (±540°) has at most four.
const MAX_WINDINGS: usize = 4;

/// 1/2π, so that turns are counted with a multiplication: the quotient differs from a
/// division by 2π by at most one ulp, which can move only an exact half-turn tie.
const INV_TAU: f64 = 1.0 / TAU;

/// Joint values up to this far (rad) outside a limit count as inside, as in
/// [`crate::robot::JointInfo::contains`]: it absorbs rounding at a limit reached exactly.
const LIMIT_SLACK: f64 = 1e-12;

/// Every closed-form branch of one pose, before windings ([`OrthoParallel::branches`]).
#[derive(Debug, Clone, Copy)]
pub struct Branches {
    raw: [Raw; 8],
    n: usize,
}

/// The closed-form solver for one arm of the family (with its tool).
#[derive(Debug, Clone)]
pub struct OrthoParallel {
    model: detect::Model,
    C_T_base: Isometry3<f64>,
    tip_T_tcp: Isometry3<f64>,
    /// `tip_T_tcp⁻¹ · flange_T_tip⁻¹`: turns a TCP target into a canonical-flange target.
    tcp_T_flange: Isometry3<f64>,
    lower: [f64; 6],
    upper: [f64; 6],
    /// Candidate 2π shifts per joint (inclusive): every k for which a principal value in
    /// (−π, π] shifted by 2πk can fall within the range. Continuous joints: only 0 (one
    /// winding, the principal value).
    k_range: [(i8, i8); 6],
    /// Reach (m): the length scale of the tolerances.
    length: f64,
}

impl OrthoParallel {
    /// Detect the family on `robot` and set the solver up with the robot's current tool.
    /// The error is a sentence naming the condition that fails, e.g. "axes 2 and 3 are not
    /// parallel (angle 12.0°)".
    pub fn from_robot(robot: &Robot) -> Result<OrthoParallel, String> {
        let model = detect::detect(robot)?;
        let mut lower = [0.0; 6];
        let mut upper = [0.0; 6];
        let mut k_range = [(0i8, 0i8); 6];
        for (i, j) in robot.joints().iter().enumerate() {
            lower[i] = j.lower;
            upper[i] = j.upper;
            if j.lower.is_finite() && j.upper.is_finite() {
                // base + 2πk ∈ (−π + 2πk, π + 2πk] meets [lower, upper] iff
                // (lower − π)/2π ≤ k < (upper + π)/2π; the 1e-9 widens the set so that rounding
                // cannot drop a candidate (the test per candidate is the exact one).
                let lo = ((j.lower - PI - 1e-9) / TAU).ceil();
                let hi = ((j.upper + PI + 1e-9) / TAU).ceil() - 1.0;
                k_range[i] = (lo.clamp(-127.0, 127.0) as i8, hi.clamp(-127.0, 127.0) as i8);
            } else {
                lower[i] = f64::NEG_INFINITY;
                upper[i] = f64::INFINITY;
            }
        }
        let mut solver = OrthoParallel {
            model,
            C_T_base: model.base_T_C.inverse(),
            tip_T_tcp: Isometry3::identity(),
            tcp_T_flange: Isometry3::identity(),
            lower,
            upper,
            k_range,
            length: robot.reach(),
        };
        solver.set_tool(robot.chain().tool());
        Ok(solver)
    }

    /// Mount a tool: `tip_T_tcp` is the TCP pose in the tip-link frame (as
    /// [`Robot::set_tool`]).
    pub fn set_tool(&mut self, tip_T_tcp: Isometry3<f64>) {
        self.tip_T_tcp = tip_T_tcp;
        self.tcp_T_flange = tip_T_tcp.inverse() * self.model.flange_T_tip.inverse();
    }

    /// The mounted tool, TCP pose in the tip-link frame.
    pub fn tool(&self) -> Isometry3<f64> {
        self.tip_T_tcp
    }

    /// The family parameters, joint offsets and senses derived from the URDF.
    pub fn parameters(&self) -> Parameters {
        let g = &self.model.geometry;
        let t = self.model.base_T_C.translation.vector;
        let (r, p, y) = crate::rotation::to_rpy(&self.model.base_T_C.rotation);
        Parameters {
            a1: g.a1,
            a2: g.a2,
            b: g.b,
            c1: g.c1,
            c2: g.c2,
            c3: g.c3,
            c4: g.c4,
            joint_offsets: self.model.offset,
            axis_signs: self.model.sign.map(|s| s as i8),
            canonical_origin_in_base: [t.x, t.y, t.z],
            canonical_rpy_in_base: [r, p, y],
            model_deviation_m: self.model.deviation_m,
            model_deviation_rad: self.model.deviation_rad,
        }
    }

    #[inline]
    fn canonical(&self, q: &Joints) -> [f64; 6] {
        std::array::from_fn(|i| self.model.sign[i] * q[i] + self.model.offset[i])
    }

    /// URDF joint values in (−π, π] of canonical angles.
    #[inline]
    fn principal(&self, theta: &[f64; 6]) -> [f64; 6] {
        std::array::from_fn(|i| wrap(self.model.sign[i] * (theta[i] - self.model.offset[i])))
    }

    /// In-range windings of joint `i` at principal value `base`: the shifts k with
    /// `base + 2πk` within the limits, written to `out`; returns how many (and whether more
    /// existed than fit).
    fn windings(&self, i: usize, base: f64, out: &mut [i8; MAX_WINDINGS + 1]) -> (usize, bool) {
        let (lo, hi) = (self.lower[i] - LIMIT_SLACK, self.upper[i] + LIMIT_SLACK);
        let mut n = 0;
        // Branch-free: write every candidate, advance only past the ones inside. Which
        // windings fit is data-dependent and mispredicted branches cost more than the writes.
        // A plain counter: `RangeInclusive` iteration costs several times more here.
        let (mut k, k_hi) = (self.k_range[i].0 as i32, self.k_range[i].1 as i32);
        while k <= k_hi {
            let v = base + TAU * k as f64;
            out[n.min(MAX_WINDINGS)] = k as i8;
            n += ((v >= lo) & (v <= hi)) as usize;
            k += 1;
        }
        (n.min(MAX_WINDINGS), n > MAX_WINDINGS)
    }

    /// Every solution of `base_T_tcp` (TCP pose in the base frame, m) that lies within the
    /// joint limits, with every in-range winding of each joint. Empty when the pose is out of
    /// reach ([`Solutions::raw_count`] = 0) or reachable only outside the limits.
    pub fn solve(&self, base_T_tcp: &Isometry3<f64>) -> Solutions {
        let mut raw = [Raw::EMPTY; 8];
        let n = self.raw(base_T_tcp, self.default_free(), &mut raw, ArmSet::ALL);
        let mut out = Solutions::new();
        out.raw_count = n as u8;
        let mut ks = [[0i8; MAX_WINDINGS + 1]; 6];
        let mut counts = [0usize; 6];
        'raw: for sol in &raw[..n] {
            let base = self.principal(&sol.theta);
            for i in 0..6 {
                let (c, more) = self.windings(i, base[i], &mut ks[i]);
                out.truncated |= more;
                if c == 0 {
                    continue 'raw;
                }
                counts[i] = c;
            }
            // Odometer over the windings of the six joints.
            let mut idx = [0usize; 6];
            loop {
                let winding: [i8; 6] = std::array::from_fn(|i| ks[i][idx[i]]);
                out.push(AnalyticSolution {
                    joints: six(|i| base[i] + TAU * winding[i] as f64),
                    config: sol.config,
                    winding,
                    within_limits: true,
                    special: sol.special,
                });
                let mut j = 5;
                loop {
                    idx[j] += 1;
                    if idx[j] < counts[j] {
                        break;
                    }
                    idx[j] = 0;
                    if j == 0 {
                        continue 'raw;
                    }
                    j -= 1;
                }
            }
        }
        out
    }

    /// The closed-form solutions themselves (at most eight), inside the limits or not. Each
    /// joint takes its in-range winding nearest the principal value where one exists, else
    /// the principal value; `within_limits` tells whether all six are in range.
    pub fn solve_all(&self, base_T_tcp: &Isometry3<f64>) -> Solutions {
        let mut raw = [Raw::EMPTY; 8];
        let n = self.raw(base_T_tcp, self.default_free(), &mut raw, ArmSet::ALL);
        let mut out = Solutions::new();
        out.raw_count = n as u8;
        let mut ks = [0i8; MAX_WINDINGS + 1];
        for sol in &raw[..n] {
            let base = self.principal(&sol.theta);
            let mut winding = [0i8; 6];
            let mut within = true;
            for i in 0..6 {
                let (c, _) = self.windings(i, base[i], &mut ks);
                match ks[..c].iter().min_by_key(|k| k.abs()) {
                    Some(&k) => winding[i] = k,
                    None => within = false,
                }
            }
            out.push(AnalyticSolution {
                joints: six(|i| base[i] + TAU * winding[i] as f64),
                config: sol.config,
                winding,
                within_limits: within,
                special: sol.special,
            });
        }
        out
    }

    /// The solution of configuration `config` nearest `q_ref` (URDF joints, rad, at least six
    /// values): each joint takes the winding nearest `q_ref`, and at special poses the free
    /// angle is taken from `q_ref`, so that a path followed sample by sample stays on one
    /// branch. Joint limits are NOT applied: the caller checks them (a branch that runs
    /// into a limit must be reported, not swapped for another winding). `None` when the
    /// configuration cannot reach the pose or `q_ref` is too short or not finite.
    pub fn solve_near(
        &self,
        base_T_tcp: &Isometry3<f64>,
        q_ref: &Joints,
        config: Config,
    ) -> Option<Joints> {
        if !usable_reference(q_ref) {
            return None;
        }
        let t_ref = self.canonical(q_ref);
        // The raw solver puts the free θ1 on the front branch and θ4 on the noflip branch;
        // shift them so that the requested branch gets the reference values.
        let free = Free {
            theta1: t_ref[0]
                + if config.shoulder == Shoulder::Back {
                    PI
                } else {
                    0.0
                },
            theta4: t_ref[3] - if config.wrist == Wrist::Flip { PI } else { 0.0 },
        };
        let mut raw = [Raw::EMPTY; 8];
        let n = self.raw(base_T_tcp, free, &mut raw, ArmSet::EMPTY.with(config));
        let sol = raw[..n].iter().find(|s| s.config == config)?;
        Some(self.windings_near(sol, q_ref))
    }

    /// `sol` with each joint on the winding nearest `q_ref` (URDF joints, rad, six finite
    /// values): `v + 2πk` for the URDF value `v` of the canonical angle and the whole `k`
    /// nearest `(q_ref − v)/2π`. The result is the one winding within half a turn of the
    /// reference (either one at an exact half turn); it equals the principal value shifted by
    /// whole turns up to the rounding of one addition, so no separate wrap to (−π, π] is
    /// needed.
    #[inline]
    fn windings_near(&self, sol: &Raw, q_ref: &Joints) -> Joints {
        let mut out = [0.0; 6];
        for (i, o) in out.iter_mut().enumerate() {
            let v = self.model.sign[i] * (sol.theta[i] - self.model.offset[i]);
            *o = v + TAU * nearest_int((q_ref[i] - v) * INV_TAU);
        }
        Joints::from(out)
    }

    /// The branches `arms` of `base_T_tcp` solved once, for following several configurations
    /// in lockstep along one path ([`Self::near_in`]); `arms` must hold the arm branch of
    /// every configuration asked for there.
    pub fn branches(&self, base_T_tcp: &Isometry3<f64>, arms: ArmSet) -> Branches {
        let mut raw = [Raw::EMPTY; 8];
        let n = self.raw(base_T_tcp, self.default_free(), &mut raw, arms);
        Branches { raw, n }
    }

    /// What [`Self::solve_near`]`(base_T_tcp, q_ref, config)` returns, bit for bit, taken from
    /// `branches` (of the same `base_T_tcp`): the branches do not depend on the reference
    /// except where a free angle is taken from it (wrist centre on axis 1, axes 4 and 6
    /// aligned), and there the configuration is solved again from `q_ref`.
    pub fn near_in(
        &self,
        branches: &Branches,
        base_T_tcp: &Isometry3<f64>,
        q_ref: &Joints,
        config: Config,
    ) -> Option<Joints> {
        if !usable_reference(q_ref) {
            return None;
        }
        let sol = branches.raw[..branches.n]
            .iter()
            .find(|s| s.config == config)?;
        if sol.free {
            return self.solve_near(base_T_tcp, q_ref, config);
        }
        Some(self.windings_near(sol, q_ref))
    }

    /// The configuration of URDF joints `q` (at least six values), by the definitions in the
    /// [`config`](Config) documentation. `None` when `q` is too short. At a special pose the
    /// two labels that meet there are equally right; this returns front, up (at the front)
    /// and noflip.
    pub fn config_of(&self, q: &Joints) -> Option<Config> {
        if q.len() < 6 {
            return None;
        }
        let g = &self.model.geometry;
        let t = self.canonical(q);
        let x1 = g.a1 + g.c2 * t[1].sin() + g.k * (t[1] + t[2] + g.psi).sin();
        let front = x1 >= 0.0;
        let positive_elbow = (t[2] + g.psi).sin() >= 0.0;
        Some(Config::new(
            if front {
                Shoulder::Front
            } else {
                Shoulder::Back
            },
            if positive_elbow == front {
                Elbow::Up
            } else {
                Elbow::Down
            },
            if t[4].sin() >= 0.0 {
                Wrist::NoFlip
            } else {
                Wrist::Flip
            },
        ))
    }
}

/// The six joints of a solution, from their values by index.
#[inline]
/// A reference for [`OrthoParallel::solve_near`]: at least six values, all finite.
fn usable_reference(q_ref: &Joints) -> bool {
    q_ref.len() >= 6 && q_ref[..6].iter().all(|v| v.is_finite())
}

fn six(f: impl FnMut(usize) -> f64) -> Joints {
    Joints::from(std::array::from_fn::<f64, 6, _>(f))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    #[test]
    fn near_in_shared_branches_is_solve_near_bit_for_bit() {
        // Random poses of the demo arm (and exact wrist singularities, θ5 = 0, where θ4 comes
        // from the reference), each configuration from a reference near the pose's joints:
        // the lockstep answer from branches solved once, for all arms or just the one asked
        // for, is the one-configuration solve. source: common practice (the one-configuration
        // solve is the reference).
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let robot = crate::robot::load_urdf(&dir.join("robots/arm6.urdf"), None).unwrap();
        let solver = OrthoParallel::from_robot(&robot).unwrap();
        let mut rng = SplitMix64::new(0x1a4e5);
        let mut found = 0;
        for k in 0..2000 {
            let mut q = robot.random_config(&mut rng);
            if k % 10 == 0 {
                q[4] = 0.0;
            }
            let target = robot.chain().fk(&q);
            let q_ref = q.map(|_, v| v + 0.01 * (2.0 * rng.next_f64() - 1.0));
            let all = solver.branches(&target, ArmSet::ALL);
            for config in Config::ALL {
                let one = solver.branches(&target, ArmSet::EMPTY.with(config));
                let expected = solver.solve_near(&target, &q_ref, config);
                for b in [&all, &one] {
                    let got = solver.near_in(b, &target, &q_ref, config);
                    let bits = |v: Option<Joints>| {
                        v.map(|j| j.iter().map(|x| x.to_bits()).collect::<Vec<_>>())
                    };
                    assert_eq!(bits(got), bits(expected), "pose {k} {config}");
                }
                found += usize::from(expected.is_some());
            }
        }
        assert!(found > 4000, "only {found} solutions compared");
    }
}
