//! The flat kinematic chain: what the per-sample loop runs on.
//!
//! A chain is a list of movable joints, each with the fixed transform from the previous
//! joint's frame (fixed joints already folded in) and a unit axis in its own frame. It owns
//! its data, holds no locks and allocates nothing per call: forward kinematics and the
//! Jacobian write into caller-provided, stack-sized storage.

use super::Joints;
use nalgebra::{Isometry3, Matrix6, SMatrix, Translation3, Unit, UnitQuaternion, Vector3};

/// Largest number of movable joints a chain may have: a 7-axis arm on a linear track fits.
/// Fixed so that a Jacobian lives on the stack.
pub const MAX_DOF: usize = 8;

/// Geometric Jacobian at the TCP in the base frame: rows 0..3 map joint rates to the TCP's
/// linear velocity (m/s), rows 3..6 to its angular velocity (rad/s). Only the first
/// `dof` columns are meaningful; the rest stay zero.
pub type Jacobian = SMatrix<f64, 6, MAX_DOF>;

/// How a joint moves.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum JointKind {
    /// Rotation about the axis within position limits (rad).
    Revolute,
    /// Rotation about the axis without position limits.
    Continuous,
    /// Translation along the axis within position limits (m).
    Prismatic,
}

impl JointKind {
    /// True for prismatic joints (values in m, not rad).
    pub fn is_prismatic(self) -> bool {
        self == JointKind::Prismatic
    }
}

/// One movable joint of the flat chain.
#[derive(Debug, Clone, Copy)]
pub struct ChainJoint {
    /// Pose of this joint's frame (at zero position) in the previous joint's frame (or the
    /// base frame for the first joint), fixed joints in between folded in.
    pub parent_T_joint: Isometry3<f64>,
    /// Unit axis of motion in this joint's frame.
    pub axis: Unit<Vector3<f64>>,
    /// Rotation about `axis` (revolute, continuous) or translation along it (prismatic).
    pub kind: JointKind,
}

impl ChainJoint {
    /// Motion of the joint at position `q` (rad or m), in its own frame.
    #[inline]
    pub fn motion(&self, q: f64) -> Isometry3<f64> {
        if self.kind.is_prismatic() {
            Isometry3::from_parts(
                Translation3::from(self.axis.into_inner() * q),
                UnitQuaternion::identity(),
            )
        } else {
            Isometry3::from_parts(
                Translation3::identity(),
                UnitQuaternion::from_axis_angle(&self.axis, q),
            )
        }
    }
}

/// The hot-loop form of one joint: every joint frame is turned so that its axis is z, which
/// makes the joint's own motion a rotation about z (four multiplications on a quaternion) or
/// a shift along z, instead of a general isometry product.
#[derive(Debug, Clone, Copy)]
struct Step {
    /// Pose of the z-aligned joint frame in the previous z-aligned frame (or the base).
    pre: Isometry3<f64>,
    prismatic: bool,
}

/// A rotation taking z onto `axis` (any one; the angle about `axis` is irrelevant because
/// the joint rotates about it anyway).
fn z_onto(axis: &Unit<Vector3<f64>>) -> UnitQuaternion<f64> {
    UnitQuaternion::rotation_between(&Vector3::z(), axis).unwrap_or_else(|| {
        // axis = −z: any half turn about a horizontal axis.
        UnitQuaternion::from_axis_angle(&Vector3::x_axis(), std::f64::consts::PI)
    })
}

/// A serial chain from the base (root link) to the TCP.
#[derive(Debug, Clone)]
pub struct Chain {
    joints: Vec<ChainJoint>,
    steps: Vec<Step>,
    /// Pose of the TCP in the last z-aligned joint frame.
    last_z_T_tcp: Isometry3<f64>,
    /// Rotation of the last joint frame relative to its z-aligned frame.
    last_align: UnitQuaternion<f64>,
    /// Pose of the tip link in the last joint's frame (fixed joints folded in).
    last_T_tip: Isometry3<f64>,
    /// Pose of the TCP in the tip link frame (the tool).
    tip_T_tcp: Isometry3<f64>,
    /// `last_T_tip * tip_T_tcp`, kept to save one product per call.
    last_T_tcp: Isometry3<f64>,
}

