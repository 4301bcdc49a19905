//! Several configurations walked in lockstep, each up to the first error that would stop it:
//! the configuration table in one pass over the path. Per linear sample the closed form is
//! solved once for the arm branches the live lanes follow ([`OrthoParallel::branches`]) and
//! each lane takes its own configuration with its own windings; per joint move the in-range solutions of its end are solved
//! once. Each lane keeps what its own light walk would keep (the configuration followed, the
//! last joints, the previous sample for the jump test) and stops where that walk would stop,
//! so the table is the one the eight separate walks give, sample for sample.

use super::super::follow::{move_end_pick, nearest_config};
use super::super::{residual, SampleRecord};
use super::Walker;
use crate::ik::analytic::{ArmSet, Config, OrthoParallel, Solutions};
use crate::job::Motion;
use crate::plan::Segment;
use crate::robot::Joints;
use nalgebra::Isometry3;

/// What stopped a lane.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StopKind {
    /// The target is out of reach in every configuration.
    Unreachable,
    /// A discontinuity: the branch ended in another configuration, or the jump test found one.
    Jump,
    /// The joint of this index left its range.
    Limit(usize),
}

/// The first error that stops a lane, where it happens.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaneStop {
    /// What stops it.
    pub kind: StopKind,
    /// Segment of the sample (the first sample belongs to segment 0).
    pub segment: usize,
    /// Path distance of the sample (m).
    pub s: f64,
}

/// One configuration's walk.
struct Lane {
    /// The configuration followed now (a joint move may change it).
    config: Config,
    /// The previous sample: its joints, target and residuals feed the jump test.
    prev: SampleRecord,
    stop: Option<LaneStop>,
}

impl Lane {
    fn live(&self) -> bool {
        self.stop.is_none()
    }
}

