//! Free tool spin: a spin angle about the tool z axis per sample, chosen together with the
//! arm configuration, for tools whose process ignores that rotation (`tool.free_spin`).
//!
//! Method: dynamic programming over a layered graph.
//! - Layers are the samples of the plan (the walker's own sampling: `steps` per segment,
//!   uniform in `u`), with the time step `dt` of each; a joint move is one layer (its end).
//! - A state is (sample, spin angle on a grid, arm configuration). The grid runs over
//!   `spin_range` in 5° steps: 5° of spin moves a TCP 100 mm off the tool axis by under
//!   9 mm, and finer grids multiply the work without changing which side of a singularity
//!   the path passes. The target of a state is the sample's TCP pose turned about its own z
//!   axis, `base_T_tcp · Rz(spin)`; its joints come from the closed-form solver, following
//!   each (spin, configuration) chain sample by sample on its branch (windings nearest the
//!   previous sample's joints; a chain broken by a limit or the reach restarts from the best
//!   in-range solution). A state whose pose is unreachable in its configuration or whose
//!   joints leave their ranges is excluded.
//! - Edges join states of consecutive samples in the same configuration (a change of
//!   configuration mid-path is a joint jump, an error) whose spin change is within
//!   `spin_rate · dt` and whose joint steps are within each joint's allowed speed
//!   (`velocity × joint_speed_scale × dt`) — so a path through the graph has no joint-speed
//!   errors and no jumps at the sampled resolution.
//! - The value of a path is, first, its smallest margin (largest is best), the margin of a
//!   state being [`crate::solve::margin`] of its limit ratio and singularity measure. Margins are compared in steps of 0.001, and
//!   among paths with the same smallest margin the one with less total spin change (plus the
//!   spin at the start, so that an unneeded spin stays at zero) wins. The max–min value
//!   propagates exactly through the layers (the bottleneck of a path is the smaller of its
//!   prefix's and the last state's); the spin-change tie-break is additive.
//!
//! The amended path carries the spin at every waypoint (`work_T_tcp · Rz(spin)`). Between
//! waypoints the check interpolates the orientation along the geodesic, which for an
//! unchanged programmed orientation is the linear spin ramp; extra waypoints are inserted
//! where the found profile departs from that ramp by more than the grid step (a
//! Douglas–Peucker simplification of the spin over each segment: within one grid step the
//! search cannot tell two profiles apart anyway).
//!
//! Layers: one grid step of spin must fit between layers at the allowed spin rate (the
//! smaller of `spin_rate` and the tool angular speed limit less the programmed turn rate of
//! the segment, since the two rotations add at worst), so on a linear segment the layers are
//! every `stride = ⌈step / (rate · dt)⌉` samples and the spin ramps linearly between them.
//! The joint-speed test of an edge uses the joint change over the whole stride; the
//! re-check of the amended path by `check` is the final word on every sample.

use crate::check::CheckOptions;
use crate::error::Result;
use crate::ik::analytic::{Config, OrthoParallel};
use crate::job::{Job, Motion, Waypoint};
use crate::plan::plan;
use crate::robot::{Joints, Robot, SingularityModel};
use crate::solve::{best_in_config, limit_ratio};
use nalgebra::{Isometry3, UnitQuaternion, Vector3};

/// Spin grid step (deg); see module docs.
const GRID_STEP_DEG: f64 = 5.0;

/// Largest number of (sample, spin, configuration) states searched: about 100 MB of state
/// data. Longer paths are skipped with a note (a coarser `sampling` makes them fit).
const MAX_STATES: usize = 2_000_000;

/// What the spin search found (display units).
#[derive(Debug, Clone, serde::Serialize)]
pub struct SpinOutcome {
    /// The arm configuration of the path found.
    pub config: String,
    /// `deg` or `rad`: unit of the spin values.
    pub angle_unit: &'static str,
    /// Smallest spin of the profile.
    pub min_spin: f64,
    /// Largest spin of the profile.
    pub max_spin: f64,
    /// Spin at each original waypoint.
    pub waypoint_spins: Vec<f64>,
    /// Smallest margin along the path found (see module docs).
    pub margin: f64,
    /// Smallest singularity measure along the path found.
    pub min_singularity: f64,
    /// Smallest limit ratio along the path found (see [`crate::solve::limit_ratio`]).
    pub min_limit_margin: f64,
    /// Waypoints added to follow the spin profile.
    pub added_waypoints: usize,
    /// The spun path was kept (its check beat the programmed path's).
    pub applied: bool,
    /// When the spun path was refused because its check has more collisions than the
    /// programmed path's: the body pairs that collide in it (`"a ⟷ b"`, each once, in path
    /// order). Empty otherwise.
    pub collides: Vec<String>,
}

