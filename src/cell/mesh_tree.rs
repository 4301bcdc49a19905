//! A bounding-box tree over a mesh's triangles, built once at load, and the two queries the
//! probe makes on it without allocating: the distance of a convex solid to the surface and
//! the triangle nearest a point.
//!
//! # The distance rule and its tolerance
//!
//! The tree is walked depth first, nearer child first, on a fixed stack on the call stack. A
//! node's lower bound is the larger of two gaps, each at most the true distance of the solid
//! to anything in the node's box: the gap between the solid's axis-aligned box (in the mesh
//! frame) and the node's box, and the gap between the solid's bounding sphere and the node's
//! box. Only triangles of nodes whose bound beats the cut-off are measured exactly (GJK, or
//! the projection of the centre for a ball). The cut-off is the smaller of
//!
//! - the best distance so far less [`MESH_TOLERANCE_M`] (branch and bound; the first
//!   candidate is the triangle nearest at the caller's previous query, a good upper bound
//!   from the start), and
//! - the caller's `need`: a distance beyond which only a lower bound matters.
//!
//! The result is the smaller of the best distance found and the bounds of the nodes left
//! out, so it never exceeds the true distance (up to GJK's own relative precision, about
//! 1e-7 of the distance). When it is below `need` it is within [`MESH_TOLERANCE_M`] of the
//! true distance; otherwise it is a lower bound of at least `need`. Crossing surfaces read 0.

use nalgebra::{Isometry3, Point3, Unit, Vector3};
use parry3d_f64::query::gjk::{self, CSOPoint, GJKResult, VoronoiSimplex};
use parry3d_f64::query::PointQueryWithLocation;
use parry3d_f64::shape::{SupportMap, Triangle, TrianglePointLocation};

/// How far (m) a mesh distance below the caller's need may lie above the true distance's
/// lower end: 1 µm, far below any model's accuracy and the probe's 0.2 mm contact
/// resolution, yet wide enough that the many triangles of a flat face whose box bounds tie
/// with the nearest one are not all measured.
pub const MESH_TOLERANCE_M: f64 = 1e-6;

/// Most triangles in a leaf: four keeps leaves' boxes tight while halving the node count
/// against one per leaf (common practice for bounding-volume trees).
const LEAF_SIZE: usize = 4;

/// Room of the traversal stack. The tree splits at the median, so its depth is at most
/// log2 of the triangle count plus one: 64 levels hold any mesh that fits in memory.
const STACK: usize = 64;

/// A node: its box and either its triangles (`count > 0`: slots `index .. index + count`) or,
/// for an inner node, its right child at `index` (the left one follows the node).
#[derive(Clone, Copy, Debug)]
struct Node {
    lo: Point3<f64>,
    hi: Point3<f64>,
    index: u32,
    count: u32,
}

/// The tree and the triangles in its leaf order (the mesh's frame).
#[derive(Clone, Debug)]
pub(crate) struct TriTree {
    nodes: Vec<Node>,
    tris: Vec<Triangle>,
    /// The mesh's triangle index of each slot.
    ids: Vec<u32>,
}

/// A convex solid placed in the mesh's frame, ready for [`TriTree::distance`].
pub(crate) struct Placed<'a> {
    /// The solid's support map in its own frame.
    pub support: &'a dyn SupportMap,
    /// The radius when the solid is a ball centred on its frame's origin.
    pub ball: Option<f64>,
    /// A rounded solid as its core and the radius around it (a capsule's segment).
    pub rounded: Option<(&'a dyn SupportMap, f64)>,
    /// The solid's own frame in the mesh's frame.
    pub mesh_T_shape: Isometry3<f64>,
    /// Its bounding sphere in the mesh's frame (centre, radius in m).
    pub centre: Point3<f64>,
    pub radius: f64,
}

/// Where the distance query may start: the triangle slot nearest at the previous query.
pub(crate) type Hint = u32;

/// No previous nearest triangle.
pub(crate) const NO_HINT: Hint = u32::MAX;

impl TriTree {
    /// Builds the tree over `tris` (at least one; each index is the mesh's triangle index).
    pub(crate) fn new(tris: Vec<Triangle>) -> TriTree {
        let mut items: Vec<(Point3<f64>, u32)> = tris
            .iter()
            .enumerate()
            .map(|(i, t)| (t.center(), i as u32))
            .collect();
        let mut nodes = Vec::with_capacity(2 * tris.len() / LEAF_SIZE + 1);
        build(&mut items, 0, &tris, &mut nodes);
        let ids: Vec<u32> = items.iter().map(|&(_, i)| i).collect();
        let tris = ids.iter().map(|&i| tris[i as usize]).collect();
        TriTree { nodes, tris, ids }
    }

