//! The arm as the path views draw it: for a joint vector, the collision bodies of the links
//! and the tool as point sets in the base frame whose projection's convex hull is the body's
//! outline in a view, and the chain of joint origins from the base to the TCP (the "skeleton",
//! drawn thick, which also stands in for links without geometry). Cell bodies are fixed and
//! drawn once. Only the drawn poses are computed, after the walk.
//!
//! Outlines: a box is its eight corners; a sphere is three great circles in the base frame's
//! coordinate planes (its outline in every axis-aligned view); a cylinder is its two end
//! circles; a capsule is the spheres at its two ends; a mesh is its bounding box in its own
//! frame. Lengths on the page are mm.

use crate::cell::{BodyRole, CellInputs, CellModel};
use crate::robot::{Chain, Joints, Robot, MAX_DOF};
use nalgebra::{Isometry3, Point3, Vector3};

/// Points per circle of a round body's outline. The polygon stays within 1 − cos(7.5°) =
/// 0.86 % of the radius of the true circle: under a pixel for the bodies the views show.
const CIRCLE_POINTS: usize = 24;

/// A body's outline points (mm, base frame) and what it belongs to.
#[derive(Debug, Clone)]
pub struct Outline {
    /// Robot link, tool body or cell body.
    pub role: BodyRole,
    /// Points whose projection's convex hull is the outline in an axis-aligned view.
    pub points: Vec<Point3<f64>>,
}

/// One pose drawn: the moving bodies and the joint origins from the base to the TCP (mm).
#[derive(Debug, Clone)]
pub struct PoseShape {
    /// Links and tool bodies.
    pub bodies: Vec<Outline>,
    /// Base origin, each joint's origin, the tip link's origin, the TCP.
    pub skeleton: Vec<Point3<f64>>,
}

/// The chain and, when it can be built, the collision model of the arm, tool and cell.
pub struct ArmGeometry {
    chain: Chain,
    model: Option<CellModel>,
}

impl ArmGeometry {
    /// The geometry of `robot` (tool mounted) with the job's tool bodies and cell. A model
    /// that cannot be built (it was refused before the walk if it mattered) leaves the arm
    /// drawn by its skeleton alone.
    pub fn new(robot: &Robot, inputs: &CellInputs) -> Self {
        ArmGeometry {
            chain: robot.chain().clone(),
            model: CellModel::build(*inputs).ok(),
        }
    }

    /// Number of joints.
    pub fn dof(&self) -> usize {
        self.chain.dof()
    }

    /// The frames carrying the links at `q` (after each joint's motion), base frame, m.
    fn frames(&self, q: &Joints) -> [Isometry3<f64>; MAX_DOF] {
        let mut frames = [Isometry3::identity(); MAX_DOF];
        let mut base_T_link = Isometry3::identity();
        for ((joint, &qi), slot) in self.chain.joints().iter().zip(q).zip(frames.iter_mut()) {
            base_T_link = base_T_link * joint.parent_T_joint * joint.motion(qi);
            *slot = base_T_link;
        }
        frames
    }

    /// The arm at `q` (rad or m).
    pub fn pose(&self, q: &Joints) -> PoseShape {
        PoseShape {
            bodies: self.outlines(Some(&self.frames(q))),
            skeleton: self.skeleton(q),
        }
    }

    /// The joint origins from the base to the TCP at `q` (mm); the last point is FK's TCP.
    pub fn skeleton(&self, q: &Joints) -> Vec<Point3<f64>> {
        let frames = self.frames(q);
        let mut pts = vec![Point3::origin()];
        pts.extend(frames[..self.dof()].iter().map(|f| f * Point3::origin()));
        pts.push(self.chain.fk_tip(q) * Point3::origin());
        pts.push(self.chain.fk(q) * Point3::origin());
        pts.iter().map(|p| p * 1e3).collect()
    }

    /// The fixed bodies (cell bodies), drawn once.
    pub fn cell_bodies(&self) -> Vec<Outline> {
        self.outlines(None)
    }

