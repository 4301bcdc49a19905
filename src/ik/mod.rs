//! Inverse kinematics: joints that put the TCP at a pose.

pub mod analytic;
mod numeric;

pub use numeric::{IkOptions, IkOutcome, NumericIk, WarmStart};

use nalgebra::{Isometry3, Vector6};

/// 6-D pose error taking `current` to `target`, both in the base frame: the position error
/// (m) and the rotation vector (rad) of `target_R · current_R⁻¹`, i.e. expressed in the base
/// frame so that it pairs with the geometric Jacobian.
#[inline]
pub fn pose_error(current: &Isometry3<f64>, target: &Isometry3<f64>) -> Vector6<f64> {
    let dp = target.translation.vector - current.translation.vector;
    let dr = crate::rotation::log(&(target.rotation * current.rotation.inverse()));
    Vector6::new(dp.x, dp.y, dp.z, dr.x, dr.y, dr.z)
}
