//! Per-call cost of forward kinematics, the Jacobian and IK on the 6-axis demo arm
//! (`robots/arm6.urdf`, tip link `flange`), armpath next to the `k` crate (0.32) on the
//! same inputs in the same run.
//!
//! Inputs, all drawn with a fixed seed so that every run times the same work:
//! - FK and Jacobian: 256 random in-limit configurations, cycled.
//! - IK along a line: 400 mm straight across the workspace in front of the arm in 1 mm
//!   steps, constant orientation with the tool pointing down; every solve is seeded with
//!   the previous solution (how a path checker uses IK).
//! - IK at random targets: the TCP poses of 256 random in-limit configurations, each solve
//!   seeded from the true joints with every joint moved by 0.1 rad (sign drawn at random).
//!
//! Before the timed loops both sides are checked to compute the same thing (FK and Jacobian
//! agree to 1e-12) and the IK success rates over the same targets are printed: a solve
//! counts as a success only when its joints are within limits and put the TCP within the
//! shared tolerances (1e-5 m, 0.001°), judged by one and the same check for both solvers.
//!
//! Run: `cargo bench --bench kinematics`.
#![allow(non_snake_case)]

use armpath::ik::{pose_error, IkOptions, NumericIk, WarmStart};
use armpath::rng::SplitMix64;
use armpath::robot::{load_urdf, Jacobian, Robot};
use criterion::{criterion_group, criterion_main, Criterion};
use k::InverseKinematicsSolver;
use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};
use std::f64::consts::PI;
use std::hint::black_box;
use std::path::Path;
use std::time::Duration;

const URDF: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/robots/arm6.urdf");
/// `k` names a node after the joint above a link; the fixed joint above `flange`.
const K_TIP_NODE: &str = "flange_mount";
/// Enough distinct inputs that branch prediction cannot learn them, few enough to stay in L1.
const N_CONFIGS: usize = 256;
/// Line: 400 mm in 1 mm steps.
const LINE_STEPS: usize = 400;
const LINE_STEP: f64 = 1e-3;
/// Seed perturbation for the random-target IK case (rad, every joint).
const SEED_OFFSET: f64 = 0.1;
/// k's step gain: 1.0 is the full Newton step, the fewest iterations and so k's fastest
/// setting. Gain 0.5 succeeds on a few more random targets at more iterations per solve; the
/// success rates of both are printed.
const K_JACOBIAN_MULTIPLIER: f64 = 1.0;

struct Setup {
    robot: Robot,
    /// k's chain; `serial` shares its nodes, so it must live as long.
    _k_chain: k::Chain<f64>,
    serial: k::SerialChain<f64>,
    configs: Vec<[f64; 6]>,
    /// Line start joints and the 400 targets after it.
    line_q0: [f64; 6],
    line_targets: Vec<Isometry3<f64>>,
    /// Random targets with their perturbed seeds.
    random_targets: Vec<(Isometry3<f64>, [f64; 6])>,
}

