//! STL meshes (binary or ASCII) for collision bodies: read with a cap on file size and
//! triangle count, scaled to metres, kept as the triangle list that becomes the solid's
//! surface and the vertex cloud that bounds it.

use crate::error::{Error, Result};
use nalgebra::{Point3, Vector3};
use std::path::Path;

/// Largest STL file read (bytes). A binary STL takes 50 bytes per triangle, an ASCII one about
/// 250: 64 MiB holds the largest mesh accepted below in either form, and keeps a wrong file
/// (a video, a disk image) from being read whole.
pub const MAX_STL_BYTES: u64 = 64 * 1024 * 1024;

/// Largest triangle count of one mesh. A collision mesh is a coarse envelope (hundreds to a
/// few thousand triangles); 200,000 admits a detailed CAD export while keeping the mesh's
/// bounding-volume tree construction well under a second.
pub const MAX_STL_TRIANGLES: usize = 200_000;

/// Largest coordinate (in the file's own unit, before scaling) accepted in an STL file: 1e6
/// is a kilometre in mm; beyond, the file is broken or not a part.
const MAX_STL_COORDINATE: f64 = 1e6;

/// A triangle mesh in m, in the mesh's own frame: its triangles as read (corner order kept)
/// and its distinct vertices.
#[derive(Debug, Clone)]
pub struct MeshPoints {
    points: Vec<Point3<f64>>,
    triangles: Vec<[Point3<f64>; 3]>,
}

impl MeshPoints {
    /// A mesh from its triangles (m); the distinct vertices are gathered from them. Used by
    /// the STL reader and by tests.
    pub fn from_triangles(triangles: Vec<[Point3<f64>; 3]>) -> Self {
        let mut points: Vec<Point3<f64>> = triangles.iter().flatten().copied().collect();
        // Shared vertices appear once per triangle; bounds and the flatness test need each once.
        points.sort_by(|a, b| {
            a.coords
                .iter()
                .zip(b.coords.iter())
                .map(|(x, y)| x.total_cmp(y))
                .find(|o| o.is_ne())
                .unwrap_or(std::cmp::Ordering::Equal)
        });
        points.dedup();
        MeshPoints { points, triangles }
    }

    /// The distinct vertices (m).
    pub fn points(&self) -> &[Point3<f64>] {
        &self.points
    }

    /// The triangles (m), corners in the file's order.
    pub fn triangles(&self) -> &[[Point3<f64>; 3]] {
        &self.triangles
    }

    /// A sphere holding every vertex: the centre of their bounding box and the largest
    /// distance from it (not the smallest such sphere, which needs no precision here).
    pub fn bounding_sphere(&self) -> (Vector3<f64>, f64) {
        let Some(first) = self.points.first() else {
            return (Vector3::zeros(), 0.0);
        };
        let (mut lo, mut hi) = (first.coords, first.coords);
        for p in &self.points {
            lo = lo.inf(&p.coords);
            hi = hi.sup(&p.coords);
        }
        let centre = 0.5 * (lo + hi);
        let radius = self
            .points
            .iter()
            .map(|p| (p.coords - centre).norm())
            .fold(0.0, f64::max);
        (centre, radius)
    }
}

/// Reads an STL file and scales every vertex by `scale` (per axis, giving m). `field` locates
/// the reference to the mesh in the file that named it (`referenced_by`), for messages.
pub fn read_stl(
    path: &Path,
    scale: Vector3<f64>,
    referenced_by: &Path,
    field: &str,
) -> Result<MeshPoints> {
    let refer = |message: String| Error::input(referenced_by, field, message);
    let shown = path.display();
    let bytes = super::read_capped(path, MAX_STL_BYTES).map_err(|fail| {
        refer(match fail {
            super::ReadFail::Open(e) => format!(
                "mesh file {shown} cannot be opened ({e}): check the name; it is relative to the \
                 folder of {}",
                referenced_by.display()
            ),
            super::ReadFail::NotRegular => format!(
                "mesh {shown} is not a regular file (a folder, pipe or device): name an .stl file"
            ),
            super::ReadFail::TooLarge => format!(
                "mesh {shown} is larger than {} MB: simplify the collision mesh (a coarse \
                 envelope is enough)",
                MAX_STL_BYTES / 1_000_000
            ),
        })
    })?;
    parse_stl(&bytes, scale).map_err(|m| refer(format!("mesh {}: {m}", path.display())))
}