    /// Outlines of the moving bodies at `frames` (`Some`), or of the fixed ones (`None`).
    fn outlines(&self, frames: Option<&[Isometry3<f64>; MAX_DOF]>) -> Vec<Outline> {
        let Some(model) = &self.model else {
            return Vec::new();
        };
        let mut out = Vec::new();
        for body in &model.bodies {
            let base_T_frame = match (body.frame, frames) {
                (Some(f), Some(frames)) => frames[f],
                (None, None) => Isometry3::identity(),
                _ => continue,
            };
            for placed in &model.placed[body.solids.clone()] {
                let base_T_shape = base_T_frame * placed.frame_T_shape;
                out.push(Outline {
                    role: body.role,
                    points: solid_points(placed.solid.shape(), &base_T_shape),
                });
            }
        }
        out
    }
}

/// Points of a circle of `radius` about `centre` spanned by the unit vectors `u` and `v`.
fn circle(centre: Point3<f64>, u: Vector3<f64>, v: Vector3<f64>, radius: f64) -> Vec<Point3<f64>> {
    (0..CIRCLE_POINTS)
        .map(|i| {
            let a = std::f64::consts::TAU * i as f64 / CIRCLE_POINTS as f64;
            centre + (u * a.cos() + v * a.sin()) * radius
        })
        .collect()
}

/// A sphere's outline points: great circles in the base frame's three coordinate planes.
fn sphere(centre: Point3<f64>, radius: f64) -> Vec<Point3<f64>> {
    let (x, y, z) = (Vector3::x(), Vector3::y(), Vector3::z());
    let mut pts = circle(centre, x, y, radius);
    pts.extend(circle(centre, x, z, radius));
    pts.extend(circle(centre, y, z, radius));
    pts
}

/// Outline points (mm, base frame) of a parry shape placed at `base_T_shape` (m).
pub(crate) fn solid_points(
    shape: &dyn parry3d_f64::shape::Shape,
    base_T_shape: &Isometry3<f64>,
) -> Vec<Point3<f64>> {
    let pts: Vec<Point3<f64>> = if let Some(b) = shape.as_ball() {
        sphere(base_T_shape * Point3::origin(), b.radius)
    } else if let Some(c) = shape.as_capsule() {
        let mut pts = sphere(base_T_shape * c.segment.a, c.radius);
        pts.extend(sphere(base_T_shape * c.segment.b, c.radius));
        pts
    } else if let Some(c) = shape.as_cylinder() {
        // parry's cylinder runs along its own y axis.
        let (u, v) = (base_T_shape * Vector3::x(), base_T_shape * Vector3::z());
        let axis = base_T_shape * Vector3::y() * c.half_height;
        let centre = base_T_shape * Point3::origin();
        let mut pts = circle(centre + axis, u, v, c.radius);
        pts.extend(circle(centre - axis, u, v, c.radius));
        pts
    } else {
        let (lo, hi) = match shape.as_cuboid() {
            Some(c) => (-c.half_extents, c.half_extents),
            None => {
                let aabb = shape.compute_local_aabb();
                (aabb.mins.coords, aabb.maxs.coords)
            }
        };
        (0..8)
            .map(|i| {
                let pick = |k: usize| if i >> k & 1 == 0 { lo[k] } else { hi[k] };
                base_T_shape * Point3::new(pick(0), pick(1), pick(2))
            })
            .collect()
    };
    pts.into_iter().map(|p| p * 1e3).collect()
}

/// The points on a view's two axes (`axes`: indices of x, y, z).
pub fn project(points: &[Point3<f64>], axes: [usize; 2]) -> Vec<(f64, f64)> {
    points.iter().map(|p| (p[axes[0]], p[axes[1]])).collect()
}

