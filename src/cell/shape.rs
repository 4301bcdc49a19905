//! Solid shapes of the cell model: the primitives a URDF `<collision>`, a tool body or a cell
//! body may be, turned into parry shapes once, with the bounding sphere that the per-sample
//! query uses to skip far pairs.
//!
//! Boxes, cylinders, spheres and capsules are convex support maps (GJK distance, EPA depth).
//! An STL mesh is its triangle surface (see `surface`): distances are to the real surface, so
//! a concave part (ribs, pockets) is followed as it is. A closed mesh has an inside, and a
//! body lying wholly in it is in contact; an open mesh is a thin sheet without inside.
use super::stl::MeshPoints;
use super::surface::Surface;
use crate::error::{Error, Result};
use nalgebra::{Isometry3, Point3, UnitQuaternion, Vector3};
use parry3d_f64::shape::{Ball, Capsule, Cuboid, Cylinder, Shape, SupportMap};
use std::path::Path;

/// Smallest size (m) of any primitive dimension: below a micrometre a body is a typo (a size
/// given in m in a millimetre file, or a zero), not a part of a robot cell.
pub const MIN_SIZE_M: f64 = 1e-6;

/// Largest size (m) of any primitive dimension: 100 m is beyond any robot cell; a larger value
/// is a unit mistake (a size in mm given in a metre file).
pub const MAX_SIZE_M: f64 = 100.0;

/// What a body is, in its own frame, sizes in m.
#[derive(Debug, Clone)]
pub enum Primitive {
    /// A box centred on the origin; full edge lengths along x, y, z.
    Box {
        /// Edge lengths along x, y, z (m).
        size: Vector3<f64>,
    },
    /// A cylinder centred on the origin, its axis along z (the URDF convention).
    Cylinder {
        /// Radius (m).
        radius: f64,
        /// Length along z (m).
        length: f64,
    },
    /// A sphere centred on the origin.
    Sphere {
        /// Radius (m).
        radius: f64,
    },
    /// A cylinder with hemispherical ends, centred on the origin, axis along z; `length` is
    /// the distance between the two hemisphere centres.
    Capsule {
        /// Radius (m).
        radius: f64,
        /// Distance between the hemisphere centres (m).
        length: f64,
    },
    /// A triangle mesh (already scaled, in m), taken as its surface.
    Mesh(MeshPoints),
}

impl Primitive {
    /// The sizes of the primitive that must lie in `[MIN_SIZE_M, MAX_SIZE_M]`, with the name
    /// of each for messages. A capsule's length may be 0 (a sphere).
    fn sizes(&self) -> Vec<(&'static str, f64, bool)> {
        match self {
            Primitive::Box { size } => vec![
                ("size x", size.x, false),
                ("size y", size.y, false),
                ("size z", size.z, false),
            ],
            Primitive::Cylinder { radius, length } => {
                vec![("radius", *radius, false), ("length", *length, false)]
            }
            Primitive::Sphere { radius } => vec![("radius", *radius, false)],
            Primitive::Capsule { radius, length } => {
                vec![("radius", *radius, false), ("length", *length, true)]
            }
            Primitive::Mesh(_) => Vec::new(),
        }
    }

    /// Checks the sizes; the error names `file` and `field` and says what to change.
    pub fn validate(&self, file: &Path, field: &str) -> Result<()> {
        for (name, v, zero_ok) in self.sizes() {
            let ok =
                v.is_finite() && ((zero_ok && v == 0.0) || (MIN_SIZE_M..=MAX_SIZE_M).contains(&v));
            if !ok {
                return Err(Error::input(
                    file,
                    field,
                    format!(
                        "{name} is {v} m, outside {MIN_SIZE_M} .. {MAX_SIZE_M} m: give a positive size \
                         in the file's length unit"
                    ),
                ));
            }
        }
        Ok(())
    }
}

/// A solid ready for distance queries, with its placement in the body's frame.
#[derive(Debug, Clone)]
pub struct Solid {
    kind: SolidKind,
    /// Pose of the parry shape's own frame in the body's frame (parry's cylinder runs along y,
    /// the URDF's along z: a quarter turn about x maps one onto the other).
    pub(crate) body_T_shape: Isometry3<f64>,
    /// Radius (m) of a sphere about `centre` holding the whole solid.
    pub(crate) radius: f64,
    /// Centre of that sphere in the body's frame.
    pub(crate) centre: Vector3<f64>,
}

#[derive(Debug, Clone)]
enum SolidKind {
    Ball(Ball),
    Cuboid(Cuboid),
    Cylinder(Cylinder),
    Capsule(Capsule),
    Mesh(Box<Surface>),
}