/// Parses STL bytes; the error says what is wrong and what to do.
pub fn parse_stl(bytes: &[u8], scale: Vector3<f64>) -> std::result::Result<MeshPoints, String> {
    let mut cursor = std::io::Cursor::new(bytes);
    let reader = stl_io::create_stl_reader(&mut cursor).map_err(|e| {
        format!("is not a readable STL file ({e}): export the mesh as binary or ASCII STL")
    })?;
    let mut triangles = Vec::new();
    for (n, triangle) in reader.enumerate() {
        if n >= MAX_STL_TRIANGLES {
            return Err(format!(
                "has more than {MAX_STL_TRIANGLES} triangles: simplify the collision mesh"
            ));
        }
        let t = triangle.map_err(|e| {
            format!(
                "triangle {} cannot be read ({e}): export the mesh again",
                n + 1
            )
        })?;
        let mut corners = [Point3::origin(); 3];
        for (v, corner) in t.vertices.iter().zip(corners.iter_mut()) {
            let raw = Vector3::new(v.0[0] as f64, v.0[1] as f64, v.0[2] as f64);
            if !raw
                .iter()
                .all(|c| c.is_finite() && c.abs() <= MAX_STL_COORDINATE)
            {
                return Err(format!(
                    "triangle {} has a coordinate that is not a finite number within ±{MAX_STL_COORDINATE}: \
                     export the mesh again",
                    n + 1
                ));
            }
            *corner = Point3::from(raw.component_mul(&scale));
        }
        triangles.push(corners);
    }
    if triangles.len() < 4 {
        return Err(
            "has fewer than 4 triangles, so it encloses no volume: export a closed mesh".into(),
        );
    }
    Ok(MeshPoints::from_triangles(triangles))
}

/// Writes a closed triangle mesh as binary STL (the demo and test generator).
pub fn write_binary_stl(triangles: &[[Point3<f64>; 3]]) -> Vec<u8> {
    let mut out = vec![0u8; 80];
    out.extend_from_slice(&(triangles.len() as u32).to_le_bytes());
    for t in triangles {
        let n = (t[1] - t[0]).cross(&(t[2] - t[0]));
        let n = n.try_normalize(0.0).unwrap_or_else(Vector3::zeros);
        for c in n.iter().chain(t.iter().flat_map(|p| p.coords.iter())) {
            out.extend_from_slice(&(*c as f32).to_le_bytes());
        }
        out.extend_from_slice(&[0, 0]);
    }
    out
}

/// The twelve triangles of an axis-aligned box between `lo` and `hi`, facing outward.
pub fn box_triangles(lo: Vector3<f64>, hi: Vector3<f64>) -> Vec<[Point3<f64>; 3]> {
    let c = |i: usize| {
        Point3::new(
            if i & 1 == 0 { lo.x } else { hi.x },
            if i & 2 == 0 { lo.y } else { hi.y },
            if i & 4 == 0 { lo.z } else { hi.z },
        )
    };
    // Each face as four corners counter-clockwise seen from outside.
    let faces = [
        [0, 2, 3, 1], // z = lo
        [4, 5, 7, 6], // z = hi
        [0, 1, 5, 4], // y = lo
        [2, 6, 7, 3], // y = hi
        [0, 4, 6, 2], // x = lo
        [1, 3, 7, 5], // x = hi
    ];
    faces
        .iter()
        .flat_map(|f| [[c(f[0]), c(f[1]), c(f[2])], [c(f[0]), c(f[2]), c(f[3])]])
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binary_box_reads_back_scaled() {
        // A 10 × 20 × 30 box written in mm and read with scale 0.001 spans 0.01 × 0.02 × 0.03 m
        // and has its 8 corners as vertices.
        // source: common practice (binary STL layout: 80-byte header, u32 count, 50 bytes per
        // triangle)
        let tris = box_triangles(Vector3::zeros(), Vector3::new(10.0, 20.0, 30.0));
        assert_eq!(tris.len(), 12);
        let bytes = write_binary_stl(&tris);
        assert_eq!(bytes.len(), 84 + 12 * 50);
        let mesh = parse_stl(&bytes, Vector3::repeat(1e-3)).unwrap();
        assert_eq!(mesh.points().len(), 8);
        let (centre, radius) = mesh.bounding_sphere();
        assert!((centre - Vector3::new(0.005, 0.01, 0.015)).norm() < 1e-9);
        // half-diagonal: sqrt(5² + 10² + 15²) mm = 18.708 mm
        assert!((radius - 0.018_708_286_933_87).abs() < 1e-9, "{radius}");
    }

    #[test]
    fn ascii_and_garbage() {
        // source: common practice (ASCII STL grammar: solid / facet / outer loop / vertex)
        let mut text = String::from("solid t\n");
        for t in box_triangles(Vector3::zeros(), Vector3::repeat(1.0)) {
            text.push_str("facet normal 0 0 0\nouter loop\n");
            for p in t {
                text.push_str(&format!("vertex {} {} {}\n", p.x, p.y, p.z));
            }
            text.push_str("endloop\nendfacet\n");
        }
        text.push_str("endsolid t\n");
        let mesh = parse_stl(text.as_bytes(), Vector3::repeat(1.0)).unwrap();
        assert_eq!(mesh.points().len(), 8);
        let e = parse_stl(b"not a mesh at all", Vector3::repeat(1.0)).unwrap_err();
        assert!(e.contains("STL"), "{e}");
        // A binary header promising a million triangles with none behind it.
        let mut lying = vec![0u8; 80];
        lying.extend_from_slice(&1_000_000u32.to_le_bytes());
        assert!(parse_stl(&lying, Vector3::repeat(1.0)).is_err());
    }
}
