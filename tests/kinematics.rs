//! Forward kinematics and Jacobian of the flat chain against independent references:
//! the `k` crate, Pinocchio fixtures, finite differences and closed forms.
#![allow(non_snake_case)]

use approx::assert_relative_eq;
use armpath::robot::{load_urdf, manipulability, Jacobian, Robot};
use armpath::rotation;
use nalgebra::{Isometry3, Vector3};
use rand::{Rng, SeedableRng};
use std::path::Path;

/// Every robot shipped in robots/ plus the test fixtures, with the name of the fixed joint
/// that carries the tip link (that is how `k` names the tip node).
const ROBOTS: &[(&str, &str)] = &[
    ("robots/arm6.urdf", "flange_mount"),
    ("robots/arm6_offset.urdf", "flange_mount"),
    ("robots/arm7.urdf", "flange_mount"),
    ("tests/fixtures/planar2r.urdf", "tip_mount"),
    ("tests/fixtures/prismatic3.urdf", "tool_mount_joint"),
];

fn load(path: &str) -> Robot {
    load_urdf(Path::new(path), None).unwrap_or_else(|e| panic!("{e}"))
}

fn random_q(robot: &Robot, rng: &mut impl Rng) -> Vec<f64> {
    robot
        .joints()
        .iter()
        .map(|j| {
            let lo = j.lower.max(-2.0 * std::f64::consts::PI);
            let hi = j.upper.min(2.0 * std::f64::consts::PI);
            rng.gen_range(lo..=hi)
        })
        .collect()
}

#[test]
fn fk_matches_k_on_every_robot() {
    // source: k 0.32.0 (crates.io), SerialChain::end_transform — reference implementation
    let mut rng = rand::rngs::StdRng::seed_from_u64(7);
    for &(path, tip_joint) in ROBOTS {
        let robot = load(path);
        let kchain = k::Chain::<f64>::from_urdf_file(path).unwrap();
        let serial = k::SerialChain::from_end(kchain.find(tip_joint).unwrap());
        assert_eq!(serial.dof(), robot.dof(), "{path}");
        let mut worst: f64 = 0.0;
        for _ in 0..1000 {
            let q = random_q(&robot, &mut rng);
            serial.set_joint_positions_unchecked(&q);
            let reference = serial.end_transform();
            let ours = robot.chain().fk(&armpath::Joints::from_slice(&q).unwrap());
            worst = worst.max((ours.translation.vector - reference.translation.vector).norm());
            worst = worst.max(rotation::angle_between(&ours.rotation, &reference.rotation));
        }
        assert!(worst < 1e-12, "{path}: worst FK deviation from k {worst:e}");
    }
}

#[derive(serde::Deserialize)]
struct PinFile {
    generator: String,
    robots: Vec<PinRobot>,
}
#[derive(serde::Deserialize)]
struct PinRobot {
    urdf: String,
    tip: String,
    joint_names: Vec<String>,
    samples: Vec<PinSample>,
}
#[derive(serde::Deserialize)]
struct PinSample {
    q: Vec<f64>,
    position: [f64; 3],
    quat_wxyz: [f64; 4],
    jacobian: Vec<Vec<f64>>,
}

#[test]
fn fk_and_jacobian_match_pinocchio_fixtures() {
    // source: Pinocchio 4.1.0 (pin on PyPI), tests/fixtures/pin_reference.json made by
    // tools/fixtures/pin_reference.py: oMf of the tip frame and computeFrameJacobian
    // (LOCAL_WORLD_ALIGNED)
    let text = std::fs::read_to_string("tests/fixtures/pin_reference.json").unwrap();
    let file: PinFile = serde_json::from_str(&text).unwrap();
    assert!(file.generator.contains("pinocchio"));
    let mut checked = 0;
    for r in &file.robots {
        let robot = load_urdf(Path::new(&r.urdf), Some(&r.tip)).unwrap();
        let names: Vec<&str> = robot.joints().iter().map(|j| j.name.as_str()).collect();
        assert_eq!(names, r.joint_names, "{}", r.urdf);
        for s in &r.samples {
            let mut jac = Jacobian::zeros();
            let pose = robot
                .chain()
                .fk_jacobian(&armpath::Joints::from_slice(&s.q).unwrap(), &mut jac);
            let (pin_rot, _) = rotation::quat_from_wxyz(s.quat_wxyz).unwrap();
            assert_relative_eq!(
                pose.translation.vector,
                Vector3::from(s.position),
                epsilon = 1e-12
            );
            assert!(rotation::angle_between(&pose.rotation, &pin_rot) < 1e-12);
            for (row, values) in s.jacobian.iter().enumerate() {
                for (col, v) in values.iter().enumerate() {
                    assert!(
                        (jac[(row, col)] - v).abs() < 1e-12,
                        "{} J[{row},{col}] = {} vs pin {v}",
                        r.urdf,
                        jac[(row, col)]
                    );
                }
            }
            checked += 1;
        }
    }
    assert!(checked >= 200, "only {checked} fixture samples");
}

