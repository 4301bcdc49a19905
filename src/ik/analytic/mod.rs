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

mod config;
mod detect;

pub use config::{Config, Elbow, Shoulder, Wrist};

use crate::robot::Robot;
use nalgebra::{Isometry3, UnitQuaternion, Vector3};
use std::f64::consts::{PI, TAU};

/// Capacity of [`Solutions`]: eight closed-form solutions times the windings of wide joints.
/// arm6 (j4 ±190°, j6 ±360°) needs at most 8·2·3 = 48.
pub const MAX_SOLUTIONS: usize = 64;

/// Most windings kept per joint: a range of up to three full turns (±540°) has at most four.
const MAX_WINDINGS: usize = 4;

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

/// Joint values up to this far (rad) outside a limit count as inside, as in
/// [`crate::robot::JointInfo::contains`]: it absorbs rounding at a limit reached exactly.
const LIMIT_SLACK: f64 = 1e-12;

/// The seven lengths of the family (m) and the two derived from them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Geometry {
    a1: f64,
    a2: f64,
    b: f64,
    c1: f64,
    c2: f64,
    c3: f64,
    c4: f64,
    /// Distance from axis 3 to the wrist centre, √(a2² + c3²).
    k: f64,
    /// Angle of the elbow-to-wrist-centre line against axis 4: atan2(a2, c3).
    psi: f64,
}

impl Geometry {
    fn new(a1: f64, a2: f64, b: f64, c1: f64, c2: f64, c3: f64, c4: f64) -> Self {
        Geometry {
            a1,
            a2,
            b,
            c1,
            c2,
            c3,
            c4,
            k: a2.hypot(c3),
            psi: a2.atan2(c3),
        }
    }
}

/// Forward kinematics of the family model: pose of the canonical flange frame in the
/// canonical base frame at canonical angles `t` (see the module documentation).
fn model_fk(g: &Geometry, t: &[f64; 6]) -> Isometry3<f64> {
    let t23 = t[1] + t[2];
    let (s2, c2) = t[1].sin_cos();
    let (s23, c23) = t23.sin_cos();
    let xp = g.a1 + g.c2 * s2 + g.c3 * s23 + g.a2 * c23;
    let zp = g.c2 * c2 + g.c3 * c23 - g.a2 * s23;
    let rz = |a: f64| UnitQuaternion::from_axis_angle(&Vector3::z_axis(), a);
    let ry = |a: f64| UnitQuaternion::from_axis_angle(&Vector3::y_axis(), a);
    let rz1 = rz(t[0]);
    let wrist_centre = rz1 * Vector3::new(xp, g.b, zp) + Vector3::new(0.0, 0.0, g.c1);
    let r = rz1 * ry(t23) * rz(t[3]) * ry(t[4]) * rz(t[5]);
    let flange = wrist_centre + r * Vector3::new(0.0, 0.0, g.c4);
    Isometry3::from_parts(flange.into(), r)
}

/// What detection found, for display (`armpath robot`) and for the record. Lengths in m,
/// angles in rad.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Parameters {
    /// Shoulder offset, axis 1 to axis 2 (≥ 0).
    pub a1: f64,
    /// Elbow offset, axis 3 to axis 4 (signed: positive toward +x at the reference pose).
    pub a2: f64,
    /// Lateral offset of the arm plane from axis 1, along axis 2 (signed).
    pub b: f64,
    /// Height of axis 2 above joint 1's frame origin, along axis 1 (≥ 0).
    pub c1: f64,
    /// Upper arm length, axis 2 to axis 3 (> 0).
    pub c2: f64,
    /// Forearm length along axis 4 up to the wrist centre (≥ 0).
    pub c3: f64,
    /// Wrist centre to the tip-link origin along axis 6 (≥ 0); the tool comes on top.
    pub c4: f64,
    /// Canonical angle = `axis_signs[i]·q_i + joint_offsets[i]` (rad). The canonical zero has
    /// the upper arm and forearm along axis 1 and the wrist straight.
    pub joint_offsets: [f64; 6],
    /// +1 when the URDF axis turns the same way as the canonical one, −1 when opposite.
    pub axis_signs: [i8; 6],
    /// Origin of the canonical frame (joint 1's frame origin, on axis 1) in the base frame (m).
    pub canonical_origin_in_base: [f64; 3],
    /// Orientation of the canonical frame in the base frame, URDF roll-pitch-yaw (rad).
    pub canonical_rpy_in_base: [f64; 3],
    /// Largest deviation of the family model from the URDF chain found at the check
    /// configurations: position (m) and orientation (rad). Rounding level (≈1e-15) for an
    /// exact member; larger when the URDF writes angles rounded. Solutions are exact for the
    /// model, so their forward kinematics on the URDF is off by about this much.
    pub model_deviation_m: f64,
    pub model_deviation_rad: f64,
}

