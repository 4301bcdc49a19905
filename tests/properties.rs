//! Property tests of the rotation math and the kinematics.
#![allow(non_snake_case)]

use armpath::ik::{IkOptions, NumericIk};
use armpath::robot::load_urdf;
use armpath::rotation::{angle_between, exp, from_rpy, log, Geodesic};
use nalgebra::{Quaternion, UnitQuaternion, Vector3};
use proptest::prelude::*;
use std::f64::consts::PI;

fn rotation() -> impl Strategy<Value = UnitQuaternion<f64>> {
    (-1.0f64..1.0, -1.0f64..1.0, -1.0f64..1.0, -1.0f64..1.0)
        .prop_filter("non-zero", |(w, x, y, z)| {
            w * w + x * x + y * y + z * z > 1e-3
        })
        .prop_map(|(w, x, y, z)| UnitQuaternion::new_normalize(Quaternion::new(w, x, y, z)))
}

/// A rotation vector with angle strictly below π (where log is unique).
fn rotvec() -> impl Strategy<Value = Vector3<f64>> {
    (
        -1.0f64..1.0,
        -1.0f64..1.0,
        -1.0f64..1.0,
        0.0f64..(PI - 1e-3),
    )
        .prop_filter("axis", |(x, y, z, _)| x * x + y * y + z * z > 1e-3)
        .prop_map(|(x, y, z, a)| Vector3::new(x, y, z).normalize() * a)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn exp_of_log_is_identity(r in rotation()) {
        // source: Lynch & Park 2017, §3.2.3 (exp and log are inverse on SO(3))
        prop_assert!(angle_between(&exp(&log(&r)), &r) < 1e-12);
    }

    #[test]
    fn log_of_exp_is_identity_below_pi(v in rotvec()) {
        // source: Lynch & Park 2017, §3.2.3 (log is unique for angles in [0, π))
        prop_assert!((log(&exp(&v)) - v).norm() < 1e-9);
    }

    #[test]
    fn geodesic_endpoints_are_exact(a in rotation(), b in rotation()) {
        // source: Shoemake 1985 (slerp(q0, q1, 0) = q0, slerp(q0, q1, 1) = q1)
        let g = Geodesic::new(&a, &b);
        prop_assert_eq!(g.at(0.0), a);
        prop_assert!(angle_between(&g.at(1.0), &b) < 1e-12);
    }

    #[test]
    fn angular_speed_is_constant_along_a_geodesic(a in rotation(), b in rotation(), u in 0.0f64..0.9) {
        // source: Shoemake 1985 (slerp runs at constant angular speed)
        let g = Geodesic::new(&a, &b);
        let du = 0.1;
        let step = angle_between(&g.at(u), &g.at(u + du));
        prop_assert!((step - g.angle() * du).abs() < 1e-9, "{} vs {}", step, g.angle() * du);
        prop_assert!(g.angle() <= PI + 1e-12);
    }

    #[test]
    fn q_and_minus_q_give_the_same_path(a in rotation(), b in rotation(), u in 0.0f64..1.0) {
        // source: Shoemake 1985 (q and −q are one rotation; the short arc is sign-free)
        let neg_b = UnitQuaternion::new_unchecked(-b.into_inner());
        let neg_a = UnitQuaternion::new_unchecked(-a.into_inner());
        let g1 = Geodesic::new(&a, &b);
        let g2 = Geodesic::new(&neg_a, &neg_b);
        let g3 = Geodesic::new(&a, &neg_b);
        prop_assume!(!g1.is_near_half_turn());
        prop_assert!(angle_between(&g1.at(u), &g2.at(u)) < 1e-9);
        prop_assert!(angle_between(&g1.at(u), &g3.at(u)) < 1e-9);
    }

    #[test]
    fn rpy_composes_in_the_documented_order(r in -3.0f64..3.0, p in -1.5f64..1.5, y in -3.0f64..3.0) {
        // source: URDF specification / REP 103: R = Rz(yaw)·Ry(pitch)·Rx(roll), fixed axes
        let expected = UnitQuaternion::from_axis_angle(&Vector3::z_axis(), y)
            * UnitQuaternion::from_axis_angle(&Vector3::y_axis(), p)
            * UnitQuaternion::from_axis_angle(&Vector3::x_axis(), r);
        prop_assert!(angle_between(&from_rpy(r, p, y), &expected) < 1e-12);
    }

    #[test]
    fn composition_order_matters(a in rotvec(), b in rotvec()) {
        // source: common practice (rotations about different axes do not commute; they do
        // when the axes are parallel)
        let (ra, rb) = (exp(&a), exp(&b));
        let cross = a.cross(&b).norm();
        let parallel = cross < 1e-6 * (1.0 + a.norm() * b.norm());
        let differ = angle_between(&(ra * rb), &(rb * ra));
        if parallel {
            // Nearly parallel axes or a nearly zero rotation b: to first order in b the products
            // differ by |(R_a − I)·b| = 2·sin(|a|/2)·|b⊥| ≤ |a × b| (b⊥: b's part across a's
            // axis), so they agree to within the cross product, not exactly (a 0.9 rad turn
            // and a 1e-6 rad one about another axis differ by about 1e-6 rad).
            // source: common practice (first-order expansion of R_a·R_b·R_a⁻¹ = exp(R_a·b))
            prop_assert!(differ <= 2.0 * cross + 1e-9, "differ {differ} cross {cross}");
        } else {
            // |a × b| measures non-commutativity; the two products differ when it is clearly
            // non-zero and neither rotation is a half turn.
            prop_assume!(a.cross(&b).norm() > 1e-2 && a.norm() < PI - 0.1 && b.norm() < PI - 0.1);
            prop_assert!(differ > 1e-6, "ab = ba for a = {:?}, b = {:?}", a, b);
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn fk_of_ik_round_trips(
        q in prop::collection::vec(-1.0f64..1.0, 6),
        dq in prop::collection::vec(-0.1f64..0.1, 6),
    ) {
        // source: common practice (IK solution reproduces the pose within tolerance)
        let robot = load_urdf(std::path::Path::new("robots/arm6.urdf"), None).unwrap();
        prop_assume!(robot.within_limits(&armpath::Joints::from_slice(&q).unwrap()));
        let target = robot.chain().fk(&armpath::Joints::from_slice(&q).unwrap());
        let seed: Vec<f64> = q.iter().zip(&dq).map(|(a, b)| a + b).collect();
        let ik = NumericIk::new(&robot, IkOptions::default());
        let mut sol = armpath::Joints::zeros(6);
        let out = ik.solve(&target, &armpath::Joints::from_slice(&seed).unwrap(), &mut sol);
        prop_assert!(out.converged);
        let back = robot.chain().fk(&armpath::Joints::from_slice(&sol).unwrap());
        prop_assert!((back.translation.vector - target.translation.vector).norm() <= 1e-5);
        prop_assert!(angle_between(&back.rotation, &target.rotation) <= 0.001f64.to_radians());
    }
}