/// A mesh whose vertices lie within this fraction of its size of one plane encloses no
/// volume: a flat part exported as a single surface, not a solid.
const FLAT_FRACTION: f64 = 1e-6;

/// True when the points span a volume: a fourth point stands off the plane of three spread
/// ones by more than [`FLAT_FRACTION`] of the cloud's size.
fn spans_volume(points: &[Point3<f64>]) -> bool {
    let Some(&p0) = points.first() else {
        return false;
    };
    let farthest = |score: &dyn Fn(&Point3<f64>) -> f64| {
        points
            .iter()
            .copied()
            .map(|p| (score(&p), p))
            .fold(
                (f64::NEG_INFINITY, p0),
                |a, b| if b.0 > a.0 { b } else { a },
            )
    };
    let (size, p1) = farthest(&|p| (p - p0).norm());
    if size.is_nan() || size <= 0.0 {
        return false;
    }
    let axis = (p1 - p0) / size;
    let (_, p2) = farthest(&|p| (p - p0).cross(&axis).norm());
    let Some(normal) = (p1 - p0).cross(&(p2 - p0)).try_normalize(0.0) else {
        return false;
    };
    let (off, _) = farthest(&|p| (p - p0).dot(&normal).abs());
    off > FLAT_FRACTION * size
}

impl Solid {
    /// Builds the solid for `primitive` placed at `body_T_primitive` (the `origin`/`pose` of
    /// the geometry). Sizes must have been validated. `None` for a mesh whose vertices span no
    /// volume (all on one plane or line: an export of a single face, not a part) or that has
    /// no proper triangle: the caller reports it.
    pub fn new(primitive: &Primitive, body_T_primitive: Isometry3<f64>) -> Option<Solid> {
        let turn_y_to_z = Isometry3::from_parts(
            nalgebra::Translation3::identity(),
            UnitQuaternion::from_axis_angle(&Vector3::x_axis(), std::f64::consts::FRAC_PI_2),
        );
        let (kind, local_T_shape, radius, centre) = match primitive {
            Primitive::Box { size } => (
                SolidKind::Cuboid(Cuboid::new(size * 0.5)),
                Isometry3::identity(),
                0.5 * size.norm(),
                Vector3::zeros(),
            ),
            Primitive::Cylinder { radius, length } => (
                SolidKind::Cylinder(Cylinder::new(0.5 * length, *radius)),
                turn_y_to_z,
                radius.hypot(0.5 * length),
                Vector3::zeros(),
            ),
            Primitive::Sphere { radius } => (
                SolidKind::Ball(Ball::new(*radius)),
                Isometry3::identity(),
                *radius,
                Vector3::zeros(),
            ),
            Primitive::Capsule { radius, length } => (
                SolidKind::Capsule(Capsule::new_z(0.5 * length, *radius)),
                Isometry3::identity(),
                0.5 * length + radius,
                Vector3::zeros(),
            ),
            Primitive::Mesh(mesh) => {
                if !spans_volume(mesh.points()) {
                    return None;
                }
                let surface = Surface::new(mesh)?;
                let (centre, radius) = mesh.bounding_sphere();
                (
                    SolidKind::Mesh(Box::new(surface)),
                    Isometry3::identity(),
                    radius,
                    centre,
                )
            }
        };
        let body_T_shape = body_T_primitive * local_T_shape;
        // The sphere centre is stated in the primitive's frame (meshes) or is its origin.
        let centre = (body_T_primitive * Point3::from(centre)).coords;
        Some(Solid {
            kind,
            body_T_shape,
            radius,
            centre,
        })
    }

    /// The parry support map of a convex solid, in the shape's own frame; `None` for a mesh.
    #[inline]
    pub(crate) fn support(&self) -> Option<&dyn SupportMap> {
        match &self.kind {
            SolidKind::Ball(s) => Some(s),
            SolidKind::Cuboid(s) => Some(s),
            SolidKind::Cylinder(s) => Some(s),
            SolidKind::Capsule(s) => Some(s),
            SolidKind::Mesh(_) => None,
        }
    }

    /// The parry shape of the solid, in the shape's own frame.
    #[inline]
    pub(crate) fn shape(&self) -> &dyn Shape {
        match &self.kind {
            SolidKind::Ball(s) => s,
            SolidKind::Cuboid(s) => s,
            SolidKind::Cylinder(s) => s,
            SolidKind::Capsule(s) => s,
            SolidKind::Mesh(s) => s.mesh(),
        }
    }