/// A spin search result: the amended job and the outcome.
pub struct SpinFound {
    /// The job with the spin profile applied.
    pub job: Job,
    /// What the search found.
    pub outcome: SpinOutcome,
    /// Any spin other than zero.
    pub changed: bool,
}

/// One layer sample: the programmed TCP pose in the base frame and where it lies.
struct Sample {
    pose: Isometry3<f64>,
    dt: f64,
    /// Segment and parameter on it; the waypoint index when the sample is a waypoint.
    segment: usize,
    u: f64,
    waypoint: Option<usize>,
    /// Joint moves are timed by the joints themselves: no joint-speed test on the edge.
    joint_move: bool,
    /// Largest spin rate into this layer (rad/s): `spin_rate`, and for a linear segment the
    /// tool angular speed limit less the programmed turn rate (the two add at worst).
    rate: f64,
}

#[derive(Clone, Copy)]
struct State {
    q: Joints,
    margin: f64,
    singularity: f64,
    limit: f64,
    /// (quantised bottleneck margin, accumulated spin change), predecessor spin index.
    value: Option<(i64, f64, usize)>,
}

/// The best path found so far over the configurations.
struct Best {
    bottleneck: i64,
    change: f64,
    config: Config,
    /// The states along the path.
    path: Vec<State>,
    /// The spin (rad) at each sample.
    spins: Vec<f64>,
}

/// The bottleneck margin in steps of 0.001 (ties within that are decided by spin change).
fn quantise(m: f64) -> i64 {
    (m * 1000.0).floor() as i64
}