    /// The mesh's box: lower and upper corners.
    pub(crate) fn bounds(&self) -> (Point3<f64>, Point3<f64>) {
        (self.nodes[0].lo, self.nodes[0].hi)
    }

    /// Distance (m) from `solid` to the triangles, by the rule of the module doc: a lower
    /// bound on the true distance, within [`MESH_TOLERANCE_M`] of it when below `need`, and
    /// 0 when the solid meets a triangle. `hint` is read as the first candidate and left on
    /// the nearest triangle found. Allocates nothing.
    pub(crate) fn distance(
        &self,
        solid: &Placed,
        need: f64,
        hint: &mut Hint,
        simplex: &mut VoronoiSimplex,
    ) -> f64 {
        let (slo, shi) = solid_box(solid);
        let node_bound = |n: &Node| {
            let boxes = box_gap(&slo, &shi, &n.lo, &n.hi);
            let sphere = box_gap(&solid.centre, &solid.centre, &n.lo, &n.hi) - solid.radius;
            boxes.max(sphere)
        };
        let mut best = f64::INFINITY;
        let mut floor = f64::INFINITY;
        let first = *hint;
        if (first as usize) < self.tris.len() {
            best = self
                .triangle_distance(solid, first, f64::INFINITY, simplex)
                .unwrap_or(f64::INFINITY);
            if best <= 0.0 {
                return 0.0;
            }
        }
        let mut stack = [(0u32, 0.0f64); STACK];
        stack[0] = (0, node_bound(&self.nodes[0]));
        let mut top = 1;
        while top > 0 {
            top -= 1;
            let (n, bound) = stack[top];
            let cut = (best - MESH_TOLERANCE_M).min(need);
            if bound >= cut {
                floor = floor.min(bound);
                continue;
            }
            let node = &self.nodes[n as usize];
            if node.count > 0 {
                for slot in node.index..node.index + node.count {
                    if slot == first {
                        continue;
                    }
                    let cut = (best - MESH_TOLERANCE_M).min(need);
                    match self.triangle_distance(solid, slot, cut, simplex) {
                        Some(d) if d <= 0.0 => {
                            *hint = slot;
                            return 0.0;
                        }
                        Some(d) if d < best => {
                            best = d;
                            *hint = slot;
                        }
                        Some(_) => {}
                        // Beyond the cut-off: only that bound is proven.
                        None => floor = floor.min(cut),
                    }
                }
                continue;
            }
            top = self.push_children(n, &node_bound, &mut stack, top);
        }
        best.min(floor)
    }

    /// Distance of `solid` to the triangle in `slot` (0 when they meet), or `None` when GJK
    /// proves it larger than `max`.
    fn triangle_distance(
        &self,
        solid: &Placed,
        slot: u32,
        max: f64,
        simplex: &mut VoronoiSimplex,
    ) -> Option<f64> {
        let tri = &self.tris[slot as usize];
        let pos12 = &solid.mesh_T_shape;
        if let Some(r) = solid.ball {
            let centre = Point3::from(pos12.translation.vector);
            let (proj, _) = tri.project_local_point_and_get_location(&centre, false);
            return Some(((proj.point - centre).norm() - r).max(0.0));
        }
        // From the solid towards the triangle: the CSO's nearest point lies that way.
        // A capsule is its segment grown by the radius: GJK ends exactly on the segment,
        // while on the rounded surface it stops at its relative precision.
        let (core, margin) = solid.rounded.unwrap_or((solid.support, 0.0));
        // The start parry's own support-map distance takes.
        let dir = Unit::try_new(
            -pos12.translation.vector,
            parry3d_f64::math::DEFAULT_EPSILON,
        )
        .unwrap_or_else(Vector3::x_axis);
        simplex.reset(CSOPoint::from_shapes(pos12, tri, core, &dir));
        match gjk::closest_points(pos12, tri, core, max + margin, true, simplex) {
            GJKResult::ClosestPoints(p1, p2, _) => Some(((p2 - p1).norm() - margin).max(0.0)),
            GJKResult::Intersection => Some(0.0),
            GJKResult::NoIntersection(_) | GJKResult::Proximity(_) => None,
        }
    }