    /// The radius (m) of a ball solid (centred on its shape frame's origin); `None` for any
    /// other solid.
    #[inline]
    pub(crate) fn ball_radius(&self) -> Option<f64> {
        match &self.kind {
            SolidKind::Ball(b) => Some(b.radius),
            _ => None,
        }
    }

    /// A rounded solid as its core and the radius (m) around it: a capsule's segment;
    /// `None` for any other solid.
    #[inline]
    pub(crate) fn rounded(&self) -> Option<(&dyn SupportMap, f64)> {
        match &self.kind {
            SolidKind::Capsule(c) => Some((&c.segment, c.radius)),
            _ => None,
        }
    }

    /// The triangle surface of a mesh solid; `None` for a convex primitive.
    #[inline]
    pub(crate) fn surface(&self) -> Option<&Surface> {
        match &self.kind {
            SolidKind::Mesh(s) => Some(s),
            _ => None,
        }
    }

    /// A point of the solid in the shape's own frame: the centre of a primitive, a corner of
    /// a mesh. A body that lies wholly inside or wholly outside a closed surface has this
    /// point on the same side.
    #[inline]
    pub(crate) fn inner_point(&self) -> Point3<f64> {
        match &self.kind {
            SolidKind::Mesh(s) => s.mesh().vertices()[0],
            _ => Point3::origin(),
        }
    }

    /// Farthest distance (m) from the body frame's origin to any point of the solid.
    pub fn reach_from_origin(&self) -> f64 {
        self.centre.norm() + self.radius
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::Translation3;

    fn at(x: f64, y: f64, z: f64) -> Isometry3<f64> {
        Isometry3::from_parts(Translation3::new(x, y, z), UnitQuaternion::identity())
    }

    #[test]
    fn cylinder_axis_is_z() {
        // A cylinder of length 0.4 along z reaches z = ±0.2 and x = ±0.05 (radius): the
        // support point in +z is on the top face, in +x on the side.
        // source: common practice (URDF cylinder convention: axis along the link's z)
        let s = Solid::new(
            &Primitive::Cylinder {
                radius: 0.05,
                length: 0.4,
            },
            Isometry3::identity(),
        )
        .unwrap();
        let top = s
            .support()
            .unwrap()
            .support_point(&s.body_T_shape, &Vector3::z());
        assert!((top.z - 0.2).abs() < 1e-12, "{top}");
        let side = s
            .support()
            .unwrap()
            .support_point(&s.body_T_shape, &Vector3::x());
        assert!((side.x - 0.05).abs() < 1e-12, "{side}");
    }

    #[test]
    fn bounding_sphere_holds_the_box() {
        // Half-diagonal of a 0.2 × 0.4 × 0.4 box: sqrt(0.01 + 0.04 + 0.04) = 0.3; moved by
        // (1, 0, 0) its farthest point from the origin is 1 + 0.3 away at most.
        // source: common practice (Pythagoras)
        let s = Solid::new(
            &Primitive::Box {
                size: Vector3::new(0.2, 0.4, 0.4),
            },
            at(1.0, 0.0, 0.0),
        )
        .unwrap();
        assert!((s.radius - 0.3).abs() < 1e-12);
        assert!((s.reach_from_origin() - 1.3).abs() < 1e-12);
    }

    #[test]
    fn a_flat_mesh_is_refused() {
        // A square of two triangles (doubled to pass the reader's count) spans no volume.
        // source: common practice (four coplanar points span no volume)
        use super::super::stl::MeshPoints;
        let [a, b, c, d] = [
            Point3::new(0.0, 0.0, 0.0),
            Point3::new(1.0, 0.0, 0.0),
            Point3::new(1.0, 1.0, 0.0),
            Point3::new(0.0, 1.0, 0.0),
        ];
        let flat = vec![[a, b, c], [a, c, d], [a, c, b], [a, d, c]];
        assert!(Solid::new(
            &Primitive::Mesh(MeshPoints::from_triangles(flat)),
            Isometry3::identity()
        )
        .is_none());
    }

    #[test]
    fn sizes_out_of_range_are_refused_with_the_field() {
        // source: common practice (a zero or negative size is a typo)
        let p = Primitive::Sphere { radius: -0.01 };
        let e = p
            .validate(Path::new("c.yaml"), "bodies[2].sphere")
            .unwrap_err();
        let text = e.to_string();
        assert!(text.contains("c.yaml: bodies[2].sphere: radius"), "{text}");
        let ok = Primitive::Capsule {
            radius: 0.01,
            length: 0.0,
        };
        assert!(ok.validate(Path::new("c.yaml"), "x").is_ok());
    }
}
