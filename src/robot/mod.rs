//! Robots: URDF loading, the flat chain, joint limits and geometric facts about the arm.

mod chain;
mod fastmath;
mod joints;
mod links;
mod load;
mod ranges;
mod singularity;
mod wrist;
mod xml;

pub use chain::{manipulability, scaled_jjt, Chain, ChainJoint, Jacobian, JointKind, MAX_DOF};
pub use joints::Joints;
pub use links::LinkMount;
pub use load::{from_urdf_str, load_urdf};
pub use ranges::{
    check_offset, check_pose, MAX_EFFORT, MAX_JOINT_SPEED, MAX_LENGTH_M, MAX_ORIGIN_ANGLE_RAD,
    MAX_REVOLUTE_TURNS, MIN_JOINT_SPEED,
};
pub use singularity::{
    Screened, SingularityClass, SingularityModel, SingularityScreen, DEFAULT_SINGULARITY_THRESHOLD,
    SCREEN_FLOOR,
};
pub use wrist::{spherical_wrist, WristCheck, AXIS_ANGLE_TOLERANCE};

use nalgebra::{Isometry3, Vector3};
use std::path::PathBuf;

/// Name, kind, range and speed limit of one movable joint (SI: rad or m, rad/s or m/s).
#[derive(Debug, Clone, serde::Serialize)]
pub struct JointInfo {
    /// The URDF `<joint name>`.
    pub name: String,
    /// Revolute or continuous (position in rad) or prismatic (position in m).
    pub kind: JointKind,
    /// Lower position limit; −∞ for continuous joints.
    pub lower: f64,
    /// Upper position limit; +∞ for continuous joints.
    pub upper: f64,
    /// Velocity limit (rad/s or m/s), > 0.
    pub velocity: f64,
    /// Acceleration limit given for this joint by the path file (rad/s² or m/s², > 0); `None`
    /// (URDF has none) keeps the default rule of [`crate::motion::joint_acceleration_limit`].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub acceleration: Option<f64>,
}

impl JointInfo {
    /// True when `q` lies inside the range (a tolerance of 1e-12 absorbs rounding at a limit
    /// reached exactly).
    #[inline]
    pub fn contains(&self, q: f64) -> bool {
        q >= self.lower - 1e-12 && q <= self.upper + 1e-12
    }

    /// The acceleration limit the check applies (rad/s² or m/s²): the given one, else the
    /// default rule from the velocity limit times `scale` (`limits.joint_acceleration_scale`,
    /// which does not touch given values).
    #[inline]
    pub fn acceleration_limit(&self, scale: f64) -> f64 {
        self.acceleration
            .unwrap_or_else(|| crate::motion::joint_acceleration_limit(self.velocity, scale))
    }

    /// Distance from `q` to the nearer limit (negative outside the range, +∞ for continuous).
    #[inline]
    pub fn margin(&self, q: f64) -> f64 {
        (q - self.lower).min(self.upper - q)
    }
}

/// A loaded robot arm: the chain from the root link to the tip link and its joints.
#[derive(Debug, Clone)]
pub struct Robot {
    name: String,
    source: PathBuf,
    root_link: String,
    tip_link: String,
    joints: Vec<JointInfo>,
    chain: Chain,
    reach: f64,
    links: Vec<LinkMount>,
}

impl Robot {
    pub(crate) fn from_parts(
        name: String,
        source: PathBuf,
        root_link: String,
        tip_link: String,
        joints: Vec<JointInfo>,
        chain: Chain,
        links: Vec<LinkMount>,
    ) -> Self {
        let mut robot = Robot {
            name,
            source,
            root_link,
            tip_link,
            joints,
            chain,
            reach: 0.0,
            links,
        };
        robot.reach = robot.estimate_reach();
        robot
    }

    /// The URDF `<robot name>`.
    pub fn name(&self) -> &str {
        &self.name
    }
    /// The URDF file it came from.
    pub fn source(&self) -> &std::path::Path {
        &self.source
    }
    /// Name of the link the chain starts at; its frame is the base frame.
    pub fn root_link(&self) -> &str {
        &self.root_link
    }
    /// Name of the link the chain ends at; a mounted tool's TCP is given in its frame.
    pub fn tip_link(&self) -> &str {
        &self.tip_link
    }
    /// Movable joints, base to tip.
    pub fn joints(&self) -> &[JointInfo] {
        &self.joints
    }
    /// Number of movable joints (the length of every joint vector for this arm).
    pub fn dof(&self) -> usize {
        self.joints.len()
    }
    /// The flat chain for forward kinematics and Jacobians, tool included (`fk` gives
    /// `base_T_tcp`).
    pub fn chain(&self) -> &Chain {
        &self.chain
    }
    /// The links from the root link to the tip link, each with the joint frame it rides on
    /// and its collision elements (for the cell model).
    pub fn links(&self) -> &[LinkMount] {
        &self.links
    }
    /// Give joint `index` its own acceleration limit (rad/s² or m/s²), replacing the default
    /// rule; an index past the last joint changes nothing.
    pub fn set_joint_acceleration(&mut self, index: usize, acceleration: f64) {
        if let Some(j) = self.joints.get_mut(index) {
            j.acceleration = Some(acceleration);
        }
    }

    /// Mount a tool: TCP pose in the tip-link frame.
    pub fn set_tool(&mut self, tip_T_tcp: Isometry3<f64>) {
        self.chain.set_tool(tip_T_tcp);
    }