/// Search a spin profile and configuration. `robot` carries the job's tool. `Ok(None)` when
/// the arm has no closed-form solver, the path is too long for the search, or no profile
/// runs the path.
pub fn search(job: &Job, robot: &Robot, options: &CheckOptions) -> Result<Option<SpinFound>> {
    let Ok(solver) = OrthoParallel::from_robot(robot) else {
        return Ok(None);
    };
    let model = SingularityModel::new(robot);
    let pl = plan(job, options.max_samples)?;
    let step = GRID_STEP_DEG.to_radians();
    let spin_rate = job.tool.spin_rate.unwrap_or(f64::INFINITY);
    let mut samples = vec![Sample {
        pose: pl.first_base(),
        dt: 0.0,
        segment: 0,
        u: 0.0,
        waypoint: Some(0),
        joint_move: false,
        rate: spin_rate,
    }];
    for seg in pl.segments() {
        if seg.motion == Motion::Joint {
            samples.push(Sample {
                pose: seg.end,
                dt: seg.duration,
                segment: seg.index,
                u: 1.0,
                waypoint: Some(seg.index + 1),
                joint_move: true,
                rate: spin_rate,
            });
            continue;
        }
        // A repeated waypoint has no steps: keep it as a zero-time layer (spin unchanged).
        let steps = seg.steps.max(1);
        let dt = seg.duration / steps as f64;
        let turn_rate = if seg.duration > 0.0 {
            seg.geodesic.angle() / seg.duration
        } else {
            0.0
        };
        let rate = spin_rate
            .min(job.limits.tool_angular_speed - turn_rate)
            .max(0.0);
        // Layers every `stride` samples, so that one grid step of spin fits the rate between
        // layers; the spin ramps linearly in between.
        let stride = if rate > 0.0 && dt > 0.0 {
            ((step / (rate * dt)).ceil() as usize).clamp(1, steps)
        } else {
            steps
        };
        let mut i = 0;
        while i < steps {
            let next = (i + stride).min(steps);
            let u = next as f64 / steps as f64;
            samples.push(Sample {
                pose: seg.pose_at(u),
                dt: dt * (next - i) as f64,
                segment: seg.index,
                u,
                waypoint: (next == steps).then_some(seg.index + 1),
                joint_move: false,
                rate,
            });
            i = next;
        }
    }
    let (lo, hi) = job.tool.spin_range;
    let mut spins: Vec<f64> = Vec::new();
    let mut k = (lo / step).ceil() as i64;
    while (k as f64) * step <= hi + 1e-12 {
        spins.push(k as f64 * step);
        k += 1;
    }
    // A full turn: -180° and +180° are the same spin; keep one.
    if spins.len() > 1 && (spins[spins.len() - 1] - spins[0] - std::f64::consts::TAU).abs() < 1e-9 {
        spins.pop();
    }
    if spins.is_empty() {
        return Ok(None);
    }
    let ns = spins.len();
    if samples.len() * ns * Config::ALL.len() > MAX_STATES {
        return Ok(None);
    }
    let scale = job.limits.joint_speed_scale;
    let allowed: Vec<f64> = robot
        .joints()
        .iter()
        .map(|j| j.velocity * scale * (1.0 + 1e-9))
        .collect();
    let mut best: Option<Best> = None;
    for config in Config::ALL {
        // layers[i][s]: the state of spin s at sample i.
        let mut layers: Vec<Vec<State>> = Vec::with_capacity(samples.len());
        for (i, smp) in samples.iter().enumerate() {
            let mut layer = Vec::with_capacity(ns);
            for (s, &spin) in spins.iter().enumerate() {
                let target = smp.pose * UnitQuaternion::from_axis_angle(&Vector3::z_axis(), spin);
                let prev_q = (i > 0)
                    .then(|| &layers[i - 1])
                    .map(|l: &Vec<State>| l[s])
                    .filter(|st: &State| st.margin.is_finite())
                    .map(|st| st.q);
                let q = match prev_q {
                    Some(p) if !smp.joint_move => solver.solve_near(&target, &p, config),
                    _ => best_in_config(robot, &model, &solver, &target, config),
                };
                let state =
                    match q.filter(|q| robot.joints().iter().zip(q).all(|(j, v)| j.contains(*v))) {
                        Some(q) => {
                            let limit = limit_ratio(robot, &q);
                            let mut jac = crate::robot::Jacobian::zeros();
                            robot.chain().fk_jacobian(&q, &mut jac);
                            let singularity = model.measure(&jac, robot.dof());
                            State {
                                q,
                                margin: crate::solve::margin(limit, singularity),
                                singularity,
                                limit,
                                value: None,
                            }
                        }
                        None => State {
                            q: Joints::zeros(6),
                            margin: f64::NAN,
                            singularity: 0.0,
                            limit: 0.0,
                            value: None,
                        },
                    };
                layer.push(state);
            }
            // Values.
            for s in 0..ns {
                if !layer[s].margin.is_finite() {
                    continue;
                }
                let here = quantise(layer[s].margin);
                if i == 0 {
                    layer[s].value = Some((here, spins[s].abs(), s));
                    continue;
                }
                let prev = &layers[i - 1];
                let mut pick: Option<(i64, f64, usize)> = None;
                for (p, st) in prev.iter().enumerate() {
                    let Some((b, c, _)) = st.value else { continue };
                    let dspin = (spins[s] - spins[p]).abs();
                    if dspin > smp.rate * smp.dt + 1e-12 {
                        continue;
                    }
                    if !smp.joint_move {
                        let ok = (0..6).all(|k| {
                            (layer[s].q[k] - st.q[k]).abs() <= allowed[k] * smp.dt + 1e-12
                        });
                        if !ok {
                            continue;
                        }
                    }
                    let cand = (b.min(here), c + dspin, p);
                    if pick.is_none_or(|x| cand.0 > x.0 || (cand.0 == x.0 && cand.1 < x.1)) {
                        pick = Some(cand);
                    }
                }
                layer[s].value = pick;
            }
            layers.push(layer);
        }
        let last = &layers[layers.len() - 1];
        let end = last
            .iter()
            .enumerate()
            .filter_map(|(s, st)| st.value.map(|v| (v, s)))
            .max_by(|a, b| a.0 .0.cmp(&b.0 .0).then(b.0 .1.total_cmp(&a.0 .1)));
        let Some(((b, c, _), s_end)) = end else {
            continue;
        };
        if best
            .as_ref()
            .is_none_or(|x| b > x.bottleneck || (b == x.bottleneck && c < x.change))
        {
            // Trace back the spin indices.
            let mut path = vec![last[s_end]; layers.len()];
            let mut idx = vec![s_end; layers.len()];
            for i in (1..layers.len()).rev() {
                let st = layers[i][idx[i]];
                path[i] = st;
                idx[i - 1] = st.value.map(|v| v.2).unwrap_or(idx[i]);
            }
            path[0] = layers[0][idx[0]];
            let profile: Vec<f64> = idx.iter().map(|&s| spins[s]).collect();
            best = Some(Best {
                bottleneck: b,
                change: c,
                config,
                path,
                spins: profile,
            });
        }
    }
    let Some(Best {
        config,
        path,
        spins: spin_of,
        ..
    }) = best
    else {
        return Ok(None);
    };
    let (amended, added) = amend(job, &pl, &samples, &spin_of, step);
    let a = job.units.angle_to_rad();
    let waypoint_spins: Vec<f64> = samples
        .iter()
        .zip(&spin_of)
        .filter(|(s, _)| s.waypoint.is_some())
        .map(|(_, sp)| sp / a)
        .collect();
    let changed = spin_of.iter().any(|s| s.abs() > 1e-12);
    let mut amended = amended;
    super::set_config(&mut amended, config);
    Ok(Some(SpinFound {
        job: amended,
        changed,
        outcome: SpinOutcome {
            config: config.to_string(),
            angle_unit: job.units.angle.name(),
            min_spin: spin_of.iter().copied().fold(f64::INFINITY, f64::min) / a,
            max_spin: spin_of.iter().copied().fold(f64::NEG_INFINITY, f64::max) / a,
            waypoint_spins,
            margin: path.iter().map(|s| s.margin).fold(f64::INFINITY, f64::min),
            min_singularity: path
                .iter()
                .map(|s| s.singularity)
                .fold(f64::INFINITY, f64::min),
            min_limit_margin: path.iter().map(|s| s.limit).fold(f64::INFINITY, f64::min),
            added_waypoints: added,
            applied: false,
            collides: Vec::new(),
        },
    }))
}