fn setup() -> Setup {
    let robot = load_urdf(Path::new(URDF), None).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(robot.dof(), 6, "the bench expects the 6-axis demo arm");
    let k_chain = k::Chain::<f64>::from_urdf_file(URDF).unwrap_or_else(|e| panic!("{e}"));
    let serial = k::SerialChain::from_end(
        k_chain
            .find(K_TIP_NODE)
            .unwrap_or_else(|| panic!("no node {K_TIP_NODE} in {URDF}")),
    );
    assert_eq!(serial.dof(), 6);

    let mut rng = SplitMix64::new(0xbe9c_4a11);
    let configs: Vec<[f64; 6]> = (0..N_CONFIGS)
        .map(|_| {
            let mut q = [0.0; 6];
            q.copy_from_slice(&robot.random_config(&mut rng));
            q
        })
        .collect();

    // Line in front of the arm, across it (along y) at x = 0.85 m, z = 0.35 m, the flange z
    // axis pointing straight down: a rotation of π about the base y axis.
    let down = UnitQuaternion::from_axis_angle(&Vector3::y_axis(), PI);
    let start = Vector3::new(0.85, -0.2, 0.35);
    let line_pose = |s: usize| {
        Isometry3::from_parts(
            Translation3::from(start + Vector3::new(0.0, s as f64 * LINE_STEP, 0.0)),
            down,
        )
    };
    // Start joints: elbow up, wrist bent down (j5 = 90° turns the flange from +x to −z).
    let ik = NumericIk::new(&robot, IkOptions::default());
    let guess = [0.0, 0.0, 0.0, 0.0, PI / 2.0, 0.0];
    let mut solved_q0 = armpath::Joints::zeros(6);
    let out = ik.solve_with_restarts(
        &line_pose(0),
        &armpath::Joints::from(guess),
        16,
        &mut solved_q0,
    );
    let mut line_q0 = [0.0; 6];
    line_q0.copy_from_slice(&solved_q0);
    assert!(out.converged, "line start not reachable: {out:?}");
    let line_targets = (1..=LINE_STEPS).map(line_pose).collect();

    let mut random_targets = Vec::with_capacity(N_CONFIGS);
    for q in &configs {
        let target = robot.chain().fk(&armpath::Joints::from_slice(q).unwrap());
        let mut seed = [0.0; 6];
        for (i, (s, j)) in seed.iter_mut().zip(robot.joints()).enumerate() {
            let sign = if rng.next_u64() & 1 == 0 { -1.0 } else { 1.0 };
            *s = (q[i] + sign * SEED_OFFSET).clamp(j.lower, j.upper);
        }
        random_targets.push((target, seed));
    }

    Setup {
        robot,
        _k_chain: k_chain,
        serial,
        configs,
        line_q0,
        line_targets,
        random_targets,
    }
}

fn k_solver(options: &IkOptions, multiplier: f64) -> k::JacobianIkSolver<f64> {
    k::JacobianIkSolver::new(
        options.position_tolerance,
        options.orientation_tolerance,
        multiplier,
        options.max_iterations as usize,
    )
}

/// The one success check applied to both solvers: joints within limits and the TCP within
/// both tolerances of the target, measured with armpath's FK (which matches k's to 1e-12).
fn solved(robot: &Robot, options: &IkOptions, q: &[f64], target: &Isometry3<f64>) -> bool {
    let e = pose_error(
        &robot.chain().fk(&armpath::Joints::from_slice(q).unwrap()),
        target,
    );
    robot.within_limits(&armpath::Joints::from_slice(q).unwrap())
        && e.fixed_rows::<3>(0).norm() <= options.position_tolerance
        && e.fixed_rows::<3>(3).norm() <= options.orientation_tolerance
}

fn check_same_kinematics(s: &Setup) {
    let chain = s.robot.chain();
    let mut jac = Jacobian::zeros();
    let mut worst: f64 = 0.0;
    for q in &s.configs {
        let ours = chain.fk_jacobian(&armpath::Joints::from_slice(q).unwrap(), &mut jac);
        s.serial.set_joint_positions_unchecked(q);
        let theirs = s.serial.end_transform();
        worst = worst.max((ours.translation.vector - theirs.translation.vector).norm());
        worst = worst.max(ours.rotation.angle_to(&theirs.rotation));
        let k_jac = k::jacobian(&s.serial);
        for r in 0..6 {
            for c in 0..6 {
                worst = worst.max((jac[(r, c)] - k_jac[(r, c)]).abs());
            }
        }
    }
    // Both evaluate the same products in double precision; 1e-12 leaves room for rounding
    // in a different order and nothing for a modelling difference.
    assert!(worst < 1e-12, "armpath and k disagree by {worst:e}");
}

struct Rates {
    ours: usize,
    ours_iterations: u64,
    k: usize,
    k_ok: usize,
    total: usize,
}

