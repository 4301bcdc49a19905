//! Corner blends where the path stops for nothing.
//!
//! A waypoint between two straight-line segments without `blend:` is a stop: the TCP brakes
//! to rest there and starts again, which on a bead drawn as many short segments makes a
//! `process_speed` warning at every waypoint and lengthens the cycle. A blend of radius `r`
//! keeps the TCP moving: inside its window the velocity changes linearly in time from the
//! incoming cruise velocity `v_in` to the outgoing `v_out` (see [`crate::motion::Corner`]),
//! so the speed along the way is the distance from the origin to a point moving on the
//! straight segment from `v_in` to `v_out`. Its lowest value is that segment's distance from
//! the origin; with equal speeds `v` and a turn of `θ` between the directions it is reached
//! in the middle of the window, `|v_in + v_out| / 2 = v·cos(θ/2)`.
//!
//! The rule, at each waypoint between two straight-line segments that both move the TCP, has
//! no blend yet and is not where the path must stop (the first and last waypoints, a joint
//! move's start or end, and where a process starts or ends, never qualify: the process is
//! switched on and off at rest, common practice for arc and bead starts):
//!
//! - radius `r = min(half of each neighbouring segment's length, cap)`, the cap being
//!   [`PROCESS_BLEND_CAP`] inside a process (both neighbours process segments) and
//!   [`TRAVEL_BLEND_CAP`] between travel segments; half a neighbour so that the blends at
//!   both ends of a segment never overlap (then the window is never cut either);
//! - rounded down to 0.1 mm ([`MIN_BLEND`]), and none where that leaves less;
//! - at a process corner only where the blend's lowest speed stays within the process speed
//!   tolerance of the faster of the two programmed speeds: `k·cos(θ/2) ≥ 1 − tolerance`
//!   for equal speeds, about 36° for the default 5 % when the corner keeps its cruise speed
//!   (`k` is the share of the cruise rates the corner runs at, [`Plan::corner_scale`]: below
//!   1 where the blend's acceleration at cruise would exceed the job's limits). Off process
//!   any turn qualifies.
//!
//! `fix` keeps the proposed blends only when the re-check is better (see [`super::fix`]).

use crate::job::{Job, Motion};
use crate::plan::{Plan, Segment};
use nalgebra::Vector3;
use std::sync::Arc;

/// Largest blend `fix` proposes inside a process (both neighbours process segments) (m):
/// 5 mm. A bead or cut whose corner is rounded wider than that departs visibly from the drawn
/// seam (common practice).
pub const PROCESS_BLEND_CAP: f64 = 0.005;

/// Largest blend `fix` proposes between travel segments (m): 20 mm. Approach and departure
/// moves are taught with a few centimetres of room; a corner rounded by 20 mm stays inside it
/// (common practice; the re-check tests the cell, when there is one, on the rounded path).
pub const TRAVEL_BLEND_CAP: f64 = 0.020;

/// Smallest blend worth proposing (m): 0.1 mm, the precision of the proposals. A waypoint
/// whose neighbouring segment is shorter than twice this keeps its stop.
pub const MIN_BLEND: f64 = 1e-4;

/// What set a proposed radius.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RadiusBound {
    /// [`PROCESS_BLEND_CAP`].
    ProcessCap,
    /// [`TRAVEL_BLEND_CAP`].
    TravelCap,
    /// Half of the segment ending at the waypoint.
    HalfBefore,
    /// Half of the segment starting at the waypoint.
    HalfAfter,
}

/// A blend proposed at one waypoint. SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BlendProposal {
    /// Index of the waypoint (between segments `waypoint − 1` and `waypoint`).
    pub waypoint: usize,
    /// Radius (m), rounded down (see the module doc).
    pub radius: f64,
    /// What set the radius before rounding.
    pub bound: RadiusBound,
    /// Angle between the two segments' directions (rad), 0 for a straight continuation.
    pub turn: f64,
    /// Lowest TCP speed inside the blend over the reference speed: the faster programmed
    /// speed at a process corner, else the faster cruise speed.
    pub lowest_speed_share: f64,
    /// The corner lies inside a process (both neighbours are process segments).
    pub process: bool,
}