/// The job with the spin applied at every waypoint, plus waypoints where the profile departs
/// from the straight ramp between kept samples by more than `tolerance` (rad).
fn amend(
    job: &Job,
    pl: &crate::plan::Plan,
    samples: &[Sample],
    spin: &[f64],
    tolerance: f64,
) -> (Job, usize) {
    let turn = |s: f64| UnitQuaternion::from_axis_angle(&Vector3::z_axis(), s);
    let work_T_base = job.base_T_work.inverse();
    let mut out = job.clone();
    if spin[0] != 0.0 {
        // The first pose turned: given start joints guide its solution only.
        if let Some(sj) = &mut out.start_joints {
            sj.seed = true;
        }
    }
    let mut waypoints = Vec::with_capacity(job.waypoints.len());
    // Every name is written out, generated ones too, so that a waypoint keeps its name when
    // added waypoints shift its position.
    let mut names = crate::job::NamesBuilder::new();
    let mut added = 0;
    let first = &job.waypoints[0];
    names.push(Some(&job.waypoint_name(0)));
    waypoints.push(Waypoint {
        work_T_tcp: first.work_T_tcp * turn(spin[0]),
        ..first.clone()
    });
    let mut start = 0;
    for seg in pl.segments() {
        // Samples of this segment: from `start` (the previous waypoint) to its end.
        let Some(end) = samples
            .iter()
            .enumerate()
            .skip(start + 1)
            .find(|(_, s)| s.waypoint == Some(seg.index + 1))
            .map(|(i, _)| i)
        else {
            break;
        };
        let mut keep = vec![start, end];
        if seg.motion == Motion::Linear {
            simplify(spin, start, end, tolerance, &mut keep);
        }
        keep.sort_unstable();
        let wp = &job.waypoints[seg.index + 1];
        for (n, &i) in keep.iter().enumerate().skip(1) {
            let smp = &samples[i];
            if i == end {
                names.push(Some(&job.waypoint_name(seg.index + 1)));
                waypoints.push(Waypoint {
                    work_T_tcp: wp.work_T_tcp * turn(spin[i]),
                    ..wp.clone()
                });
            } else {
                debug_assert_eq!(smp.segment, seg.index);
                added += 1;
                let name = format!("{}_spin{}", job.waypoint_name(seg.index + 1), n);
                names.push(Some(&name));
                waypoints.push(Waypoint {
                    work_T_tcp: work_T_base * seg.pose_at(smp.u) * turn(spin[i]),
                    motion: Motion::Linear,
                    speed: wp.speed,
                    line: wp.line,
                    process: wp.process,
                });
            }
        }
        start = end;
    }
    out.waypoints = std::sync::Arc::new(waypoints);
    out.names = names.finish();
    (out, added)
}

/// Douglas–Peucker on the spin over samples `a..=b`: add the sample farthest from the
/// straight ramp between `a` and `b` when it is farther than `tolerance`, and recurse.
fn simplify(spin: &[f64], a: usize, b: usize, tolerance: f64, keep: &mut Vec<usize>) {
    if b <= a + 1 {
        return;
    }
    let (mut worst, mut at) = (0.0, a);
    for i in a + 1..b {
        let t = (i - a) as f64 / (b - a) as f64;
        let d = (spin[i] - (spin[a] + (spin[b] - spin[a]) * t)).abs();
        if d > worst {
            worst = d;
            at = i;
        }
    }
    if worst > tolerance {
        keep.push(at);
        simplify(spin, a, at, tolerance, keep);
        simplify(spin, at, b, tolerance, keep);
    }
}