    /// The triangle nearest `point` (the mesh's index), the point's projection on it and
    /// where on the triangle that projection lies. Allocates nothing.
    pub(crate) fn nearest(&self, point: &Point3<f64>) -> (u32, Point3<f64>, TrianglePointLocation) {
        let mut best = f64::INFINITY;
        let mut found = (0u32, *point, TrianglePointLocation::OnSolid);
        let bound = |n: &Node| box_gap(point, point, &n.lo, &n.hi);
        let mut stack = [(0u32, 0.0f64); STACK];
        stack[0] = (0, bound(&self.nodes[0]));
        let mut top = 1;
        while top > 0 {
            top -= 1;
            let (n, b) = stack[top];
            if b >= best {
                continue;
            }
            let node = &self.nodes[n as usize];
            if node.count > 0 {
                for slot in node.index..node.index + node.count {
                    let tri = &self.tris[slot as usize];
                    let (proj, at) = tri.project_local_point_and_get_location(point, false);
                    let d = (proj.point - point).norm();
                    if d < best {
                        best = d;
                        found = (self.ids[slot as usize], proj.point, at);
                    }
                }
                continue;
            }
            top = self.push_children(n, &bound, &mut stack, top);
        }
        found
    }

    /// Pushes inner node `n`'s children with their bounds onto `stack` above `top`, the
    /// nearer last so that it is popped first; returns the new top.
    #[inline]
    fn push_children(
        &self,
        n: u32,
        bound: &impl Fn(&Node) -> f64,
        stack: &mut [(u32, f64); STACK],
        top: usize,
    ) -> usize {
        let (l, r) = (n + 1, self.nodes[n as usize].index);
        let (bl, br) = (
            bound(&self.nodes[l as usize]),
            bound(&self.nodes[r as usize]),
        );
        let (near, far) = if bl <= br {
            ((l, bl), (r, br))
        } else {
            ((r, br), (l, bl))
        };
        stack[top] = far;
        stack[top + 1] = near;
        top + 2
    }
}

/// Appends the subtree over `items` (slots `offset ..`) to `nodes`, split at the median of
/// the longest side of the centres' box.
fn build(
    items: &mut [(Point3<f64>, u32)],
    offset: usize,
    tris: &[Triangle],
    nodes: &mut Vec<Node>,
) {
    let (mut lo, mut hi) = (
        Point3::from([f64::INFINITY; 3]),
        Point3::from([f64::NEG_INFINITY; 3]),
    );
    let (mut clo, mut chi) = (lo, hi);
    for (c, i) in items.iter() {
        let t = &tris[*i as usize];
        for p in [t.a, t.b, t.c] {
            lo = lo.inf(&p);
            hi = hi.sup(&p);
        }
        clo = clo.inf(c);
        chi = chi.sup(c);
    }
    let at = nodes.len();
    nodes.push(Node {
        lo,
        hi,
        index: offset as u32,
        count: items.len() as u32,
    });
    if items.len() <= LEAF_SIZE {
        return;
    }
    let axis = (chi - clo).imax();
    let mid = items.len() / 2;
    items.select_nth_unstable_by(mid, |a, b| a.0[axis].total_cmp(&b.0[axis]));
    let (left, right) = items.split_at_mut(mid);
    build(left, offset, tris, nodes);
    let right_at = nodes.len();
    build(right, offset + mid, tris, nodes);
    nodes[at].index = right_at as u32;
    nodes[at].count = 0;
}

/// The solid's axis-aligned box in the mesh's frame, from its support map along the axes.
fn solid_box(solid: &Placed) -> (Point3<f64>, Point3<f64>) {
    let mut lo = solid.centre - Vector3::repeat(solid.radius);
    let mut hi = solid.centre + Vector3::repeat(solid.radius);
    for k in 0..3 {
        let axis = Vector3::ith(k, 1.0);
        lo[k] = lo[k].max(solid.support.support_point(&solid.mesh_T_shape, &-axis)[k]);
        hi[k] = hi[k].min(solid.support.support_point(&solid.mesh_T_shape, &axis)[k]);
    }
    (lo, hi)
}

/// Euclidean gap (m) between two boxes, 0 when they overlap.
#[inline]
fn box_gap(alo: &Point3<f64>, ahi: &Point3<f64>, blo: &Point3<f64>, bhi: &Point3<f64>) -> f64 {
    let mut s = 0.0;
    for k in 0..3 {
        let g = (blo[k] - ahi[k]).max(alo[k] - bhi[k]).max(0.0);
        s += g * g;
    }
    s.sqrt()
}