/// Convex hull of 2-D points, counter-clockwise, without repeated or collinear points
/// (Andrew's monotone chain). Non-finite points are dropped.
pub fn hull(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut p: Vec<(f64, f64)> = points
        .iter()
        .copied()
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .collect();
    p.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    p.dedup();
    if p.len() < 3 {
        return p;
    }
    let cross = |o: (f64, f64), a: (f64, f64), b: (f64, f64)| {
        (a.0 - o.0) * (b.1 - o.1) - (a.1 - o.1) * (b.0 - o.0)
    };
    let mut h: Vec<(f64, f64)> = Vec::with_capacity(2 * p.len());
    for pass in 0..2 {
        let start = h.len();
        let iter: Box<dyn Iterator<Item = &(f64, f64)>> = if pass == 0 {
            Box::new(p.iter())
        } else {
            Box::new(p.iter().rev())
        };
        for &q in iter {
            while h.len() >= start + 2 && cross(h[h.len() - 2], h[h.len() - 1], q) <= 0.0 {
                h.pop();
            }
            h.push(q);
        }
        h.pop();
    }
    h
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::{Translation3, UnitQuaternion};
    use parry3d_f64::shape::{Ball, Cuboid, Cylinder};

    fn sorted(mut v: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
        for p in &mut v {
            // Round away the last bits of the rotations.
            *p = ((p.0 * 1e6).round() / 1e6, (p.1 * 1e6).round() / 1e6);
        }
        v.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
        v
    }

    #[test]
    fn a_box_turned_about_z_projects_to_its_rotated_rectangle() {
        // source: geometry by hand. A 0.2 × 0.1 × 0.3 m box centred at (1, 0, 0.5) m, turned
        // 90° about z: from above its 200 mm side runs along y, its 100 mm side along x, so
        // the top view's corners are (1000 ± 50, ±100); from −y (x–z) the outline is 100 mm
        // wide and 300 mm tall: (1000 ± 50, 500 ± 150).
        let shape = Cuboid::new(Vector3::new(0.1, 0.05, 0.15));
        let pose = Isometry3::from_parts(
            Translation3::new(1.0, 0.0, 0.5),
            UnitQuaternion::from_axis_angle(&Vector3::z_axis(), std::f64::consts::FRAC_PI_2),
        );
        let pts = solid_points(&shape, &pose);
        let top = sorted(hull(&project(&pts, [0, 1])));
        assert_eq!(
            top,
            vec![
                (950.0, -100.0),
                (950.0, 100.0),
                (1050.0, -100.0),
                (1050.0, 100.0)
            ]
        );
        let side = sorted(hull(&project(&pts, [0, 2])));
        assert_eq!(
            side,
            vec![
                (950.0, 350.0),
                (950.0, 650.0),
                (1050.0, 350.0),
                (1050.0, 650.0)
            ]
        );
    }

    #[test]
    fn round_bodies_project_to_their_radius() {
        // source: geometry by hand. A sphere of 50 mm seen along any axis is a circle of
        // 50 mm; a cylinder of radius 40 mm and length 300 mm along base z, seen from above,
        // is its end circle (radius 40 mm), and from −y a 80 × 300 mm rectangle.
        let ball = solid_points(&Ball::new(0.05), &Isometry3::translation(0.2, 0.1, 0.0));
        for axes in [[0, 1], [0, 2], [1, 2]] {
            let h = hull(&project(&ball, axes));
            let c = if axes[0] == 0 { 200.0 } else { 100.0 };
            let width = h.iter().map(|p| p.0).fold(f64::MIN, f64::max) - c;
            assert!((width - 50.0).abs() < 1e-9, "{axes:?}: {width}");
        }
        // parry's cylinder runs along y: a quarter turn about x puts it along z.
        let turn = Isometry3::rotation(Vector3::x() * std::f64::consts::FRAC_PI_2);
        let cyl = solid_points(&Cylinder::new(0.15, 0.04), &turn);
        let top = hull(&project(&cyl, [0, 1]));
        assert!(top.iter().all(|p| (p.0.hypot(p.1) - 40.0).abs() < 1e-9));
        let side = sorted(hull(&project(&cyl, [0, 2])));
        assert_eq!(
            side,
            vec![
                (-40.0, -150.0),
                (-40.0, 150.0),
                (40.0, -150.0),
                (40.0, 150.0)
            ]
        );
    }

    #[test]
    fn hull_drops_inner_and_collinear_points() {
        // source: geometry by hand (unit square with its centre and an edge midpoint)
        let h = hull(&[
            (0.0, 0.0),
            (1.0, 0.0),
            (0.5, 0.0),
            (1.0, 1.0),
            (0.0, 1.0),
            (0.5, 0.5),
        ]);
        assert_eq!(h, vec![(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)]);
    }
}