impl Chain {
    /// A chain from its joints and the fixed transform from the last joint to the tip link.
    /// The tool is the identity until [`Chain::set_tool`]. Panics never; callers check
    /// `joints.len() <= MAX_DOF` (the loader does and reports an error).
    pub fn new(joints: Vec<ChainJoint>, last_T_tip: Isometry3<f64>) -> Self {
        debug_assert!(joints.len() <= MAX_DOF);
        let mut steps = Vec::with_capacity(joints.len());
        let mut prev_align = UnitQuaternion::identity();
        for j in &joints {
            let align = z_onto(&j.axis);
            let pre = Isometry3::from_parts(Translation3::identity(), prev_align.inverse())
                * j.parent_T_joint
                * Isometry3::from_parts(Translation3::identity(), align);
            steps.push(Step {
                pre,
                prismatic: j.kind.is_prismatic(),
            });
            prev_align = align;
        }
        let mut chain = Chain {
            joints,
            steps,
            last_z_T_tcp: Isometry3::identity(),
            last_align: prev_align,
            last_T_tip,
            tip_T_tcp: Isometry3::identity(),
            last_T_tcp: last_T_tip,
        };
        chain.set_tool(Isometry3::identity());
        chain
    }

    /// Half-angle sines and cosines of every joint, all at once (see `fastmath`).
    #[inline(always)]
    fn half_angles(&self, q: &[f64]) -> ([f64; MAX_DOF], [f64; MAX_DOF]) {
        let n = self.steps.len();
        let mut half = [0.0; MAX_DOF];
        for (h, &v) in half.iter_mut().zip(q.iter().take(n)) {
            *h = 0.5 * v;
        }
        let (mut s, mut c) = ([0.0; MAX_DOF], [1.0; MAX_DOF]);
        super::fastmath::sin_cos_batch(&half[..n], &mut s[..n], &mut c[..n]);
        (s, c)
    }

    /// Apply joint `step`'s own motion to the z-aligned frame `t` (in place): a shift by `q`
    /// for a prismatic joint, else a turn whose half-angle sine and cosine are `s`, `c`.
    #[inline(always)]
    fn advance(t: &mut Isometry3<f64>, step: &Step, q: f64, s: f64, c: f64) {
        *t *= step.pre;
        if step.prismatic {
            let z = t.rotation * Vector3::z();
            t.translation.vector += z * q;
        } else {
            // t.rotation * (cos q/2, 0, 0, sin q/2)
            let r = t.rotation.quaternion();
            let (w, x, y, z) = (r.w, r.i, r.j, r.k);
            t.rotation = UnitQuaternion::new_unchecked(nalgebra::Quaternion::new(
                w * c - z * s,
                x * c + y * s,
                y * c - x * s,
                z * c + w * s,
            ));
        }
    }

    /// Number of movable joints.
    #[inline]
    pub fn dof(&self) -> usize {
        self.joints.len()
    }

    /// The joints, base to tip.
    pub fn joints(&self) -> &[ChainJoint] {
        &self.joints
    }

    /// Mount a tool: `tip_T_tcp` is the TCP pose in the tip-link frame.
    pub fn set_tool(&mut self, tip_T_tcp: Isometry3<f64>) {
        self.tip_T_tcp = tip_T_tcp;
        self.last_T_tcp = self.last_T_tip * tip_T_tcp;
        self.last_z_T_tcp =
            Isometry3::from_parts(Translation3::identity(), self.last_align.inverse())
                * self.last_T_tcp;
    }

    /// Pose of the TCP in the last joint's frame (tip offset and tool).
    pub fn last_T_tcp(&self) -> Isometry3<f64> {
        self.last_T_tcp
    }

    /// The mounted tool, TCP pose in the tip-link frame.
    pub fn tool(&self) -> Isometry3<f64> {
        self.tip_T_tcp
    }

    /// Pose of the TCP in the base frame at joint positions `q` (rad / m). Contract:
    /// `q.len() == dof`; extra values are ignored, and a shorter `q` stops at its last joint
    /// (a meaningless pose, never a panic).
    #[inline]
    pub fn fk(&self, q: &Joints) -> Isometry3<f64> {
        let q = q.as_slice();
        let (s, c) = self.half_angles(q);
        let mut t = Isometry3::identity();
        for (i, (step, &qi)) in self.steps.iter().zip(q).enumerate() {
            Self::advance(&mut t, step, qi, s[i], c[i]);
        }
        t * self.last_z_T_tcp
    }

