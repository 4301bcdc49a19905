//! Inverse kinematics cost on arm6: every closed-form solution per call, against one
//! numerical solve from a nearby seed (armpath's kernel and `k`'s Jacobian solver).
//!
//! The same 256 targets (FK of random in-limit configurations) feed every variant; the
//! numerical solvers start 0.05 rad away from the true joints, as a path sample would.

use armpath::ik::analytic::{Config, OrthoParallel};
use armpath::ik::{IkOptions, NumericIk};
use armpath::rng::SplitMix64;
use armpath::robot::load_urdf;
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use k::InverseKinematicsSolver;
use nalgebra::Isometry3;
use std::path::Path;
use std::time::Duration;

const URDF: &str = "robots/arm6.urdf";
const TARGETS: usize = 256;

struct Case {
    target: Isometry3<f64>,
    truth: armpath::Joints,
    seed: armpath::Joints,
    config: Config,
}

fn cases(solver: &OrthoParallel) -> Vec<Case> {
    let robot = load_urdf(Path::new(URDF), None).expect("robots/arm6.urdf loads");
    let mut rng = SplitMix64::new(31);
    (0..TARGETS)
        .map(|_| {
            let q = robot.random_config(&mut rng);
            let seed = q.map(|i, v| v + if i % 2 == 0 { 0.05 } else { -0.05 });
            Case {
                target: robot.chain().fk(&q),
                truth: q,
                seed,
                config: solver.config_of(&q).expect("six joints"),
            }
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let robot = load_urdf(Path::new(URDF), None).expect("robots/arm6.urdf loads");
    let solver = OrthoParallel::from_robot(&robot).expect("arm6 is ortho-parallel");
    let cases = cases(&solver);
    let mut group = c.benchmark_group("ik_arm6");

    let mut i = 0;
    group.bench_function("closed_form_all_in_limit", |b| {
        b.iter(|| {
            i = (i + 1) % TARGETS;
            black_box(solver.solve(black_box(&cases[i].target)).len())
        })
    });
    group.bench_function("closed_form_eight_raw", |b| {
        b.iter(|| {
            i = (i + 1) % TARGETS;
            black_box(solver.solve_all(black_box(&cases[i].target)).len())
        })
    });
    group.bench_function("closed_form_one_branch_near", |b| {
        b.iter(|| {
            i = (i + 1) % TARGETS;
            let case = &cases[i];
            black_box(solver.solve_near(black_box(&case.target), &case.truth, case.config))
        })
    });

    let numeric = NumericIk::new(&robot, IkOptions::default());
    let mut q = armpath::Joints::zeros(6);
    group.bench_function("numeric_one_solve_near_seed", |b| {
        b.iter(|| {
            i = (i + 1) % TARGETS;
            let case = &cases[i];
            black_box(numeric.solve(black_box(&case.target), &case.seed, &mut q))
        })
    });

    let k_chain = k::Chain::<f64>::from_urdf_file(URDF).expect("k reads arm6");
    let arm = k::SerialChain::from_end(k_chain.find("flange_mount").expect("flange_mount joint"));
    // Same tolerances as armpath's numerical kernel (1e-5 m, 0.001°) and iteration cap.
    let k_solver = k::JacobianIkSolver::new(1e-5, 0.001_f64.to_radians(), 0.5, 100);
    group.bench_function("k_jacobian_one_solve_near_seed", |b| {
        b.iter(|| {
            i = (i + 1) % TARGETS;
            let case = &cases[i];
            arm.set_joint_positions_clamped(&case.seed);
            black_box(k_solver.solve(&arm, black_box(&case.target)).is_ok())
        })
    });
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .sample_size(50)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(3));
    targets = bench
}
criterion_main!(benches);