/// Central finite differences of FK: linear rows from positions, angular rows from
/// log(R(q+h) R(q−h)ᵀ) / 2h (the base-frame angular velocity).
fn numeric_jacobian(robot: &Robot, q: &[f64]) -> Jacobian {
    let h = 1e-6;
    let mut jac = Jacobian::zeros();
    for i in 0..robot.dof() {
        let (mut qp, mut qm) = (q.to_vec(), q.to_vec());
        qp[i] += h;
        qm[i] -= h;
        let (tp, tm): (Isometry3<f64>, Isometry3<f64>) = (
            robot.chain().fk(&armpath::Joints::from_slice(&qp).unwrap()),
            robot.chain().fk(&armpath::Joints::from_slice(&qm).unwrap()),
        );
        let lin = (tp.translation.vector - tm.translation.vector) / (2.0 * h);
        let ang = rotation::log(&(tp.rotation * tm.rotation.inverse())) / (2.0 * h);
        for r in 0..3 {
            jac[(r, i)] = lin[r];
            jac[(r + 3, i)] = ang[r];
        }
    }
    jac
}

#[test]
fn jacobian_matches_finite_differences_with_a_tool() {
    // source: common practice (central differences, truncation error O(h²) ≈ 1e-12,
    // rounding ≈ 1e-16/h = 1e-10, hence the 1e-8 bound)
    let mut rng = rand::rngs::StdRng::seed_from_u64(11);
    for &(path, _) in ROBOTS {
        let mut robot = load(path);
        robot.set_tool(Isometry3::new(
            Vector3::new(0.02, -0.01, 0.18),
            Vector3::new(0.1, 0.2, -0.3),
        ));
        for _ in 0..200 {
            let q = random_q(&robot, &mut rng);
            let mut jac = Jacobian::zeros();
            robot
                .chain()
                .fk_jacobian(&armpath::Joints::from_slice(&q).unwrap(), &mut jac);
            let reference = numeric_jacobian(&robot, &q);
            let diff = (jac - reference).abs().max();
            assert!(diff < 1e-8, "{path}: Jacobian deviates by {diff:e}");
        }
    }
}

#[test]
fn planar_2r_closed_form_and_yoshikawa_manipulability() {
    // source: Spong, Hutchinson & Vidyasagar 2006, planar 2R arm:
    //   x = l1 c1 + l2 c12, y = l1 s1 + l2 s12,
    //   J = [[-l1 s1 - l2 s12, -l2 s12], [l1 c1 + l2 c12, l2 c12]]
    // source: Yoshikawa 1985: w = l1 l2 |sin θ2|, largest at θ2 = ±90°
    let robot = load("tests/fixtures/planar2r.urdf");
    let (l1, l2) = (0.5, 0.3); // tests/fixtures/planar2r.urdf
    let mut rng = rand::rngs::StdRng::seed_from_u64(3);
    for _ in 0..500 {
        let q = random_q(&robot, &mut rng);
        let (t1, t12) = (q[0], q[0] + q[1]);
        let mut jac = Jacobian::zeros();
        let pose = robot
            .chain()
            .fk_jacobian(&armpath::Joints::from_slice(&q).unwrap(), &mut jac);
        assert_relative_eq!(
            pose.translation.x,
            l1 * t1.cos() + l2 * t12.cos(),
            epsilon = 1e-14
        );
        assert_relative_eq!(
            pose.translation.y,
            l1 * t1.sin() + l2 * t12.sin(),
            epsilon = 1e-14
        );
        assert_relative_eq!(
            jac[(0, 0)],
            -l1 * t1.sin() - l2 * t12.sin(),
            epsilon = 1e-14
        );
        assert_relative_eq!(jac[(0, 1)], -l2 * t12.sin(), epsilon = 1e-14);
        assert_relative_eq!(jac[(1, 0)], l1 * t1.cos() + l2 * t12.cos(), epsilon = 1e-14);
        assert_relative_eq!(jac[(1, 1)], l2 * t12.cos(), epsilon = 1e-14);
        let w = manipulability(&jac, 2, &[0, 1]);
        assert_relative_eq!(w, l1 * l2 * q[1].sin().abs(), epsilon = 1e-13);
    }
    // The maximum over θ2 sits at ±90°.
    let w_at = |t2: f64| {
        let mut jac = Jacobian::zeros();
        robot
            .chain()
            .fk_jacobian(&armpath::Joints::from_slice(&[0.3, t2]).unwrap(), &mut jac);
        manipulability(&jac, 2, &[0, 1])
    };
    let best = (-300..=300)
        .map(|k| k as f64 * 0.01)
        .max_by(|a, b| w_at(*a).total_cmp(&w_at(*b)))
        .unwrap();
    assert!((best.abs() - std::f64::consts::FRAC_PI_2).abs() < 0.006);
}
