//! A body written back in the raw form of a file (for `fix`'s amended path file).

use super::{Anchor, BodySpec, RawBody, RawMesh, RawRound, RawScale, RawSphere};
use crate::cell::Primitive;
use crate::units::file_value;

impl RawBody {
    /// The raw form of `body` in a file whose lengths are `length_to_m` metres and angles
    /// `angle_to_rad` radians per unit, so that reading it back gives `body` again: its name,
    /// its shape, `xyz` and `rpy` of its pose in its anchor frame, and for a mesh the file as
    /// an absolute path (it may be written to another folder) with the scale as written.
    pub fn from_body(body: &BodySpec, length_to_m: f64, angle_to_rad: f64) -> RawBody {
        let l = |v: f64| file_value(v, length_to_m);
        let a = |v: f64| file_value(v, angle_to_rad);
        let mut raw = RawBody {
            name: Some(body.name.clone()),
            frame: body.anchor.map(|anchor| match anchor {
                Anchor::Base => "base".to_string(),
                Anchor::Work => "work".to_string(),
            }),
            cuboid: None,
            cylinder: None,
            sphere: None,
            capsule: None,
            mesh: None,
            xyz: None,
            rpy: None,
        };
        match (&body.mesh, &body.primitive) {
            (Some((file, scale)), _) => {
                let file = std::fs::canonicalize(file).unwrap_or_else(|_| file.clone());
                raw.mesh = Some(RawMesh {
                    file: file.display().to_string(),
                    scale: Some(RawScale::Three([scale.x, scale.y, scale.z])),
                });
            }
            (None, Primitive::Box { size }) => raw.cuboid = Some([l(size.x), l(size.y), l(size.z)]),
            (None, Primitive::Cylinder { radius, length }) => {
                raw.cylinder = Some(RawRound {
                    radius: l(*radius),
                    length: l(*length),
                })
            }
            (None, Primitive::Capsule { radius, length }) => {
                raw.capsule = Some(RawRound {
                    radius: l(*radius),
                    length: l(*length),
                })
            }
            (None, Primitive::Sphere { radius }) => {
                raw.sphere = Some(RawSphere { radius: l(*radius) })
            }
            // A mesh always comes from a mesh file, written above.
            (None, Primitive::Mesh(_)) => {}
        }
        let t = body.anchor_T_body.translation.vector;
        raw.xyz = Some([l(t.x), l(t.y), l(t.z)]);
        let (r, p, y) = body.anchor_T_body.rotation.euler_angles();
        raw.rpy = Some([a(r), a(p), a(y)]);
        raw
    }
}
