//! Does a loaded arm belong to the ortho-parallel family with a spherical wrist, and with
//! which parameters, joint zeros and axis senses?
//!
//! Everything is read from the chain at the URDF zero pose (axis lines in the base frame) and
//! then confirmed by comparing the model's forward kinematics with the chain's at random
//! configurations, so a geometry the axis checks let through by accident is still refused.
//!
//! The canonical frame `C` (the frame the family's formulas are written in):
//! - z along axis 1, in the sense that puts the shoulder (axis 2) at height c1 ≥ 0 above the
//!   origin (when c1 = 0: the URDF sense of axis 1);
//! - origin: the origin of joint 1's frame, which lies on axis 1 (where the URDF author put
//!   the foot of axis 1, usually the mounting face; a fixed mount transform in front of the
//!   arm does not move it);
//! - x perpendicular to axes 1 and 2, pointing from axis 1 toward axis 2 (a1 ≥ 0); when
//!   a1 = 0, toward the wrist centre of the URDF zero pose; y = z × x, so axis 2 lies along y.
//!
//! `C` equals the link-1 frame at q1 = 0, hence θ1 = ±q1 with no offset.
//!
//! Canonical joint angles (θ) relate to the URDF's (q) by `θ_i = sign_i · q_i + offset_i`.
//! θ = 0 is the family's reference pose: upper arm along +z, forearm axis (axis 4) along +z
//! with the wrist centre at x = a1 + a2, axis 5 along +y, flange axis (axis 6) along +z. Axis
//! senses: axes 2, 3 along +y of link 1; axis 4 from the elbow toward the wrist centre (so
//! c3 ≥ 0); axis 5 the URDF's own sense (sign +1; this fixes which branch is "noflip");
//! axis 6 from the wrist centre toward the flange (c4 ≥ 0).

use super::geometry::{model_fk, Geometry};
use crate::robot::{spherical_wrist, Joints, Robot};
use nalgebra::{Isometry3, Matrix3, Rotation3, Translation3, UnitQuaternion, Vector3};

/// The one tolerance on axis angles, shared with the singularity classes so that an arm the
/// closed form accepts also gets its singularities classified.
use crate::robot::AXIS_ANGLE_TOLERANCE as ANGLE_TOLERANCE;

/// Lengths below this fraction of the reach count as zero (a1 = 0, c3 = 0, ...). It is the
/// tolerance the spherical-wrist check uses: above the rounding of URDF origins written with
/// 6–9 digits, far below any real link offset.
pub(super) const LENGTH_TOLERANCE: f64 = 1e-6;

/// Largest deviation between the model's and the chain's forward kinematics (rad, and m per
/// m of reach) over the check configurations. Each of the six axis relations may be off by
/// [`ANGLE_TOLERANCE`]; ten times that is more than they can add up to, so anything beyond
/// is a geometry the axis checks did not catch.
const MODEL_TOLERANCE: f64 = 1e-4;

/// Number of random configurations (besides q = 0) at which the model is compared with the
/// chain. The comparison is exact up to rounding when the arm belongs to the family; 16
/// configurations spread over the joint ranges leave no room for a coincidental match.
const CHECK_CONFIGS: usize = 16;

/// What detection derives: everything the solver needs.
#[derive(Debug, Clone, Copy)]
pub(super) struct Model {
    pub geometry: Geometry,
    /// θ_i = sign_i · q_i + offset_i.
    pub sign: [f64; 6],
    pub offset: [f64; 6],
    /// Pose of the canonical frame in the URDF base frame.
    pub base_T_C: Isometry3<f64>,
    /// Pose of the URDF tip link in the canonical flange frame (fixed).
    pub flange_T_tip: Isometry3<f64>,
    /// Largest model-vs-chain deviation found: position (m) and orientation (rad).
    pub deviation_m: f64,
    pub deviation_rad: f64,
}

fn deg(rad: f64) -> String {
    let d = rad.to_degrees();
    if d >= 0.1 {
        format!("{d:.1}°")
    } else {
        format!("{d:.5}°")
    }
}

