//! An STL mesh as a triangle surface for distance queries: parry's `TriMesh` (with its
//! bounding-volume tree), shared corners merged, and, when the surface is closed, an inside.
//!
//! A surface is closed when every edge is shared by exactly two triangles running it in
//! opposite directions (a consistently oriented 2-manifold without border). Only then has it
//! an inside: it is turned to face outward (positive enclosed volume) and given the
//! angle-weighted pseudo-normals that make point containment exact. Any other mesh (an open
//! sheet, a T-junction, a non-manifold edge) is a thin surface with no inside: a body passing
//! through it touches it, a body lying wholly behind it does not.

use super::stl::MeshPoints;
use nalgebra::Point3;
use parry3d_f64::query::PointQuery;
use parry3d_f64::shape::TriMesh;
use std::collections::HashMap;

/// A triangle surface ready for distance and containment queries, in the mesh's own frame.
#[derive(Clone)]
pub struct Surface {
    mesh: TriMesh,
    closed: bool,
}

impl std::fmt::Debug for Surface {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Surface")
            .field("triangles", &self.mesh.num_triangles())
            .field("closed", &self.closed)
            .finish()
    }
}

impl Surface {
    /// Builds the surface of `mesh`. `None` when no triangle has three distinct corners (the
    /// caller reports it).
    pub fn new(mesh: &MeshPoints) -> Option<Surface> {
        let (vertices, mut indices) = merge_corners(mesh.triangles());
        if indices.is_empty() {
            return None;
        }
        let closed = is_closed(&indices);
        if closed && enclosed_volume(&vertices, &indices) < 0.0 {
            for t in &mut indices {
                t.swap(1, 2);
            }
        }
        let mut mesh = TriMesh::new(vertices, indices);
        if closed {
            mesh.compute_pseudo_normals();
        }
        Some(Surface { mesh, closed })
    }

    /// The parry mesh (its own frame is the mesh's frame).
    pub fn mesh(&self) -> &TriMesh {
        &self.mesh
    }

    /// True when the surface is closed (see the module doc) and so has an inside.
    pub fn is_closed(&self) -> bool {
        self.closed
    }

    /// True when `point` (in the mesh's frame) lies inside the closed surface; always false
    /// for an open one.
    pub fn contains(&self, point: &Point3<f64>) -> bool {
        self.closed && self.mesh.contains_local_point(point)
    }
}

/// Merges corners with equal coordinates (STL repeats every shared corner) and drops
/// triangles left with fewer than three distinct corners.
fn merge_corners(triangles: &[[Point3<f64>; 3]]) -> (Vec<Point3<f64>>, Vec<[u32; 3]>) {
    // -0.0 and 0.0 are the same corner.
    let key = |p: &Point3<f64>| p.coords.map(|c| (c + 0.0).to_bits());
    let mut ids = HashMap::new();
    let mut vertices = Vec::new();
    let mut indices = Vec::with_capacity(triangles.len());
    for t in triangles {
        let mut tri = [0u32; 3];
        for (corner, slot) in t.iter().zip(tri.iter_mut()) {
            *slot = *ids.entry(key(corner)).or_insert_with(|| {
                vertices.push(*corner);
                // The triangle cap keeps the count far below u32::MAX.
                (vertices.len() - 1) as u32
            });
        }
        if tri[0] != tri[1] && tri[1] != tri[2] && tri[0] != tri[2] {
            indices.push(tri);
        }
    }
    (vertices, indices)
}

/// True when every directed edge appears once and its reverse once (see the module doc).
fn is_closed(indices: &[[u32; 3]]) -> bool {
    let mut directed: HashMap<(u32, u32), u32> = HashMap::with_capacity(3 * indices.len());
    for t in indices {
        for k in 0..3 {
            *directed.entry((t[k], t[(k + 1) % 3])).or_insert(0) += 1;
        }
    }
    directed
        .iter()
        .all(|(&(a, b), &n)| n == 1 && directed.get(&(b, a)) == Some(&1))
}

/// Signed volume enclosed by the triangles (positive when they face outward): the sum of
/// the tetrahedra they span with the origin.
fn enclosed_volume(vertices: &[Point3<f64>], indices: &[[u32; 3]]) -> f64 {
    indices
        .iter()
        .map(|t| {
            let [a, b, c] = t.map(|i| vertices[i as usize].coords);
            a.dot(&b.cross(&c)) / 6.0
        })
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cell::stl::box_triangles;
    use nalgebra::Vector3;

    #[test]
    fn a_box_is_closed_and_contains_its_centre_whatever_its_facing() {
        // A box of 12 outward triangles is a closed 2-manifold of volume 1 × 2 × 3 = 6; the
        // same triangles reversed face inward and are turned back.
        // source: common practice (divergence theorem: sum of origin tetrahedra)
        let tris = box_triangles(Vector3::zeros(), Vector3::new(1.0, 2.0, 3.0));
        let (v, i) = merge_corners(&tris);
        assert_eq!(v.len(), 8);
        assert!((enclosed_volume(&v, &i) - 6.0).abs() < 1e-12);
        let inward: Vec<_> = tris.iter().map(|t| [t[0], t[2], t[1]]).collect();
        for tris in [tris, inward] {
            let s = Surface::new(&MeshPoints::from_triangles(tris)).unwrap();
            assert!(s.is_closed());
            assert!(s.contains(&Point3::new(0.5, 1.0, 1.5)));
            assert!(!s.contains(&Point3::new(1.5, 1.0, 1.5)));
        }
    }

    #[test]
    fn a_box_without_its_lid_is_an_open_sheet() {
        // Dropping the two triangles of one face leaves a border: no inside.
        // source: common practice (a closed surface has no border edge)
        let mut tris = box_triangles(Vector3::zeros(), Vector3::repeat(1.0));
        tris.drain(2..4);
        let s = Surface::new(&MeshPoints::from_triangles(tris)).unwrap();
        assert!(!s.is_closed());
        assert!(!s.contains(&Point3::new(0.5, 0.5, 0.5)));
    }

    #[test]
    fn only_degenerate_triangles_give_no_surface() {
        // source: common practice (a triangle needs three distinct corners)
        let p = Point3::new(1.0, 2.0, 3.0);
        let q = Point3::new(0.0, 2.0, 3.0);
        let tris = vec![[p, p, q]; 4];
        assert!(Surface::new(&MeshPoints::from_triangles(tris)).is_none());
    }
}