/// Which special poses a solution is at (within 1e-6 rad, or 1e-6 of the reach).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize)]
pub struct SpecialPose {
    /// θ5 = 0 or π: axes 4 and 6 aligned; θ4 was set to the reference, θ6 takes the rest.
    pub wrist_singular: bool,
    /// Upper arm and forearm in line, elbow straight (up and down coincide).
    pub elbow_stretched: bool,
    /// Forearm folded back onto the upper arm (up and down coincide).
    pub elbow_folded: bool,
    /// Wrist centre on axis 1 (lateral offset b = 0), or where front and back meet (b ≠ 0).
    /// With b = 0 θ1 was set to the reference.
    pub wrist_centre_on_axis1: bool,
}

impl SpecialPose {
    const NONE: SpecialPose = SpecialPose {
        wrist_singular: false,
        elbow_stretched: false,
        elbow_folded: false,
        wrist_centre_on_axis1: false,
    };

    /// True when any flag is set.
    pub fn any(&self) -> bool {
        self.wrist_singular
            || self.elbow_stretched
            || self.elbow_folded
            || self.wrist_centre_on_axis1
    }
}

/// One solution of a pose.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct AnalyticSolution {
    /// URDF joint values (rad), zero offsets and axis senses applied.
    pub joints: [f64; 6],
    pub config: Config,
    /// 2π shift per joint: `joints[i] = principal_i + 2π·winding[i]` with the principal
    /// value in (−π, π].
    pub winding: [i8; 6],
    /// Every joint within its range. Always true for [`OrthoParallel::solve`].
    pub within_limits: bool,
    pub special: SpecialPose,
}

impl AnalyticSolution {
    const EMPTY: AnalyticSolution = AnalyticSolution {
        joints: [0.0; 6],
        config: Config::ALL[0],
        winding: [0; 6],
        within_limits: false,
        special: SpecialPose::NONE,
    };
}

/// A fixed-capacity list of solutions (no allocation), ordered by configuration index
/// ([`Config::index`]) and then by winding. Dereferences to a slice.
#[derive(Clone, Copy)]
pub struct Solutions {
    items: [AnalyticSolution; MAX_SOLUTIONS],
    len: usize,
    raw_count: u8,
    truncated: bool,
}

impl Solutions {
    fn new() -> Self {
        Solutions {
            items: [AnalyticSolution::EMPTY; MAX_SOLUTIONS],
            len: 0,
            raw_count: 0,
            truncated: false,
        }
    }

    fn push(&mut self, s: AnalyticSolution) {
        if self.len < MAX_SOLUTIONS {
            self.items[self.len] = s;
            self.len += 1;
        } else {
            self.truncated = true;
        }
    }

    pub fn as_slice(&self) -> &[AnalyticSolution] {
        &self.items[..self.len]
    }

    /// Number of closed-form solutions before joint limits and windings (0..=8): 0 means the
    /// pose is out of reach; more than 0 with an empty list means reachable only outside the
    /// joint limits.
    pub fn raw_count(&self) -> usize {
        self.raw_count as usize
    }