/// `r` (m) rounded down to [`MIN_BLEND`] steps, as a whole number of steps over 10⁴ so that
/// the file shows it as a short decimal in mm or m. The nudge keeps a value that is a whole
/// number of steps up to rounding on its own step.
fn round_radius(r: f64) -> f64 {
    (r / MIN_BLEND * (1.0 + 1e-12)).floor() / (1.0 / MIN_BLEND)
}

/// The smallest distance (m/s) from the origin to the segment from `a` to `b`: the lowest
/// speed of a velocity that changes linearly in time from `a` to `b`.
pub fn lowest_speed(a: &Vector3<f64>, b: &Vector3<f64>) -> f64 {
    let d = b - a;
    let dd = d.norm_squared();
    let lambda = if dd > 0.0 {
        (-a.dot(&d) / dd).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (a + d * lambda).norm()
}

/// Cruise velocity of a straight-line segment (m/s, base frame); `None` when it does not
/// move the TCP or takes no time.
fn cruise_velocity(seg: &Segment) -> Option<Vector3<f64>> {
    let moves = seg.motion == Motion::Linear && seg.length > 0.0 && seg.duration > 0.0;
    moves.then(|| (seg.end.translation.vector - seg.start.translation.vector) / seg.duration)
}

/// The blend proposed at the waypoint between `a` and the following `b` of `plan`, if the
/// rule of the module doc gives one; `tolerance` is the job's process speed tolerance (a
/// share).
fn propose(plan: &Plan, a: &Segment, b: &Segment, tolerance: f64) -> Option<BlendProposal> {
    let (v_in, v_out) = (cruise_velocity(a)?, cruise_velocity(b)?);
    if a.process != b.process {
        // The process starts or ends here: at rest.
        return None;
    }
    let process = a.process;
    let (cap, cap_bound) = if process {
        (PROCESS_BLEND_CAP, RadiusBound::ProcessCap)
    } else {
        (TRAVEL_BLEND_CAP, RadiusBound::TravelCap)
    };
    let (radius, bound) = [
        (0.5 * a.length, RadiusBound::HalfBefore),
        (0.5 * b.length, RadiusBound::HalfAfter),
        (cap, cap_bound),
    ]
    .into_iter()
    .fold(
        (f64::INFINITY, cap_bound),
        |m, c| if c.0 < m.0 { c } else { m },
    );
    let radius = round_radius(radius);
    if radius < MIN_BLEND {
        return None;
    }
    let lowest = lowest_speed(&v_in, &v_out) * plan.corner_scale(a, b, radius);
    let reference = if process {
        a.speed.max(b.speed)
    } else {
        v_in.norm().max(v_out.norm())
    };
    let share = lowest / reference;
    if process && share < 1.0 - tolerance {
        return None;
    }
    let cos = v_in.normalize().dot(&v_out.normalize()).clamp(-1.0, 1.0);
    Some(BlendProposal {
        waypoint: b.index,
        radius,
        bound,
        turn: cos.acos(),
        lowest_speed_share: share,
        process,
    })
}

/// The blends the rule of the module doc proposes for `job` planned as `plan`, in waypoint
/// order.
pub fn proposals(job: &Job, plan: &Plan) -> Vec<BlendProposal> {
    let tolerance = job.limits.process_speed_tolerance;
    let mut out = Vec::new();
    let mut before: Option<Segment> = None;
    for seg in plan.segments() {
        if let Some(a) = &before {
            if plan.blend_radius(seg.index) <= 0.0 {
                out.extend(propose(plan, a, &seg, tolerance));
            }
        }
        before = Some(seg);
    }
    out
}

/// `job` with the proposed blends set on their waypoints.
pub fn apply(job: &mut Job, blends: &[BlendProposal]) {
    if blends.is_empty() {
        return;
    }
    let n = job.waypoints.len();
    let keys = Arc::make_mut(&mut job.move_keys);
    if keys.len() < n {
        keys.resize(n, crate::motion::MoveKey::default());
    }
    for b in blends {
        keys[b.waypoint].blend = b.radius;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::job::{load_bytes, Overrides};
    use crate::plan::{plan, DEFAULT_MAX_SAMPLES};
    use std::path::Path;

    fn job_of(waypoints: &str) -> Job {
        let text = format!("robot: a.urdf\nspeed: 100\nwaypoints:\n{waypoints}");
        load_bytes(text.as_bytes(), Path::new("p.yaml"), &Overrides::default()).unwrap()
    }

    fn proposed(waypoints: &str) -> Vec<BlendProposal> {
        let job = job_of(waypoints);
        let plan = plan(&job, DEFAULT_MAX_SAMPLES).unwrap();
        proposals(&job, &plan)
    }

    #[test]
    fn the_lowest_speed_of_a_linear_velocity_change_is_v_cos_half_the_turn() {
        // Equal speeds v turning by θ: the lowest speed is |v_in + v_out|/2 = v·cos(θ/2);
        // a reversal passes through rest; unequal speeds along one line never drop below the
        // slower. source: the speed of a blend whose velocity changes linearly in time (the
        // distance from the origin to the segment v_in → v_out; derived in the module doc)
        let v = 0.1;
        for deg in [0.0f64, 10.0, 36.0, 90.0, 150.0] {
            let t = deg.to_radians();
            let a = Vector3::new(v, 0.0, 0.0);
            let b = Vector3::new(v * t.cos(), v * t.sin(), 0.0);
            assert!(
                (lowest_speed(&a, &b) - v * (t / 2.0).cos()).abs() < 1e-15,
                "{deg}"
            );
        }
        let a = Vector3::new(v, 0.0, 0.0);
        assert!(lowest_speed(&a, &-a) < 1e-15);
        assert!((lowest_speed(&a, &(a * 2.0)) - v).abs() < 1e-15);
    }

    #[test]
    fn process_corners_get_the_cap_and_only_small_turns() {
        // A process bead 100 mm along x, then 100 mm turned by 20° at b (cos 10° = 0.985:
        // kept within 5 %), then 100 mm turned by 60° more at c (cos 30° = 0.866: the blend
        // would slow the bead by 13 %, so c keeps its stop). Radius: the 5 mm cap
        // (half of 100 mm is 50 mm). source: v·cos(θ/2) (module doc); common practice (the
        // 5 mm process cap, the 5 % tolerance)
        let (c20, s20) = (
            20f64.to_radians().cos() * 100.0,
            20f64.to_radians().sin() * 100.0,
        );
        let (c80, s80) = (
            80f64.to_radians().cos() * 100.0,
            80f64.to_radians().sin() * 100.0,
        );
        let wps = format!(
            "  - {{name: a, xyz: [0, 0, 0], rpy: [180, 0, 0]}}\n\
             \x20 - {{name: b, xyz: [100, 0, 0], rpy: [180, 0, 0], process: true}}\n\
             \x20 - {{name: c, xyz: [{}, {s20}, 0], rpy: [180, 0, 0], process: true}}\n\
             \x20 - {{name: d, xyz: [{}, {}, 0], rpy: [180, 0, 0], process: true}}\n",
            100.0 + c20,
            100.0 + c20 + c80,
            s20 + s80
        );
        let p = proposed(&wps);
        assert_eq!(p.len(), 1, "{p:?}");
        assert_eq!(p[0].waypoint, 1);
        assert_eq!(p[0].radius, 0.005);
        assert_eq!(p[0].bound, RadiusBound::ProcessCap);
        assert!((p[0].turn.to_degrees() - 20.0).abs() < 1e-9);
        assert!((p[0].lowest_speed_share - 10f64.to_radians().cos()).abs() < 1e-12);
    }

    #[test]
    fn a_fast_process_corner_that_must_slow_keeps_its_stop() {
        // The 20° process corner above at the default 2000 mm/s², r = 5 mm: at cruise its
        // blend accelerates by v²·sin 10°/r, which reaches a at v_c = √(a·r/sin 10°) =
        // 240.0 mm/s. At 200 mm/s the corner keeps that speed and dips to cos 10° (within
        // 5 %); at 300 mm/s it must slow to 240 mm/s, 0.80·cos 10° = 0.79 of the programmed
        // speed, so it keeps its stop.
        // source: the corner speed of src/motion/corner.rs (derived there); v·cos(θ/2)
        // (module doc); common practice (the 5 % tolerance)
        let v_c = (2.0 * 0.005 / 10f64.to_radians().sin()).sqrt();
        assert!((v_c - 0.240).abs() < 1e-3, "{v_c}");
        let (c20, s20) = (
            20f64.to_radians().cos() * 100.0,
            20f64.to_radians().sin() * 100.0,
        );
        let at = |speed: f64| {
            proposed(&format!(
                "  - {{name: a, xyz: [0, 0, 0], rpy: [180, 0, 0]}}\n\
                 \x20 - {{name: b, xyz: [100, 0, 0], rpy: [180, 0, 0], process: true, speed: {speed}}}\n\
                 \x20 - {{name: c, xyz: [{}, {s20}, 0], rpy: [180, 0, 0], process: true, speed: {speed}}}\n",
                100.0 + c20
            ))
        };
        let p = at(200.0);
        assert_eq!(p.len(), 1, "{p:?}");
        assert!((p[0].lowest_speed_share - 10f64.to_radians().cos()).abs() < 1e-12);
        assert!(at(300.0).is_empty());
    }

    #[test]
    fn short_neighbours_halve_the_radius_and_travel_turns_any_angle() {
        // Travel moves (no process): 6 mm along x then back along a 150° turn over 30 mm: the
        // radius is half of the 6 mm segment, 3 mm, whatever the turn. source: common
        // practice (two blends on one segment must not overlap)
        let p = proposed(
            "  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [6, 0, 0], rpy: [180, 0, 0]}\n  \
             - {xyz: [-19.98, 15, 0], rpy: [180, 0, 0]}\n",
        );
        assert_eq!(p.len(), 1, "{p:?}");
        assert_eq!((p[0].waypoint, p[0].bound), (1, RadiusBound::HalfBefore));
        assert_eq!(p[0].radius, 0.003);
        assert!(!p[0].process);
    }

    #[test]
    fn no_blend_where_the_path_must_stop_or_already_blends() {
        // a → b linear, b → c joint move, c → d, d → e and e → f linear with blend 2 at e:
        // b and c touch a joint move, e has its own blend, a and f end the path; d remains.
        // source: common practice (a blend joins two straight-line moves; the path stops at
        // its ends)
        let p = proposed(
            "  - {name: a, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {name: b, xyz: [50, 0, 0], rpy: [180, 0, 0]}\n  \
             - {name: c, xyz: [50, 50, 0], rpy: [180, 0, 0], motion: joint}\n  \
             - {name: d, xyz: [0, 50, 0], rpy: [180, 0, 0]}\n  \
             - {name: e, xyz: [0, 100, 0], rpy: [180, 0, 0], blend: 2}\n  \
             - {name: f, xyz: [0, 150, 10], rpy: [180, 0, 0]}\n",
        );
        let at: Vec<usize> = p.iter().map(|b| b.waypoint).collect();
        assert_eq!(at, vec![3], "{p:?}");
    }

    #[test]
    fn no_blend_where_a_process_starts_or_ends() {
        // Travel a → b, process b → c → d, travel d → e, all straight and in line: only c,
        // inside the process, gets a blend (the 5 mm cap); b and d switch the process.
        // source: common practice (a bead starts and ends at rest)
        let p = proposed(
            "  - {name: a, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {name: b, xyz: [50, 0, 0], rpy: [180, 0, 0]}\n  \
             - {name: c, xyz: [100, 0, 0], rpy: [180, 0, 0], process: true}\n  \
             - {name: d, xyz: [150, 0, 0], rpy: [180, 0, 0], process: true}\n  \
             - {name: e, xyz: [200, 0, 0], rpy: [180, 0, 0]}\n",
        );
        let at: Vec<(usize, f64, bool)> = p
            .iter()
            .map(|b| (b.waypoint, b.radius, b.process))
            .collect();
        assert_eq!(at, vec![(2, 0.005, true)], "{p:?}");
        assert_eq!(p[0].turn, 0.0);
        assert!((p[0].lowest_speed_share - 1.0).abs() < 1e-12);
    }

    #[test]
    fn applied_blends_reach_the_plan() {
        // source: common practice (the amended job carries the radius per waypoint)
        let mut job = job_of(
            "  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [40, 0, 0], rpy: [180, 0, 0]}\n  \
             - {xyz: [40, 40, 0], rpy: [180, 0, 0]}\n",
        );
        let p = proposals(&job, &plan(&job, DEFAULT_MAX_SAMPLES).unwrap());
        apply(&mut job, &p);
        let planned = plan(&job, DEFAULT_MAX_SAMPLES).unwrap();
        assert_eq!(planned.blend_radius(1), TRAVEL_BLEND_CAP);
        assert_eq!(planned.blend_radius(2), 0.0);
    }
}