    /// Pose of the tip link (without the tool) in the base frame.
    pub fn fk_tip(&self, q: &Joints) -> Isometry3<f64> {
        self.fk(q) * self.tip_T_tcp.inverse()
    }

    /// Each joint's frame in the base frame at `q`, written to `out[..dof]` (before the joint's
    /// own motion, so the axis of joint i in the base frame is `out[i].rotation * axis_i`).
    pub fn joint_frames(&self, q: &Joints, out: &mut [Isometry3<f64>]) {
        let mut base_T_link = Isometry3::identity();
        for ((joint, &qi), slot) in self.joints.iter().zip(q).zip(out.iter_mut()) {
            let base_T_joint = base_T_link * joint.parent_T_joint;
            *slot = base_T_joint;
            base_T_link = base_T_joint * joint.motion(qi);
        }
    }

    /// TCP pose in the base frame and the geometric Jacobian at the TCP (see [`Jacobian`]).
    /// Columns beyond `dof` are left untouched.
    #[inline]
    pub fn fk_jacobian(&self, q: &Joints, jac: &mut Jacobian) -> Isometry3<f64> {
        let q = q.as_slice();
        // First pass: axis and origin of every joint in the base frame.
        let mut axes = [Vector3::zeros(); MAX_DOF];
        let mut origins = [Vector3::zeros(); MAX_DOF];
        let (s, c) = self.half_angles(q);
        let mut t = Isometry3::identity();
        for (i, (step, &qi)) in self.steps.iter().zip(q).enumerate() {
            Self::advance(&mut t, step, qi, s[i], c[i]);
            // The joint's own motion turns about (or slides along) z, so z and the origin
            // are the same before and after it.
            axes[i] = t.rotation * Vector3::z();
            origins[i] = t.translation.vector;
        }
        let base_T_tcp = t * self.last_z_T_tcp;
        let p_tcp = base_T_tcp.translation.vector;
        // Second pass: columns z × (p_tcp − p_i), z for revolute; z, 0 for prismatic.
        for (i, joint) in self.joints.iter().enumerate() {
            let z = axes[i];
            let (lin, ang) = if joint.kind.is_prismatic() {
                (z, Vector3::zeros())
            } else {
                (z.cross(&(p_tcp - origins[i])), z)
            };
            jac.fixed_slice_mut::<3, 1>(0, i).copy_from(&lin);
            jac.fixed_slice_mut::<3, 1>(3, i).copy_from(&ang);
        }
        base_T_tcp
    }
}

/// `J·Jᵀ` (6×6) of the first `dof` columns, with the linear rows divided by `length_scale` (m)
/// so that all entries are dimensionless. The building block of manipulability, the
/// singularity measure and damped least squares.
#[inline]
pub fn scaled_jjt(jac: &Jacobian, dof: usize, length_scale: f64) -> Matrix6<f64> {
    let mut m = Matrix6::zeros();
    let inv = 1.0 / length_scale;
    for i in 0..dof {
        let c = jac.column(i);
        let col = nalgebra::Vector6::new(c[0] * inv, c[1] * inv, c[2] * inv, c[3], c[4], c[5]);
        m += col * col.transpose();
    }
    m
}

/// Yoshikawa's manipulability `w = sqrt(det(J_t J_tᵀ))` where `J_t` holds the task-space rows
/// `rows` (0..3 linear, 3..6 angular) of the first `dof` columns. With all six rows of a 6-axis
/// arm this is |det J|. Units mix m and rad, so compare poses of one arm, not arms. Zero at a
/// singularity; for fewer joints than task rows it is zero everywhere (not a useful measure).
pub fn manipulability(jac: &Jacobian, dof: usize, rows: &[usize]) -> f64 {
    let jt = nalgebra::DMatrix::from_fn(rows.len(), dof, |r, c| jac[(rows[r], c)]);
    (&jt * jt.transpose()).determinant().max(0.0).sqrt()
}