    /// True when solutions were left out because the list was full ([`MAX_SOLUTIONS`]) or a
    /// joint had more in-range windings than are kept (4, i.e. a range beyond ±540°).
    pub fn truncated(&self) -> bool {
        self.truncated
    }
}

impl std::ops::Deref for Solutions {
    type Target = [AnalyticSolution];
    fn deref(&self) -> &[AnalyticSolution] {
        self.as_slice()
    }
}

impl<'a> IntoIterator for &'a Solutions {
    type Item = &'a AnalyticSolution;
    type IntoIter = std::slice::Iter<'a, AnalyticSolution>;
    fn into_iter(self) -> Self::IntoIter {
        self.as_slice().iter()
    }
}

impl std::fmt::Debug for Solutions {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Solutions")
            .field("solutions", &self.as_slice())
            .field("raw_count", &self.raw_count)
            .field("truncated", &self.truncated)
            .finish()
    }
}

/// A closed-form solution in canonical angles, before limits and windings.
#[derive(Debug, Clone, Copy)]
struct Raw {
    theta: [f64; 6],
    config: Config,
    special: SpecialPose,
}

impl Raw {
    const EMPTY: Raw = Raw {
        theta: [0.0; 6],
        config: Config::ALL[0],
        special: SpecialPose::NONE,
    };
}

/// Canonical angles taken where they are free (see the module documentation): θ1 of the
/// front branch and θ4 of the noflip branch.
#[derive(Debug, Clone, Copy)]
struct Free {
    theta1: f64,
    theta4: f64,
}

/// Nearest whole number to `x` (ties away from zero not guaranteed), as f64. The solver's
/// hot loops avoid `f64::round`/`floor`, which are library calls on baseline x86-64 and showed
/// up in profiles; a truncating cast is one instruction. Saturates beyond ±9.2e18, where f64
/// has no fraction anyway.
#[inline]
fn nearest_int(x: f64) -> f64 {
    let f = x + 0.5;
    let t = f as i64 as f64;
    // Truncation rounds negative values up: step back where it did.
    if t > f {
        t - 1.0
    } else {
        t
    }
}

