//! The whole check on a path of 30,000+ samples (on one thread, and on two: the main walk in
//! chunks on both, beside the configuration table), next to a plain `k` IK loop over the same sample poses
//! (warm-started from the previous solution) in the same run.
//!
//! Run: `cargo bench --bench check`
#![allow(non_snake_case)]

use armpath::check::{check, CheckOptions};
use armpath::job::{self, Overrides};
use armpath::plan::plan;
use armpath::report::Report;
use armpath::robot::load_urdf;
use criterion::{criterion_group, criterion_main, Criterion};
use k::InverseKinematicsSolver;
use std::hint::black_box;
use std::time::Duration;

/// The demo seam without its joint-move approach (so that every sample is a Cartesian pose
/// both solvers can be given), sampled every 0.012 mm: about 31,700 samples.
const PATH: &str = "units: {length: mm, angle: deg}
robot: ROBOT
tool: {xyz: [0, 0, 180], rpy: [0, 0, 0]}
work_frame: {xyz: [850, -150, 250], rpy: [0, 0, 0]}
speed: 8
sampling: {step: 0.012, angle_step: 0.5}
waypoints:
  - {name: seam_start, xyz: [0, 0, 0],   rpy: [180, 45, 0]}
  - {name: seam_mid, xyz: [0, 150, 0],   rpy: [180, 45, -10]}
  - {name: seam_end, xyz: [0, 300, 0],   rpy: [180, 45, -10]}
  - {name: retract, xyz: [0, 300, 80],   rpy: [180, 45, -10]}
";

fn bench(c: &mut Criterion) {
    let root = env!("CARGO_MANIFEST_DIR");
    let dir = std::env::temp_dir().join(format!("armpath-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("seam.yaml");
    std::fs::write(
        &file,
        PATH.replace("ROBOT", &format!("{root}/robots/arm6.urdf")),
    )
    .unwrap();
    let job = job::load(&file, &Overrides::default()).unwrap();
    let robot = load_urdf(&job.robot, None).unwrap();
    let plan = plan(&job, u64::MAX).unwrap();
    // The sample poses, as the checker makes them.
    let mut targets = vec![plan.first_base()];
    for seg in plan.segments() {
        for i in 1..=seg.steps {
            targets.push(seg.pose_at(i as f64 / seg.steps as f64));
        }
    }
    eprintln!("path of {} samples", targets.len());
    assert!(targets.len() >= 30_000);

    let options = CheckOptions::default();
    let outcome = check(&job, &robot, &options, &mut []).unwrap();
    eprintln!(
        "check: verdict {}, {} samples",
        outcome.verdict().name(),
        outcome.totals.samples
    );
    let start: Vec<f64> = outcome.start.joints.to_vec();

    // k: the same TCP (flange × tool), warm-started, same tolerances.
    let kchain = k::Chain::<f64>::from_urdf_file(format!("{root}/robots/arm6.urdf")).unwrap();
    let flange = kchain.find("flange_mount").unwrap();
    let tcp_node: k::Node<f64> = k::NodeBuilder::new()
        .name("tcp")
        .translation(nalgebra::Translation3::new(0.0, 0.0, 0.18))
        .joint_type(k::JointType::Fixed)
        .finalize()
        .into();
    tcp_node.set_parent(flange);
    let serial = k::SerialChain::from_end(&tcp_node);
    let solver = k::JacobianIkSolver::new(1e-5, 0.001f64.to_radians(), 1.0, 100);

    let mut g = c.benchmark_group("check_30k");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(20));
    g.bench_function("armpath check (all findings)", |b| {
        b.iter(|| {
            let outcome = check(&job, &robot, &options, &mut []).unwrap();
            black_box(Report::from_outcome(&outcome).unwrap())
        })
    });
    // The same check on two threads: the main walk starts at once, in chunks walked on the
    // rayon workers and handed on in order by this thread, while the configuration table is
    // built on a worker too (the demo seam's first guess holds).
    let two = CheckOptions {
        threads: 2,
        ..options
    };
    g.bench_function("armpath check (all findings, 2 threads)", |b| {
        b.iter(|| {
            let outcome = check(&job, &robot, &two, &mut []).unwrap();
            black_box(Report::from_outcome(&outcome).unwrap())
        })
    });
    g.bench_function("k IK loop (IK only)", |b| {
        b.iter(|| {
            serial.set_joint_positions_unchecked(&start);
            let mut ok = 0usize;
            for t in &targets {
                if solver.solve(&serial, t).is_ok() {
                    ok += 1;
                }
            }
            black_box(ok)
        })
    });
    g.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
