//! The solver's results: solutions with their configuration, winding and special-pose
//! flags, in a fixed-capacity list.

use super::Config;
use crate::robot::Joints;

/// Capacity of [`Solutions`]: eight closed-form solutions times the windings of wide joints.
/// arm6 (j4 ±190°, j6 ±360°) needs at most 8·2·3 = 48.
pub const MAX_SOLUTIONS: usize = 64;

/// Which special poses a solution is at (within 1e-6 rad, or 1e-6 of the reach).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize)]
pub struct SpecialPose {
    /// θ5 = 0 or π: axes 4 and 6 aligned; θ4 was set to the reference, θ6 takes the rest.
    pub wrist_singular: bool,
    /// Upper arm and forearm in line, elbow straight (up and down coincide).
    pub elbow_stretched: bool,
    /// Forearm folded back onto the upper arm (up and down coincide).
    pub elbow_folded: bool,
    /// Wrist centre on axis 1 (lateral offset b = 0), or where front and back meet (b ≠ 0).
    /// With b = 0 θ1 was set to the reference.
    pub wrist_centre_on_axis1: bool,
}

impl SpecialPose {
    pub(super) const NONE: SpecialPose = SpecialPose {
        wrist_singular: false,
        elbow_stretched: false,
        elbow_folded: false,
        wrist_centre_on_axis1: false,
    };

    /// True when any flag is set.
    pub fn any(&self) -> bool {
        self.wrist_singular
            || self.elbow_stretched
            || self.elbow_folded
            || self.wrist_centre_on_axis1
    }
}

/// One solution of a pose.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct AnalyticSolution {
    /// URDF joint values (rad), zero offsets and axis senses applied.
    pub joints: Joints,
    /// Shoulder, elbow and wrist choice this solution belongs to.
    pub config: Config,
    /// 2π shift per joint: `joints[i] = principal_i + 2π·winding[i]` with the principal
    /// value in (−π, π].
    pub winding: [i8; 6],
    /// Every joint within its range. Always true for [`super::OrthoParallel::solve`].
    pub within_limits: bool,
    /// Special poses (singularities) the solution is at; all false for a regular pose.
    pub special: SpecialPose,
}

impl AnalyticSolution {
    pub(super) const EMPTY: AnalyticSolution = AnalyticSolution {
        joints: Joints::zeros(6),
        config: Config::ALL[0],
        winding: [0; 6],
        within_limits: false,
        special: SpecialPose::NONE,
    };
}

/// A fixed-capacity list of solutions (no allocation), ordered by configuration index
/// ([`Config::index`]) and then by winding. Dereferences to a slice.
#[derive(Clone, Copy)]
pub struct Solutions {
    items: [AnalyticSolution; MAX_SOLUTIONS],
    len: usize,
    pub(super) raw_count: u8,
    pub(super) truncated: bool,
}

impl Solutions {
    pub(super) fn new() -> Self {
        Solutions {
            items: [AnalyticSolution::EMPTY; MAX_SOLUTIONS],
            len: 0,
            raw_count: 0,
            truncated: false,
        }
    }

    pub(super) fn push(&mut self, s: AnalyticSolution) {
        if self.len < MAX_SOLUTIONS {
            self.items[self.len] = s;
            self.len += 1;
        } else {
            self.truncated = true;
        }
    }

    /// The solutions found, in the list's order (also reachable through `Deref`).
    pub fn as_slice(&self) -> &[AnalyticSolution] {
        &self.items[..self.len]
    }

    /// Number of closed-form solutions before joint limits and windings (0..=8): 0 means the
    /// pose is out of reach; more than 0 with an empty list means reachable only outside the
    /// joint limits.
    pub fn raw_count(&self) -> usize {
        self.raw_count as usize
    }

    /// True when solutions were left out because the list was full ([`MAX_SOLUTIONS`]) or a
    /// joint had more in-range windings than are kept (4, i.e. a range beyond ±540°).
    pub fn truncated(&self) -> bool {
        self.truncated
    }
}

impl std::ops::Deref for Solutions {
    type Target = [AnalyticSolution];
    fn deref(&self) -> &[AnalyticSolution] {
        self.as_slice()
    }
}

impl<'a> IntoIterator for &'a Solutions {
    type Item = &'a AnalyticSolution;
    type IntoIter = std::slice::Iter<'a, AnalyticSolution>;
    fn into_iter(self) -> Self::IntoIter {
        self.as_slice().iter()
    }
}

impl std::fmt::Debug for Solutions {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Solutions")
            .field("solutions", &self.as_slice())
            .field("raw_count", &self.raw_count)
            .field("truncated", &self.truncated)
            .finish()
    }
}