impl Walker<'_> {
    /// Walk `solver`'s configurations from their start joints (`starts`: configuration and
    /// the joints at waypoint 0) in lockstep, each until its first stopping error:
    /// unreachable, a jump (a configuration change included) or a joint beyond its range.
    /// Returns each lane's stop, `None` for a lane that runs the whole path. The result is
    /// the [`StopKind`] and location a separate light walk with the closed form on that
    /// configuration would stop at first.
    pub fn walk_lanes(
        &mut self,
        solver: &OrthoParallel,
        starts: &[(Config, Joints)],
    ) -> Vec<Option<LaneStop>> {
        let first = self.plan.first_base();
        let mut lanes: Vec<Lane> = starts
            .iter()
            .map(|&(config, q)| {
                let (pe, oe) = residual(self.robot, &q, &first);
                let mut lane = Lane {
                    config,
                    prev: light_record(q, first, pe, oe),
                    stop: None,
                };
                self.limit_stop(&mut lane, 0, 0.0);
                lane
            })
            .collect();
        let mut s0 = 0.0;
        for seg in self.plan.segments() {
            if !lanes.iter().any(Lane::live) {
                break;
            }
            match seg.motion {
                Motion::Linear => self.lanes_linear(solver, &seg, s0, &mut lanes),
                Motion::Joint => self.lanes_joint(solver, &seg, s0, &mut lanes),
            }
            s0 += seg.length;
        }
        lanes.iter().map(|l| l.stop).collect()
    }

    /// Stop `lane` at (`segment`, `s`) if its current joints leave a range.
    fn limit_stop(&self, lane: &mut Lane, segment: usize, s: f64) {
        let q = &lane.prev.joints;
        if let Some(k) = self
            .robot
            .joints()
            .iter()
            .zip(q.iter())
            .position(|(j, v)| !j.contains(*v))
        {
            lane.stop = Some(LaneStop {
                kind: StopKind::Limit(k),
                segment,
                s,
            });
        }
    }

    fn lanes_linear(&mut self, solver: &OrthoParallel, seg: &Segment, s0: f64, lanes: &mut [Lane]) {
        let steps = seg.steps;
        let mut work = crate::solve::WalkTotals::default();
        for i in 1..=steps {
            if !lanes.iter().any(Lane::live) {
                return;
            }
            let u = i as f64 / steps as f64;
            let target = seg.run_pose_at(u);
            let s = s0 + seg.length * u;
            let at = |kind| {
                Some(LaneStop {
                    kind,
                    segment: seg.index,
                    s,
                })
            };
            if self.beyond_reach(&target).is_some() {
                for lane in lanes.iter_mut().filter(|l| l.live()) {
                    lane.stop = at(StopKind::Unreachable);
                }
                return;
            }
            let arms = lanes
                .iter()
                .filter(|l| l.live())
                .fold(ArmSet::EMPTY, |set, l| set.with(l.config));
            let branches = solver.branches(&target, arms);
            for lane in lanes.iter_mut().filter(|l| l.live()) {
                let last = lane.prev.joints;
                let Some(q) = solver.near_in(&branches, &target, &last, lane.config) else {
                    // The branch ends: into another configuration (a jump) or nowhere.
                    let other = nearest_config(solver, &target, &last)
                        .and_then(|c| solver.solve_near(&target, &last, c));
                    lane.stop = at(if other.is_some() {
                        StopKind::Jump
                    } else {
                        StopKind::Unreachable
                    });
                    continue;
                };
                // Exact closed-form solutions: residuals not measured, as in a light walk.
                if self
                    .jump
                    .find(&lane.prev, &target, &q, (0.0, 0.0), &mut work)
                    .is_some()
                {
                    lane.stop = at(StopKind::Jump);
                    continue;
                }
                lane.prev = light_record(q, target, 0.0, 0.0);
                self.limit_stop(lane, seg.index, s);
            }
        }
    }

    fn lanes_joint(&mut self, solver: &OrthoParallel, seg: &Segment, s0: f64, lanes: &mut [Lane]) {
        let end_stop = Some(LaneStop {
            kind: StopKind::Unreachable,
            segment: seg.index,
            s: s0 + seg.length,
        });
        if self.beyond_reach(&seg.end).is_some() {
            for lane in lanes.iter_mut().filter(|l| l.live()) {
                lane.stop = end_stop;
            }
            return;
        }
        let sols: Solutions = solver.solve(&seg.end);
        for lane in lanes.iter_mut().filter(|l| l.live()) {
            let q0 = lane.prev.joints;
            let Some(sol) = move_end_pick(&sols, lane.config, &q0) else {
                lane.stop = end_stop;
                continue;
            };
            lane.config = sol.config;
            let q1 = sol.joints;
            let (pe, oe) = residual(self.robot, &q1, &seg.end);
            // The joint-space samples, as the walk interpolates them (the last one is the
            // joints the next segment continues from).
            let steps = self.joint_move_steps(seg, &q0, &q1);
            for i in 1..=steps {
                let u = i as f64 / steps as f64;
                let q = q0.map(|k, v| v + (q1[k] - v) * u);
                lane.prev = light_record(q, seg.end, pe, oe);
                self.limit_stop(lane, seg.index, s0 + seg.length * u);
                if !lane.live() {
                    break;
                }
            }
        }
    }
}

/// A sample as the jump test reads it: joints, target and residuals; the rest is unused.
pub(super) fn light_record(
    joints: Joints,
    target: Isometry3<f64>,
    position_error: f64,
    orientation_error: f64,
) -> SampleRecord {
    let zero = Joints::zeros(joints.len());
    SampleRecord {
        index: 0,
        segment: 0,
        waypoint: None,
        motion: Motion::Linear,
        s: 0.0,
        t: 0.0,
        dt: 0.0,
        target,
        reach: super::super::Reach::Reached,
        position_error,
        orientation_error,
        joints,
        joint_speed: zero,
        joint_acceleration: zero,
        tcp_speed: 0.0,
        tool_angular_speed: 0.0,
        singularity: 1.0,
        singularity_class: None,
        jump: None,
    }
}
