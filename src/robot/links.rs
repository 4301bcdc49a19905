//! Where each link of the chain rides: the moving joint frame that carries it and its fixed
//! pose in that frame (fixed joints folded in), with the link's URDF `<collision>` elements.

use nalgebra::Isometry3;

/// One link on the chain from the root link to the tip link.
#[derive(Debug, Clone)]
pub struct LinkMount {
    /// The URDF link name.
    pub name: String,
    /// The movable joint whose frame carries the link (index into the chain, after the
    /// joint's own motion), or `None` for the root link and links fixed to it (the base
    /// frame).
    pub frame: Option<usize>,
    /// Pose of the link frame in that joint frame (or in the base frame): the fixed joints
    /// between them folded together.
    pub frame_T_link: Isometry3<f64>,
    /// The link's `<collision>` elements as URDF gives them (sizes in m, origin in the link
    /// frame, mesh file names unresolved).
    pub collisions: Vec<urdf_rs::Collision>,
    /// Line of the `<link>` element in the URDF, when known.
    pub line: Option<usize>,
}