    /// Which joints are prismatic, in chain order.
    pub fn prismatic_mask(&self) -> Vec<bool> {
        self.joints.iter().map(|j| j.kind.is_prismatic()).collect()
    }

    /// The middle of every joint's range (0 for a continuous joint): the natural "home"
    /// guess for a search and the fallback joints of a pose that cannot be reached.
    pub fn mid_range(&self) -> Joints {
        let mut q = Joints::zeros(self.dof());
        for (v, j) in q.iter_mut().zip(&self.joints) {
            if j.lower.is_finite() {
                *v = 0.5 * (j.lower + j.upper);
            }
        }
        q
    }

    /// True when every value of `q` is inside its joint's range.
    pub fn within_limits(&self, q: &Joints) -> bool {
        self.joints.iter().zip(q).all(|(j, &v)| j.contains(v))
    }

    /// Estimated reach (m): the largest distance from the first joint's origin to the tip link
    /// over 4,096 in-range configurations drawn with a fixed seed. A sampled estimate, a little
    /// below the true maximum; used to scale lengths (singularity measure, IK weights) and
    /// for `armpath robot`.
    pub fn reach(&self) -> f64 {
        self.reach
    }

    /// A sphere (centre in the base frame, radius in m) that the TCP never leaves, whatever the
    /// joints: the first joint's origin and the sum of the lengths of every fixed offset after
    /// it (tool included) plus the largest travel of each prismatic joint. By the triangle
    /// inequality no rotation lengthens the chain, so a target outside the sphere is out of
    /// reach without solving anything.
    pub fn reach_bound(&self) -> (Vector3<f64>, f64) {
        let links = self.chain.joints();
        let centre = links
            .first()
            .map(|j| j.parent_T_joint.translation.vector)
            .unwrap_or_else(Vector3::zeros);
        let offsets: f64 = links
            .iter()
            .skip(1)
            .map(|j| j.parent_T_joint.translation.vector.norm())
            .sum();
        let travel: f64 = self
            .joints
            .iter()
            .filter(|j| j.kind.is_prismatic())
            .map(|j| j.lower.abs().max(j.upper.abs()))
            .sum();
        let last_T_tcp = self.chain.last_T_tcp().translation.vector.norm();
        (centre, offsets + travel + last_T_tcp)
    }

    fn estimate_reach(&self) -> f64 {
        let mut rng = crate::rng::SplitMix64::new(0x5eed_a7a7);
        let mut frames = vec![Isometry3::identity(); self.dof()];
        let mut best: f64 = 0.0;
        let chain_no_tool = {
            let mut c = self.chain.clone();
            c.set_tool(Isometry3::identity());
            c
        };
        // The first joint's frame does not move with the joints: its origin once.
        chain_no_tool.joint_frames(&Joints::zeros(self.dof()), &mut frames);
        let origin = frames[0].translation.vector;
        for k in 0..4096 {
            let q = if k == 0 {
                Joints::zeros(self.dof())
            } else {
                self.random_config(&mut rng)
            };
            let tip = chain_no_tool.fk(&q).translation.vector;
            best = best.max((tip - origin).norm());
        }
        // A robot whose links all have zero length would give 0; keep a positive scale so
        // that dividing by the reach is always defined (1 mm, far below any real arm).
        best.max(1e-3)
    }

    /// Draw a configuration uniformly within the joint ranges (continuous joints: ±π;
    /// ranges wider than ±2π are drawn within ±2π, enough for every winding of interest).
    pub fn random_config(&self, rng: &mut crate::rng::SplitMix64) -> Joints {
        use std::f64::consts::PI;
        let mut q = Joints::zeros(self.dof());
        for (j, v) in self.joints.iter().zip(q.iter_mut()) {
            let lo = j.lower.max(-2.0 * PI);
            let hi = j.upper.min(2.0 * PI);
            *v = lo + (hi - lo) * rng.next_f64();
        }
        q
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::{Translation3, UnitQuaternion};

    #[test]
    fn reach_bound_holds_every_sampled_pose() {
        // Every TCP position lies inside the sphere, and the sphere is no looser than the
        // sampled reach plus the tool and a few centimetres (arm6 stretched is the sum of its
        // offsets up to the small shoulder and elbow offsets).
        // source: common practice (triangle inequality on the chain's fixed offsets)
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("robots/arm6.urdf");
        let mut robot = load_urdf(&path, None).unwrap();
        robot.set_tool(Isometry3::from_parts(
            Translation3::new(0.0, 0.05, 0.18),
            UnitQuaternion::identity(),
        ));
        let (centre, radius) = robot.reach_bound();
        let mut rng = crate::rng::SplitMix64::new(7);
        let mut farthest: f64 = 0.0;
        for _ in 0..5000 {
            let q = robot.random_config(&mut rng);
            let d = (robot.chain().fk(&q).translation.vector - centre).norm();
            assert!(d <= radius + 1e-12, "{d} beyond the bound {radius}");
            farthest = farthest.max(d);
        }
        let tool = (0.05f64 * 0.05 + 0.18 * 0.18).sqrt();
        assert!(
            radius < robot.reach() + tool + 0.05,
            "{radius} vs {}",
            robot.reach()
        );
        assert!(farthest > 0.5 * radius);
    }
}