/// Angle (rad, in [0, π/2]) between two lines with unit directions `a` and `b`.
fn line_angle(a: &Vector3<f64>, b: &Vector3<f64>) -> f64 {
    // atan2 of |cross| and |dot| is accurate at both ends, unlike acos.
    a.cross(b).norm().atan2(a.dot(b).abs())
}

/// Deviation (rad) of two lines from being perpendicular.
fn perpendicular_deviation(a: &Vector3<f64>, b: &Vector3<f64>) -> f64 {
    std::f64::consts::FRAC_PI_2 - line_angle(a, b)
}

fn sign_of(x: f64) -> f64 {
    if x < 0.0 {
        -1.0
    } else {
        1.0
    }
}

/// Detect the family and derive the model; the error says which condition fails.
pub(super) fn detect(robot: &Robot) -> Result<Model, String> {
    let chain = robot.chain();
    let n = chain.dof();
    if n != 6 {
        return Err(format!(
            "the arm has {n} movable joints; the ortho-parallel closed form needs exactly 6"
        ));
    }
    for (i, (j, info)) in chain.joints().iter().zip(robot.joints()).enumerate() {
        if j.kind.is_prismatic() {
            return Err(format!(
                "joint {} ({}) is prismatic; the ortho-parallel closed form needs six revolute joints",
                i + 1,
                info.name
            ));
        }
    }
    let len_tol = LENGTH_TOLERANCE * robot.reach();
    let q0 = Joints::zeros(6);
    let mut frames = [Isometry3::identity(); 6];
    chain.joint_frames(&q0, &mut frames);
    let p: [Vector3<f64>; 6] = std::array::from_fn(|i| frames[i].translation.vector);
    let d: [Vector3<f64>; 6] =
        std::array::from_fn(|i| frames[i].rotation * chain.joints()[i].axis.into_inner());

    let dev = perpendicular_deviation(&d[0], &d[1]);
    if dev > ANGLE_TOLERANCE {
        return Err(format!(
            "axes 1 and 2 are not perpendicular (off by {})",
            deg(dev)
        ));
    }
    let ang = line_angle(&d[1], &d[2]);
    if ang > ANGLE_TOLERANCE {
        return Err(format!(
            "axes 2 and 3 are not parallel (angle {})",
            deg(ang)
        ));
    }
    let wrist = spherical_wrist(robot);
    let (true, Some(w0)) = (wrist.spherical, wrist.centre_at_zero) else {
        return Err(format!(
            "axes 4, 5 and 6 do not meet in one point (no spherical wrist): {}",
            wrist
                .reason
                .unwrap_or_else(|| "no common point".to_string())
        ));
    };
    for (a, b, what) in [
        (2, 3, "axis 4 is not perpendicular to axes 2 and 3"),
        (3, 4, "axes 4 and 5 are not perpendicular"),
        (4, 5, "axes 5 and 6 are not perpendicular"),
    ] {
        let dev = perpendicular_deviation(&d[a], &d[b]);
        if dev > ANGLE_TOLERANCE {
            return Err(format!("{what} (off by {})", deg(dev)));
        }
    }

    // Canonical frame.
    let w0 = Vector3::new(w0[0], w0[1], w0[2]);
    let origin = p[0];
    let mut z = d[0];
    let c1_urdf_sense = (p[1] - origin).dot(&z);
    if c1_urdf_sense < -len_tol {
        z = -z;
    }
    let mut x = d[1].cross(&z).normalize();
    let a1_guess = (p[1] - origin).dot(&x);
    let flip_x = if a1_guess.abs() > len_tol {
        a1_guess < 0.0
    } else {
        (w0 - origin).dot(&x) < 0.0
    };
    if flip_x {
        x = -x;
    }
    let y = z.cross(&x);
    let base_R_C = Rotation3::from_matrix_unchecked(Matrix3::from_columns(&[x, y, z]));
    let base_T_C = Isometry3::from_parts(
        Translation3::from(origin),
        UnitQuaternion::from_rotation_matrix(&base_R_C),
    );
    let C_T_base = base_T_C.inverse();
    let point = |v: &Vector3<f64>| C_T_base.transform_point(&(*v).into()).coords;
    let dir = |v: &Vector3<f64>| C_T_base.rotation * v;

    let mut sign = [1.0; 6];
    let mut offset = [0.0; 6];
    sign[0] = sign_of(d[0].dot(&z));
    sign[1] = sign_of(dir(&d[1]).y);
    sign[2] = sign_of(dir(&d[2]).y);

    let shoulder = point(&p[1]);
    let (a1, c1) = (shoulder.x, shoulder.z);
    let elbow = point(&p[2]);
    let (ex, ez) = (elbow.x - a1, elbow.z - c1);
    let c2 = ex.hypot(ez);
    if c2 <= len_tol {
        return Err("axes 2 and 3 coincide (no upper arm between them)".to_string());
    }
    offset[1] = ex.atan2(ez);

    let wc = point(&w0);
    let b = wc.y;
    let d4 = dir(&d[3]);
    let mut u4 = Vector3::new(d4.x, 0.0, d4.z).normalize();
    let (wx, wz) = (wc.x - elbow.x, wc.z - elbow.z);
    if wx * u4.x + wz * u4.z < -len_tol {
        u4 = -u4;
    }
    sign[3] = sign_of(d4.dot(&u4));
    let theta23 = u4.x.atan2(u4.z);
    let x4 = Vector3::new(u4.z, 0.0, -u4.x);
    let a2 = wx * x4.x + wz * x4.z;
    let c3 = wx * u4.x + wz * u4.z;
    offset[2] = theta23 - offset[1];
    if a2.hypot(c3) <= len_tol {
        return Err("the wrist centre lies on axis 3 (no forearm)".to_string());
    }

    let d5 = dir(&d[4]);
    offset[3] = (-d5.dot(&x4)).atan2(d5.dot(&Vector3::y()));
    let (s4, c4_) = offset[3].sin_cos();
    let x5 = x4 * c4_ + Vector3::y() * s4;

    let d6 = dir(&d[5]);
    let tip0 = point(&chain.fk_tip(&q0).translation.vector);
    let along = (tip0 - wc).dot(&d6);
    let u6 = if along.abs() > len_tol {
        d6 * sign_of(along)
    } else {
        // Flange at the wrist centre: take the sense nearer the forearm direction, so the
        // URDF zero pose has the smaller wrist bend.
        d6 * sign_of(d6.dot(&u4))
    };
    let c4 = (tip0 - wc).dot(&u6);
    sign[5] = sign_of(d6.dot(&u6));
    offset[4] = x5.dot(&u6).atan2(u4.dot(&u6));

    let geometry = Geometry::new(a1, a2, b, c1, c2, c3, c4);
    let theta0: [f64; 6] = std::array::from_fn(|i| offset[i]);
    let C_T_flange0 = model_fk(&geometry, &theta0);
    let flange_T_tip = C_T_flange0.inverse() * C_T_base * chain.fk_tip(&q0);

    // Confirm on the zero pose and random configurations.
    let mut rng = crate::rng::SplitMix64::new(0x0a7a_1e55);
    let (mut dev_m, mut dev_rad) = (0.0f64, 0.0f64);
    for k in 0..=CHECK_CONFIGS {
        let q = if k > 0 {
            robot.random_config(&mut rng)
        } else {
            Joints::zeros(6)
        };
        let theta: [f64; 6] = std::array::from_fn(|i| sign[i] * q[i] + offset[i]);
        let model = base_T_C * model_fk(&geometry, &theta) * flange_T_tip;
        let urdf = chain.fk_tip(&q);
        dev_m = dev_m.max((model.translation.vector - urdf.translation.vector).norm());
        dev_rad = dev_rad.max(crate::rotation::angle_between(
            &model.rotation,
            &urdf.rotation,
        ));
    }
    if dev_m > MODEL_TOLERANCE * robot.reach() || dev_rad > MODEL_TOLERANCE {
        return Err(format!(
            "the axes pass the family's checks but the chain deviates from the ortho-parallel \
             model by {:.3} mm / {}",
            dev_m * 1e3,
            deg(dev_rad)
        ));
    }
    Ok(Model {
        geometry,
        sign,
        offset,
        base_T_C,
        flange_T_tip,
        deviation_m: dev_m,
        deviation_rad: dev_rad,
    })
}
