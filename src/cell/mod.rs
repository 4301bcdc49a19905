//! The cell: collision and clearance of the arm, its tool and the part, fixtures and itself.
//!
//! Geometry comes from three places: the robot's URDF `<collision>` elements (per link, on
//! the joint frame that carries the link), the tool's bodies in the path file (on the tip
//! link) and a cell file (bodies in the work or base frame, allowed contacts, pairs that
//! never meet; see `file`). [`CellModel`] holds them with the pairs worth testing;
//! [`CellProbe`] measures a configuration and the motion between two (see `probe` for the
//! between-samples rule).
//!
//! Boxes, cylinders, spheres and capsules are convex: distances come from GJK, penetration
//! depths from EPA (parry3d-f64). An STL mesh is its triangle surface, queried through
//! armpath's own bounding-box tree (`mesh_tree`: branch and bound, no allocation, within
//! [`MESH_TOLERANCE_M`] of parry's mesh distance where it matters), so concave parts are
//! followed as they are; a closed mesh has an inside (a body wholly in it is in contact), an
//! open one is a thin sheet. A process contact may go [`DEFAULT_CONTACT_DEPTH_M`] deep unless
//! its entry gives another `depth`.

pub mod file;
mod mesh_tree;
mod model;
mod never_meet;
mod probe;
pub mod shape;
pub mod stl;
mod surface;

pub use file::{
    load_cell, tool_bodies, AllowWhen, AllowedContact, Anchor, BodySpec, CellFile, RawBody, Scale,
    DEFAULT_CONTACT_DEPTH_M, MAX_CONTACT_DEPTH_M,
};
pub use mesh_tree::MESH_TOLERANCE_M;
pub use model::{
    Body, BodyRole, CellInputs, CellModel, Pair, NEVER_MEET_MARGIN_M, NEVER_MEET_SAMPLES,
};
pub use probe::{CellProbe, Proximity, CONTACT_RESOLUTION_M, EXACT_MARGIN_M, MAX_SPLIT_DEPTH};
pub use shape::{Primitive, Solid};

/// Why a capped read failed; each reader words its own message.
pub(crate) enum ReadFail {
    /// Missing or unreadable (the I/O error's text).
    Open(String),
    /// A folder, pipe, socket or device.
    NotRegular,
    /// Longer than the cap.
    TooLarge,
}

/// Reads a regular file of at most `cap` bytes (checked before and while reading, since a
/// file may grow while it is read).
pub(crate) fn read_capped(path: &std::path::Path, cap: u64) -> Result<Vec<u8>, ReadFail> {
    use std::io::Read;
    let meta = std::fs::metadata(path).map_err(|e| ReadFail::Open(e.to_string()))?;
    if !meta.is_file() {
        return Err(ReadFail::NotRegular);
    }
    if meta.len() > cap {
        return Err(ReadFail::TooLarge);
    }
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(cap + 1).read_to_end(&mut bytes))
        .map_err(|e| ReadFail::Open(e.to_string()))?;
    if bytes.len() as u64 > cap {
        return Err(ReadFail::TooLarge);
    }
    Ok(bytes)
}

#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_mesh;
#[cfg(test)]
mod tests_mesh_tree;