fn print_rates(what: &str, r: &Rates) {
    let pct = |n: usize| 100.0 * n as f64 / r.total as f64;
    eprintln!(
        "{what}: success armpath {}/{} ({:.2} %, mean {:.2} iterations), \
         k {}/{} ({:.2} %; k itself reported Ok for {})",
        r.ours,
        r.total,
        pct(r.ours),
        r.ours_iterations as f64 / r.total as f64,
        r.k,
        r.total,
        pct(r.k),
        r.k_ok,
    );
}

/// Success rates along the line, each solver warm-started from its own previous answer
/// (k keeps the seed when it fails, armpath its best joints; both only matter on failure).
fn line_rates(s: &Setup, options: &IkOptions, multiplier: f64) -> Rates {
    let ik = NumericIk::new(&s.robot, *options);
    let solver = k_solver(options, multiplier);
    let mut r = Rates {
        ours: 0,
        ours_iterations: 0,
        k: 0,
        k_ok: 0,
        total: s.line_targets.len(),
    };
    let mut prev = armpath::Joints::from(s.line_q0);
    let mut q = armpath::Joints::zeros(6);
    s.serial.set_joint_positions_unchecked(&s.line_q0);
    for target in &s.line_targets {
        let out = ik.solve(target, &prev, &mut q);
        r.ours_iterations += u64::from(out.iterations);
        r.ours += usize::from(out.converged && solved(&s.robot, options, &q, target));
        prev = q;
        let ok = solver.solve(&s.serial, target).is_ok();
        r.k_ok += usize::from(ok);
        r.k += usize::from(ok && solved(&s.robot, options, &s.serial.joint_positions(), target));
    }
    r
}

fn random_rates(s: &Setup, options: &IkOptions, multiplier: f64) -> Rates {
    let ik = NumericIk::new(&s.robot, *options);
    let solver = k_solver(options, multiplier);
    let mut r = Rates {
        ours: 0,
        ours_iterations: 0,
        k: 0,
        k_ok: 0,
        total: s.random_targets.len(),
    };
    let mut q = armpath::Joints::zeros(6);
    for (target, seed) in &s.random_targets {
        let out = ik.solve(target, &armpath::Joints::from(*seed), &mut q);
        r.ours_iterations += u64::from(out.iterations);
        r.ours += usize::from(out.converged && solved(&s.robot, options, &q, target));
        s.serial.set_joint_positions_unchecked(seed);
        let ok = solver.solve(&s.serial, target).is_ok();
        r.k_ok += usize::from(ok);
        r.k += usize::from(ok && solved(&s.robot, options, &s.serial.joint_positions(), target));
    }
    r
}

/// The benchmark configurations as armpath joint vectors, made before timing.
fn joint_vectors(s: &Setup) -> Vec<armpath::Joints> {
    s.configs
        .iter()
        .map(|q| armpath::Joints::from(*q))
        .collect()
}

fn bench_fk(c: &mut Criterion, s: &Setup) {
    let chain = s.robot.chain();
    let mut g = c.benchmark_group("fk");
    let configs = joint_vectors(s);
    g.bench_function("armpath", |b| {
        let mut i = 0;
        b.iter(|| {
            let q = &configs[i % N_CONFIGS];
            i += 1;
            black_box(chain.fk(black_box(q)))
        })
    });
    g.bench_function("k", |b| {
        let mut i = 0;
        b.iter(|| {
            let q = &s.configs[i % N_CONFIGS];
            i += 1;
            s.serial.set_joint_positions_unchecked(black_box(q));
            black_box(s.serial.end_transform())
        })
    });
    g.finish();
}

fn bench_jacobian(c: &mut Criterion, s: &Setup) {
    let chain = s.robot.chain();
    let mut g = c.benchmark_group("jacobian");
    let configs = joint_vectors(s);
    g.bench_function("armpath", |b| {
        let mut i = 0;
        let mut jac = Jacobian::zeros();
        b.iter(|| {
            let q = &configs[i % N_CONFIGS];
            i += 1;
            let pose = chain.fk_jacobian(black_box(q), &mut jac);
            black_box((&pose, &jac));
        })
    });
    g.bench_function("k", |b| {
        let mut i = 0;
        b.iter(|| {
            let q = &s.configs[i % N_CONFIGS];
            i += 1;
            s.serial.set_joint_positions_unchecked(black_box(q));
            black_box(k::jacobian(&s.serial))
        })
    });
    g.finish();
}