/// Angle brought to (−π, π].
#[inline]
fn wrap(x: f64) -> f64 {
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
    fn canonical(&self, q: &[f64]) -> [f64; 6] {
        std::array::from_fn(|i| self.model.sign[i] * q[i] + self.model.offset[i])
    }

    /// URDF joint values in (−π, π] of canonical angles.
    #[inline]
    fn principal(&self, theta: &[f64; 6]) -> [f64; 6] {
        std::array::from_fn(|i| wrap(self.model.sign[i] * (theta[i] - self.model.offset[i])))
    }

    /// Every closed-form solution of `base_T_tcp` in canonical angles, in configuration order.
    ///
    /// Sines and cosines of θ1, θ2 and θ2 + θ3 are formed algebraically from the wrist centre
    /// (no trigonometric calls besides the atan2 that yields each output angle and one acos
    /// per shoulder branch): that is what keeps all eight solutions near a microsecond.
    /// `only`: compute just that configuration's shoulder and elbow branch (both wrist
    /// solutions of it come along; they cost nothing extra), as path following needs.
    fn raw(
        &self,
        base_T_tcp: &Isometry3<f64>,
        free: Free,
        out: &mut [Raw; 8],
        only: Option<Config>,
    ) -> usize {
        let g = &self.model.geometry;
        let (t, q) = (&base_T_tcp.translation.vector, base_T_tcp.rotation.coords);
        if !(t.iter().all(|v| v.is_finite()) && q.iter().all(|v| v.is_finite())) {
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
            free.theta1.sin_cos()
        } else {
            (0.0, 1.0)
        };
        let on_axis = root <= SPECIAL * self.length;
        let pz = cz - g.c1;
        let two_c2k = 2.0 * g.c2 * g.k;
        let (sin_psi, cos_psi) = (g.a2 / g.k, g.c3 / g.k);
        let mut n = 0;
        for shoulder in [Shoulder::Front, Shoulder::Back] {
            if only.is_some_and(|c| c.shoulder != shoulder) {
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
            let theta1 = s1.atan2(c1);
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
            let sigmas = match shoulder {
                Shoulder::Front => [1.0, -1.0],
                Shoulder::Back => [-1.0, 1.0],
            };
            for (sigma, elbow) in sigmas.into_iter().zip([Elbow::Up, Elbow::Down]) {
                if only.is_some_and(|c| c.elbow != elbow) {
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
                let theta2 = st2.atan2(ct2);
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
                let theta5 = h.atan2(m22);
                let (theta4, s4, c4) = if h <= FREE_CHOICE {
                    let (s, c) = free.theta4.sin_cos();
                    (free.theta4, s, c)
                } else {
                    (m12.atan2(m02), m12 / h, m02 / h)
                };
                // θ6 from what Rz(θ4)·Ry(θ5) leaves of the wrist rotation, so that the three
                // angles reproduce it exactly even where θ4 is poorly conditioned.
                let a = c4 * m00 + s4 * m10;
                let bb = -s4 * m00 + c4 * m10;
                let theta6 = bb.atan2(m22 * a - h * m20);
                let special = SpecialPose {
                    wrist_singular: h <= SPECIAL,
                    ..special_arm
                };
                out[n] = Raw {
                    theta: [theta1, theta2, theta3, theta4, theta5, theta6],
                    config: Config::new(shoulder, elbow, Wrist::NoFlip),
                    special,
                };
                out[n + 1] = Raw {
                    theta: [theta1, theta2, theta3, theta4 + PI, -theta5, theta6 + PI],
                    config: Config::new(shoulder, elbow, Wrist::Flip),
                    special,
                };
                n += 2;
            }
        }
        n
    }

    fn default_free(&self) -> Free {
        // q1 = 0 and q4 = 0 in URDF terms.
        Free {
            theta1: self.model.offset[0],
            theta4: self.model.offset[3],
        }
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
        let n = self.raw(base_T_tcp, self.default_free(), &mut raw, None);
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
                    joints: std::array::from_fn(|i| base[i] + TAU * winding[i] as f64),
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
        let n = self.raw(base_T_tcp, self.default_free(), &mut raw, None);
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
                joints: std::array::from_fn(|i| base[i] + TAU * winding[i] as f64),
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
        q_ref: &[f64],
        config: Config,
    ) -> Option<[f64; 6]> {
        if q_ref.len() < 6 || q_ref[..6].iter().any(|v| !v.is_finite()) {
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
        let n = self.raw(base_T_tcp, free, &mut raw, Some(config));
        let sol = raw[..n].iter().find(|s| s.config == config)?;
        let base = self.principal(&sol.theta);
        Some(std::array::from_fn(|i| {
            base[i] + TAU * nearest_int((q_ref[i] - base[i]) / TAU)
        }))
    }

    /// The configuration of URDF joints `q` (at least six values), by the definitions in the
    /// [`config`](Config) documentation. `None` when `q` is too short. At a special pose the
    /// two labels that meet there are equally right; this returns front, up (at the front)
    /// and noflip.
    pub fn config_of(&self, q: &[f64]) -> Option<Config> {
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
    fn model_reference_pose_is_straight_up() {
        // source: Brandstötter, Angerer & Hofbaur 2014, the family's zero pose: arm straight
        // up, flange at (a1 + a2, b, c1 + c2 + c3 + c4)
        let g = Geometry::new(0.15, 0.12, 0.05, 0.45, 0.6, 0.68, 0.1);
        let f = model_fk(&g, &[0.0; 6]);
        let p = f.translation.vector;
        assert!((p - Vector3::new(0.27, 0.05, 1.83)).norm() < 1e-15);
        assert!(f.rotation.angle() < 1e-15);
    }
}
