//! Is the wrist spherical? Found geometrically: the last three joint axes (as lines in space)
//! meet in one point.

use super::{Joints, Robot};
use nalgebra::{Isometry3, Matrix3, Point3, Vector3};

/// The answer of [`spherical_wrist`] with the evidence.
#[derive(Debug, Clone, serde::Serialize)]
pub struct WristCheck {
    /// The last three axes meet in one point.
    pub spherical: bool,
    /// The wrist centre in the base frame (m) at the zero configuration.
    pub centre_at_zero: Option<[f64; 3]>,
    /// Largest distance (m) from the best common point to any of the three axes.
    pub miss_distance: f64,
    /// Why the wrist is not spherical, when it is not.
    pub reason: Option<String>,
}

/// Largest deviation (rad) from exact perpendicularity or parallelism of two axes that still
/// counts as exact, in every arm-family test (the closed-form solver's detection and the
/// singularity classes). URDF files often write π/2 rounded to four or five decimals (1.5708 is
/// off by 3.7e-6 rad); 1e-5 rad (0.0006°) accepts that and refuses every real design deviation
/// (those are whole degrees or at least hundredths).
pub const AXIS_ANGLE_TOLERANCE: f64 = 1e-5;

/// Axes that miss a common point by less than this fraction of the reach count as meeting:
/// URDF origins are written with ~6–9 significant digits, so 1e-6 of the reach (1 µm on a
/// 1 m arm) is above rounding and far below any real wrist offset.
const MEET_TOLERANCE: f64 = 1e-6;

/// Decide whether the last three joints of `robot` form a spherical wrist.
pub fn spherical_wrist(robot: &Robot) -> WristCheck {
    let chain = robot.chain();
    let n = chain.dof();
    let no = |reason: &str, miss: f64| WristCheck {
        spherical: false,
        centre_at_zero: None,
        miss_distance: miss,
        reason: Some(reason.to_string()),
    };
    if n < 3 {
        return no("the arm has fewer than three joints", f64::NAN);
    }
    if chain.joints()[n - 3..]
        .iter()
        .any(|j| j.kind.is_prismatic())
    {
        return no("one of the last three joints is prismatic", f64::NAN);
    }
    // Check at two configurations: the zero pose and one away from it, so that a wrist
    // whose axes meet only by coincidence in one pose is not taken for spherical.
    let mut worst = 0.0f64;
    let mut centre0 = None;
    let mut frames = vec![Isometry3::identity(); n];
    for (k, q) in [
        Joints::zeros(n),
        Joints::zeros(n).map(|i, _| 0.3 + 0.17 * i as f64),
    ]
    .iter()
    .enumerate()
    {
        chain.joint_frames(q, &mut frames);
        let lines: Vec<(Point3<f64>, Vector3<f64>)> = (n - 3..n)
            .map(|i| {
                let f = frames[i];
                (
                    Point3::from(f.translation.vector),
                    f.rotation * chain.joints()[i].axis.into_inner(),
                )
            })
            .collect();
        // Least-squares point: sum_i (I − d_i d_iᵀ)(x − p_i) = 0.
        let mut a = Matrix3::zeros();
        let mut b = Vector3::zeros();
        for (p, d) in &lines {
            let m = Matrix3::identity() - d * d.transpose();
            a += m;
            b += m * p.coords;
        }
        let Some(x) = a.try_inverse().map(|inv| inv * b) else {
            return no("the last three axes are parallel", f64::NAN);
        };
        // Parallel consecutive axes meet nowhere (or everywhere): not a wrist.
        if lines[0].1.cross(&lines[1].1).norm() < 1e-6
            || lines[1].1.cross(&lines[2].1).norm() < 1e-6
        {
            return no("two consecutive wrist axes are parallel", f64::NAN);
        }
        for (p, d) in &lines {
            let v = x - p.coords;
            worst = worst.max((v - d * d.dot(&v)).norm());
        }
        if k == 0 {
            centre0 = Some([x.x, x.y, x.z]);
        }
    }
    let tol = MEET_TOLERANCE * robot.reach().max(1.0);
    if worst <= tol {
        WristCheck {
            spherical: true,
            centre_at_zero: centre0,
            miss_distance: worst,
            reason: None,
        }
    } else {
        no(
            &format!(
                "the last three axes miss a common point by {:.3} mm",
                worst * 1e3
            ),
            worst,
        )
    }
}