fn bench_ik_line(c: &mut Criterion, s: &Setup) {
    let options = IkOptions::default();
    for (name, m) in [("k, gain 1.0", K_JACOBIAN_MULTIPLIER), ("k, gain 0.5", 0.5)] {
        print_rates(&format!("ik_line ({name})"), &line_rates(s, &options, m));
    }
    let ik = NumericIk::new(&s.robot, options);
    let solver = k_solver(&options, K_JACOBIAN_MULTIPLIER);
    let mut g = c.benchmark_group("ik_line");
    g.bench_function("armpath", |b| {
        // Path mode, as `check` runs it: each sample starts from the previous sample's
        // solution with its pose and Jacobian already evaluated (`solve_warm`).
        let mut i = 0;
        let mut warm = WarmStart::new();
        warm.reset(&armpath::Joints::from_slice(&s.line_q0).unwrap());
        let mut q = armpath::Joints::zeros(6);
        b.iter(|| {
            if i == LINE_STEPS {
                i = 0;
                warm.reset(&armpath::Joints::from_slice(&s.line_q0).unwrap());
            }
            black_box(ik.solve_warm(&s.line_targets[i], &mut warm, &mut q));
            i += 1;
        })
    });
    g.bench_function("k", |b| {
        let mut i = 0;
        s.serial.set_joint_positions_unchecked(&s.line_q0);
        b.iter(|| {
            if i == LINE_STEPS {
                i = 0;
                s.serial.set_joint_positions_unchecked(&s.line_q0);
            }
            // The chain holds the previous solution: k's warm start.
            let _ = black_box(solver.solve(&s.serial, &s.line_targets[i]));
            i += 1;
        })
    });
    g.finish();
}

fn bench_ik_random(c: &mut Criterion, s: &Setup) {
    let options = IkOptions::default();
    for (name, m) in [("k, gain 1.0", K_JACOBIAN_MULTIPLIER), ("k, gain 0.5", 0.5)] {
        print_rates(
            &format!("ik_random ({name})"),
            &random_rates(s, &options, m),
        );
    }
    let ik = NumericIk::new(&s.robot, options);
    let solver = k_solver(&options, K_JACOBIAN_MULTIPLIER);
    let mut g = c.benchmark_group("ik_random");
    g.bench_function("armpath", |b| {
        let mut i = 0;
        let mut q = armpath::Joints::zeros(6);
        let seeds: Vec<armpath::Joints> = s
            .random_targets
            .iter()
            .map(|(_, seed)| armpath::Joints::from(*seed))
            .collect();
        b.iter(|| {
            let (target, _) = &s.random_targets[i % N_CONFIGS];
            let seed = &seeds[i % N_CONFIGS];
            i += 1;
            black_box(ik.solve(target, seed, &mut q));
        })
    });
    g.bench_function("k", |b| {
        let mut i = 0;
        b.iter(|| {
            let (target, seed) = &s.random_targets[i % N_CONFIGS];
            i += 1;
            s.serial.set_joint_positions_unchecked(seed);
            let _ = black_box(solver.solve(&s.serial, target));
        })
    });
    g.finish();
}

fn kinematics(c: &mut Criterion) {
    let s = setup();
    check_same_kinematics(&s);
    bench_fk(c, &s);
    bench_jacobian(c, &s);
    bench_ik_line(c, &s);
    bench_ik_random(c, &s);
}

criterion_group! {
    name = benches;
    // Short runs: the machine has two cores shared with other builds.
    config = Criterion::default()
        .sample_size(30)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_millis(2500));
    targets = kinematics
}
criterion_main!(benches);
