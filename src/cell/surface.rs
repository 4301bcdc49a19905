//! An STL mesh as a triangle surface for distance queries: parry's `TriMesh` (with its
//! bounding-volume tree), shared corners merged, and, when the surface is closed, an inside.
//!
//! A surface is closed when every edge is shared by exactly two triangles running it in
//! opposite directions (a consistently oriented 2-manifold without border). Only then has it
//! an inside: it is turned to face outward (positive enclosed volume) and given the
//! angle-weighted pseudo-normals that make point containment exact. Any other mesh (an open
//! sheet, a T-junction, a non-manifold edge) is a thin surface with no inside: a body passing
//! through it touches it, a body lying wholly behind it does not.
//!
//! The probe's queries run on armpath's own tree over the triangles (`mesh_tree`), which
//! allocates nothing per query; the containment test there uses the same pseudo-normals as
//! parry's (the angle-weighted sum of the faces' normals at a corner, the sum of the two
//! faces' normals on an edge, the face's own normal inside it). Parry's mesh is kept as the
//! reference of the tests and for the distance between two meshes.

use super::mesh_tree::TriTree;
use super::stl::MeshPoints;
use nalgebra::{Point3, Vector3};
use parry3d_f64::shape::{TriMesh, Triangle, TrianglePointLocation};
use std::collections::HashMap;

/// A triangle surface ready for distance and containment queries, in the mesh's own frame.
#[derive(Clone)]
pub struct Surface {
    mesh: TriMesh,
    closed: bool,
    tree: TriTree,
    /// Pseudo-normals of a closed surface (empty for an open one): per corner, and per
    /// triangle for its edges `k → k + 1`.
    corner_normals: Vec<Vector3<f64>>,
    edge_normals: Vec<[Vector3<f64>; 3]>,
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
        let (corner_normals, edge_normals) = if closed {
            pseudo_normals(&vertices, &indices)
        } else {
            (Vec::new(), Vec::new())
        };
        let mut mesh = TriMesh::new(vertices, indices);
        if closed {
            mesh.compute_pseudo_normals();
        }
        let tree = TriTree::new(mesh.triangles().collect());
        Some(Surface {
            mesh,
            closed,
            tree,
            corner_normals,
            edge_normals,
        })
    }

    /// The bounding-box tree the probe's queries run on.
    pub(crate) fn tree(&self) -> &TriTree {
        &self.tree
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
    /// for an open one. The point's projection on the nearest triangle is inside when the
    /// pseudo-normal of the feature it lands on (corner, edge or face) points away from the
    /// point; a point on the surface counts as inside. Allocates nothing.
    pub fn contains(&self, point: &Point3<f64>) -> bool {
        if !self.closed {
            return false;
        }
        let (lo, hi) = self.tree.bounds();
        if (0..3).any(|k| point[k] < lo[k] || point[k] > hi[k]) {
            return false;
        }
        let (t, proj, at) = self.tree.nearest(point);
        let idx = self.mesh.indices()[t as usize];
        let normal = match at {
            TrianglePointLocation::OnVertex(k) => self.corner_normals[idx[k as usize] as usize],
            TrianglePointLocation::OnEdge(k, _) => self.edge_normals[t as usize][k as usize],
            TrianglePointLocation::OnFace(..) | TrianglePointLocation::OnSolid => {
                self.mesh.triangle(t).scaled_normal()
            }
        };
        (point - proj).dot(&normal) <= 0.0
    }
}

/// Largest corner angle (rad) of a triangle whose normal enters the pseudo-normals: a
/// sliver with a corner near π has a normal ruined by rounding yet a large angle weight, so
/// it is left out (0.9 π, as parry's own pseudo-normals do).
const SLIVER_ANGLE: f64 = 0.9 * std::f64::consts::PI;

/// The pseudo-normals of a closed surface: per corner the angle-weighted sum of its faces'
/// unit normals, per triangle edge the sum of the unit normals of the faces sharing it.
/// An edge with no usable face falls back to the triangle's own normal.
fn pseudo_normals(
    vertices: &[Point3<f64>],
    indices: &[[u32; 3]],
) -> (Vec<Vector3<f64>>, Vec<[Vector3<f64>; 3]>) {
    let mut corners = vec![Vector3::zeros(); vertices.len()];
    let mut edges: HashMap<(u32, u32), Vector3<f64>> = HashMap::with_capacity(3 * indices.len());
    let key = |a: u32, b: u32| (a.min(b), a.max(b));
    let tri = |t: &[u32; 3]| {
        let [a, b, c] = t.map(|i| vertices[i as usize]);
        Triangle::new(a, b, c)
    };
    for t in indices {
        let tr = tri(t);
        let Some(n) = tr.normal() else { continue };
        let angles = [
            (tr.b - tr.a).angle(&(tr.c - tr.a)),
            (tr.a - tr.b).angle(&(tr.c - tr.b)),
            (tr.b - tr.c).angle(&(tr.a - tr.c)),
        ];
        if angles.iter().any(|&a| a > SLIVER_ANGLE) {
            continue;
        }
        for k in 0..3 {
            corners[t[k] as usize] += *n * angles[k];
            *edges.entry(key(t[k], t[(k + 1) % 3])).or_default() += *n;
        }
    }
    let per_tri = indices
        .iter()
        .map(|t| {
            let own = tri(t).scaled_normal();
            [0, 1, 2].map(|k| {
                edges
                    .get(&key(t[k], t[(k + 1) % 3]))
                    .copied()
                    .unwrap_or(own)
            })
        })
        .collect();
    (corners, per_tri)
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
