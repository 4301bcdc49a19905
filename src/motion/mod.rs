//! How the controller runs the path in time: speed profiles with acceleration limits
//! ([`Ramp`]), synchronised joint moves ([`SyncedMove`]), blended corners ([`Corner`],
//! [`Window`]) and the timing of a straight-line segment ([`SegmentTiming`]). Pure math, SI,
//! allocation-free; the plan and the walk decide where to use it.
//!
//! URDF gives joint speed limits but no accelerations, and path files rarely know the
//! controller's; the defaults below are stated as common practice and every report says so.

mod corner;
mod ramp;
mod sync;
mod timing;

pub use corner::{corner_scale, reach_scale, Corner, Window};
pub use ramp::Ramp;
pub use sync::SyncedMove;
pub use timing::{u_acceleration, SegmentTiming};

/// TCP acceleration (m/s²) when the path file sets none: 2 m/s², a moderate value for
/// process moves of mid-size arms (common practice; the real controller's may differ in
/// both directions, so the file's `limits.tcp_acceleration` should state it).
pub const DEFAULT_TCP_ACCELERATION: f64 = 2.0;

/// Tool angular acceleration (rad/s²) on straight-line moves when the path file sets none:
/// 720°/s², so a 90 deg/s reorientation is reached within 0.125 s and 1/16 of a degree
/// (common practice for the wrists of mid-size arms).
pub const DEFAULT_TOOL_ANGULAR_ACCELERATION: f64 = 4.0 * std::f64::consts::PI;

/// A joint's acceleration limit per unit of its speed limit (1/s): a joint reaches its full
/// speed in 0.5 s. URDF carries no accelerations; common practice for industrial arms, scaled
/// by `limits.joint_acceleration_scale`.
pub const JOINT_ACCELERATION_PER_SPEED: f64 = 2.0;

/// Share of the programmed speed a process segment may lose before a `process_speed`
/// warning (5 %): a bead or a cut whose feed drops more visibly changes (common practice).
pub const DEFAULT_PROCESS_SPEED_TOLERANCE: f64 = 0.05;

/// A joint's acceleration limit (rad/s² or m/s²) from its URDF speed limit `velocity` and
/// the job's `scale` (see [`JOINT_ACCELERATION_PER_SPEED`]).
pub fn joint_acceleration_limit(velocity: f64, scale: f64) -> f64 {
    velocity * JOINT_ACCELERATION_PER_SPEED * scale
}

/// The motion keys of one waypoint that most paths leave at their defaults. A job keeps
/// them apart from its waypoint records, one per waypoint only when a waypoint sets one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MoveKey {
    /// Blend radius at this waypoint (m); 0 = the TCP stops here.
    pub blend: f64,
    /// Share of each joint's allowed speed for a joint move ending here, in (0, 1]; `None`:
    /// the joints' full allowed speed, and the move lasts at least its straight-line length
    /// at the TCP speed.
    pub joint_speed_fraction: Option<f64>,
}

impl Default for MoveKey {
    fn default() -> Self {
        MoveKey {
            blend: 0.0,
            joint_speed_fraction: None,
        }
    }
}
