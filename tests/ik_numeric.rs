//! Numerical IK round trips on every shipped robot.
#![allow(non_snake_case)]

use armpath::ik::{IkOptions, NumericIk};
use armpath::robot::load_urdf;
use armpath::rotation;
use rand::{Rng, SeedableRng};
use std::path::Path;

#[test]
fn round_trip_from_perturbed_seed() {
    // source: issue acceptance criterion (common practice for local IK): from the true joints
    // perturbed by up to 0.2 rad, reach the pose within 0.01 mm / 0.001° in >= 99.9 % of
    // 10,000 random in-limit configurations per robot.
    for path in [
        "robots/arm6.urdf",
        "robots/arm6_offset.urdf",
        "robots/arm7.urdf",
    ] {
        let robot = load_urdf(Path::new(path), None).unwrap();
        let ik = NumericIk::new(&robot, IkOptions::default());
        let n = robot.dof();
        let mut rng = rand::rngs::StdRng::seed_from_u64(42);
        let mut rng_cfg = armpath::rng::SplitMix64::new(99);
        let (mut ok, total) = (0usize, 10_000usize);
        let mut q_true = vec![0.0; n];
        let mut q = armpath::Joints::zeros(n);
        let mut iterations = 0u64;
        for _ in 0..total {
            q_true.copy_from_slice(&robot.random_config(&mut rng_cfg));
            let target = robot
                .chain()
                .fk(&armpath::Joints::from_slice(&q_true).unwrap());
            let seed: Vec<f64> = q_true
                .iter()
                .map(|v| v + rng.gen_range(-0.2..=0.2))
                .collect();
            let out = ik.solve(
                &target,
                &armpath::Joints::from_slice(&seed).unwrap(),
                &mut q,
            );
            iterations += out.iterations as u64;
            assert!(
                robot.within_limits(&armpath::Joints::from_slice(&q).unwrap()),
                "{path}: result outside the limits"
            );
            if out.converged {
                // Verify independently of the solver's own residual.
                let reached = robot.chain().fk(&armpath::Joints::from_slice(&q).unwrap());
                let dp = (reached.translation.vector - target.translation.vector).norm();
                let dr = rotation::angle_between(&reached.rotation, &target.rotation);
                assert!(
                    dp <= 1e-5 && dr <= 0.001_f64.to_radians(),
                    "{path}: {dp} {dr}"
                );
                ok += 1;
            }
        }
        let rate = ok as f64 / total as f64;
        println!(
            "{path}: {ok}/{total} converged ({:.3} %), mean {:.2} iterations",
            rate * 100.0,
            iterations as f64 / total as f64
        );
        assert!(rate >= 0.999, "{path}: success rate {rate}");
    }
}

#[test]
fn unreachable_target_fails_within_limits() {
    // source: common practice — a point 3 m from the base is beyond the ~1.4 m reach of
    // robots/arm6.urdf (sum of its link lengths)
    let robot = load_urdf(Path::new("robots/arm6.urdf"), None).unwrap();
    let ik = NumericIk::new(&robot, IkOptions::default());
    let mut target = robot
        .chain()
        .fk(&armpath::Joints::from_slice(&[0.0; 6]).unwrap());
    target.translation.vector.x = 3.0;
    let mut q = armpath::Joints::zeros(6);
    let out = ik.solve_with_restarts(&target, &armpath::Joints::zeros(6), 8, &mut q);
    assert!(!out.converged);
    assert!(out.position_error > 1.0);
    assert!(robot.within_limits(&armpath::Joints::from_slice(&q).unwrap()));
}
