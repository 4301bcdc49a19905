//! The cell file: a small YAML file of named bodies placed in the work frame (moving with the
//! part) or the base frame (fixed in the cell), the contacts that are allowed, and robot link
//! pairs that can never meet. Also the body list of a tool (`tool: {geometry: [...]}` in a
//! path file), which uses the same body form without a frame.
//!
//! ```yaml
//! units: {length: mm, angle: deg}          # optional; these are the defaults
//! bodies:
//!   - {name: table, frame: base, box: [1200, 800, 40], xyz: [900, 0, 210]}
//!   - {name: rib, frame: work, box: [20, 300, 120], xyz: [0, 150, 60]}
//!   - {name: post, frame: work, cylinder: {radius: 15, length: 200}, xyz: [100, 0, 100]}
//!   - {name: clamp, frame: work, mesh: {file: clamp.stl, scale: 1}, rpy: [0, 0, 90]}
//! allowed_contacts:
//!   - {between: [base_link, table], when: always}
//!   - {between: [nozzle, rib], when: process, depth: 3}   # only on `process: true`
//!                                                         # segments, at most 3 deep
//! never_meet:
//!   - [link1, link6]
//! ```
//!
//! Sizes and positions are in the file's length unit, angles in its angle unit; `xyz`/`rpy`
//! (fixed-axis roll, pitch, yaw, as in URDF) place the body's centre in its frame. A mesh's
//! vertices are taken in the file's length unit times `scale` (one number or three).
//!
//! A process contact may sink `depth` (file length unit, default
//! [`DEFAULT_CONTACT_DEPTH_M`]) into the other body; deeper, it is a collision. An `always`
//! pair is never measured, so it takes no depth.

use super::shape::Primitive;
use super::stl::read_stl;
use crate::error::{Error, Result};
use crate::units::{AngleUnit, LengthUnit};
use nalgebra::{Isometry3, Translation3, Vector3};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

mod contacts;
mod write;

use contacts::{contact, RawContact};
pub use contacts::{AllowWhen, AllowedContact, DEFAULT_CONTACT_DEPTH_M, MAX_CONTACT_DEPTH_M};

/// Largest cell file read (bytes): a cell of a few hundred bodies is a few tens of kB; the
/// cap keeps a wrong file from being parsed.
pub const MAX_CELL_FILE_BYTES: u64 = 1024 * 1024;

/// Most bodies in one cell file. The per-sample cost grows with bodies × robot links; 256
/// covers a detailed fixture while keeping the check near its speed target.
pub const MAX_CELL_BODIES: usize = 256;

/// Most bodies in one tool: a torch or gun is a handful of primitives.
pub const MAX_TOOL_BODIES: usize = 32;

/// Longest body name (characters): names are shown in every finding.
pub const MAX_NAME_CHARS: usize = 64;

/// Deepest bracket nesting accepted: a cell file needs 3 (`{bodies: [{box: [..]}]}`); the
/// YAML parser's work grows quickly with nesting, so a pathological file is refused by a
/// linear scan first.
const MAX_NESTING: usize = 16;

/// Largest absolute position (m) of a body: beyond 1 km it is a unit mistake.
const MAX_POSITION_M: f64 = 1000.0;

/// Largest absolute angle (rad) accepted in `rpy`: a few turns; more is a mistake.
const MAX_ANGLE_RAD: f64 = 8.0 * std::f64::consts::PI;

/// Where a cell body is placed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Anchor {
    /// Fixed in the cell: the pose is in the robot's base frame.
    Base,
    /// Moves with the part: the pose is in the path file's work frame.
    Work,
}

/// One body: its solid in its own frame and its pose in its anchor's frame (or, for a tool
/// body, in the tip-link frame).
#[derive(Debug, Clone)]
pub struct BodySpec {
    /// Unique name among robot links, tool bodies and cell bodies.
    pub name: String,
    /// `None` for tool bodies (always on the tip link).
    pub anchor: Option<Anchor>,
    /// Its solid in the body frame (SI).
    pub primitive: Primitive,
    /// Pose of the body frame in the anchor frame (m, rad).
    pub anchor_T_body: Isometry3<f64>,
    /// Where the body was given (`bodies[3]`), for messages.
    pub field: String,
    /// For a mesh: its file (as resolved) and the scale factors as written (STL unit to the
    /// file's length unit), so that the body can be written back.
    pub mesh: Option<(PathBuf, Vector3<f64>)>,
}

/// A read cell file, in SI.
#[derive(Debug, Clone)]
pub struct CellFile {
    /// The cell file as given (resolved against the path file's folder).
    pub path: PathBuf,
    /// Its bodies, in file order.
    pub bodies: Vec<BodySpec>,
    /// Pairs of bodies that may touch.
    pub allowed: Vec<AllowedContact>,
    /// Robot link pairs excluded from the self-collision test, with their field.
    pub never_meet: Vec<(String, String, String)>,
}

/// The raw form of a body, as written in a cell file or a tool's `geometry` list.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct RawBody {
    #[serde(skip_serializing_if = "Option::is_none")]
    name: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    frame: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    #[serde(rename = "box")]
    cuboid: Option<[f64; 3]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    cylinder: Option<RawRound>,
    #[serde(skip_serializing_if = "Option::is_none")]
    sphere: Option<RawSphere>,
    #[serde(skip_serializing_if = "Option::is_none")]
    capsule: Option<RawRound>,
    #[serde(skip_serializing_if = "Option::is_none")]
    mesh: Option<RawMesh>,
    #[serde(skip_serializing_if = "Option::is_none")]
    xyz: Option<[f64; 3]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    rpy: Option<[f64; 3]>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
struct RawRound {
    radius: f64,
    length: f64,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
struct RawSphere {
    radius: f64,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
struct RawMesh {
    file: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    scale: Option<RawScale>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(untagged)]
enum RawScale {
    One(f64),
    Three([f64; 3]),
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawUnits {
    length: Option<LengthUnit>,
    angle: Option<AngleUnit>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCell {
    units: Option<RawUnits>,
    bodies: Vec<RawBody>,
    #[serde(default)]
    allowed_contacts: Vec<RawContact>,
    #[serde(default)]
    never_meet: Vec<[String; 2]>,
}

/// Length and angle factors of a file (m per unit, rad per unit).
#[derive(Debug, Clone, Copy)]
pub struct Scale {
    /// Metres per length unit of the file.
    pub m_per_length: f64,
    /// Radians per angle unit of the file.
    pub rad_per_angle: f64,
}

impl RawBody {
    /// Converts one body to SI. `file` and `field` locate it; `folder` resolves mesh files;
    /// `with_frame` says whether `frame:` is required (cell) or refused (tool).
    pub fn convert(
        &self,
        scale: Scale,
        file: &Path,
        folder: &Path,
        field: &str,
        default_name: &str,
        with_frame: bool,
    ) -> Result<BodySpec> {
        let err =
            |what: &str, message: String| Error::input(file, format!("{field}{what}"), message);
        let name = self
            .name
            .clone()
            .unwrap_or_else(|| default_name.to_string());
        check_name(&name).map_err(|m| err(".name", m))?;
        let anchor = match (&self.frame, with_frame) {
            (Some(f), true) => Some(match f.as_str() {
                "base" => Anchor::Base,
                "work" => Anchor::Work,
                other => {
                    return Err(err(
                        ".frame",
                        format!("is `{other}`: use `base` (fixed in the cell) or `work` (moves with the part)"),
                    ))
                }
            }),
            (None, true) => {
                return Err(err(
                    "",
                    format!("body '{name}' has no `frame`: add `frame: base` (fixed in the cell) or `frame: work` (moves with the part)"),
                ))
            }
            (Some(_), false) => {
                return Err(err(
                    ".frame",
                    "a tool body always rides on the tip link: remove `frame`".into(),
                ))
            }
            (None, false) => None,
        };
        let m = scale.m_per_length;
        let mut given = Vec::new();
        if let Some(s) = self.cuboid {
            given.push(Primitive::Box {
                size: Vector3::from(s) * m,
            });
        }
        if let Some(c) = &self.cylinder {
            given.push(Primitive::Cylinder {
                radius: c.radius * m,
                length: c.length * m,
            });
        }
        if let Some(s) = &self.sphere {
            given.push(Primitive::Sphere {
                radius: s.radius * m,
            });
        }
        if let Some(c) = &self.capsule {
            given.push(Primitive::Capsule {
                radius: c.radius * m,
                length: c.length * m,
            });
        }
        let shape_keys = "box, cylinder, sphere, capsule or mesh";
        if given.len() + usize::from(self.mesh.is_some()) != 1 {
            return Err(err(
                "",
                format!("body '{name}' must give exactly one shape ({shape_keys})"),
            ));
        }
        let mut mesh_file = None;
        let primitive = if let Some(p) = given.pop() {
            p.validate(file, field)?;
            p
        } else if let Some(mesh) = &self.mesh {
            let factor = match mesh.scale {
                None => Vector3::repeat(1.0),
                Some(RawScale::One(s)) => Vector3::repeat(s),
                Some(RawScale::Three(s)) => Vector3::from(s),
            };
            if !factor
                .iter()
                .all(|s| s.is_finite() && *s > 0.0 && *s <= 1e6)
            {
                return Err(err(
                    ".mesh.scale",
                    "must be positive numbers up to 1e6: give the factor from the STL's unit to the file's length unit".into(),
                ));
            }
            let mesh_path = folder.join(&mesh.file);
            let points = read_stl(&mesh_path, factor * m, file, &format!("{field}.mesh.file"))?;
            mesh_file = Some((mesh_path, factor));
            Primitive::Mesh(points)
        } else {
            return Err(err(
                "",
                format!("body '{name}' gives no shape ({shape_keys})"),
            ));
        };
        let xyz = Vector3::from(self.xyz.unwrap_or([0.0; 3])) * m;
        let rpy = Vector3::from(self.rpy.unwrap_or([0.0; 3])) * scale.rad_per_angle;
        if !xyz
            .iter()
            .all(|v| v.is_finite() && v.abs() <= MAX_POSITION_M)
        {
            return Err(err(
                ".xyz",
                format!("must be finite and within ±{MAX_POSITION_M} m: check the value and the length unit"),
            ));
        }
        if !rpy
            .iter()
            .all(|v| v.is_finite() && v.abs() <= MAX_ANGLE_RAD)
        {
            return Err(err(
                ".rpy",
                "must be finite angles within ±4 turns: check the value and the angle unit".into(),
            ));
        }
        Ok(BodySpec {
            name,
            anchor,
            primitive,
            anchor_T_body: Isometry3::from_parts(
                Translation3::from(xyz),
                crate::rotation::from_rpy(rpy.x, rpy.y, rpy.z),
            ),
            field: field.to_string(),
            mesh: mesh_file,
        })
    }
}

/// A body name must be non-empty, short and printable.
fn check_name(name: &str) -> std::result::Result<(), String> {
    if name.trim().is_empty() {
        return Err("is empty: give the body a name".into());
    }
    if name.chars().count() > MAX_NAME_CHARS {
        return Err(format!(
            "is longer than {MAX_NAME_CHARS} characters: shorten it"
        ));
    }
    if name.chars().any(char::is_control) {
        return Err("contains a control character: use printable text".into());
    }
    Ok(())
}

/// Reads a cell file. Mesh files are relative to the cell file's folder.
pub fn load_cell(path: &Path) -> Result<CellFile> {
    let text = read_text(path)?;
    let raw: RawCell = parse(&text, path)?;
    let units = raw.units.unwrap_or(RawUnits {
        length: None,
        angle: None,
    });
    let scale = Scale {
        m_per_length: units.length.unwrap_or(LengthUnit::Mm).to_m(),
        rad_per_angle: units.angle.unwrap_or(AngleUnit::Deg).to_rad(),
    };
    if raw.bodies.len() > MAX_CELL_BODIES {
        return Err(Error::input(
            path,
            "bodies",
            format!(
                "lists {} bodies, more than the {MAX_CELL_BODIES} armpath accepts: merge small ones into boxes",
                raw.bodies.len()
            ),
        ));
    }
    let folder = path.parent().unwrap_or(Path::new("."));
    let mut bodies = Vec::with_capacity(raw.bodies.len());
    for (i, b) in raw.bodies.iter().enumerate() {
        let field = format!("bodies[{i}]");
        let body = b.convert(
            scale,
            path,
            folder,
            &field,
            &format!("body_{}", i + 1),
            true,
        )?;
        if let Some(first) = bodies.iter().find(|o: &&BodySpec| o.name == body.name) {
            return Err(Error::input(
                path,
                format!("{field}.name"),
                format!(
                    "'{}' is also the name of {}: give every body its own name",
                    body.name, first.field
                ),
            ));
        }
        bodies.push(body);
    }
    let allowed = raw
        .allowed_contacts
        .iter()
        .enumerate()
        .map(|(i, c)| contact(c, i, scale, path))
        .collect::<Result<_>>()?;
    let never_meet = raw
        .never_meet
        .iter()
        .enumerate()
        .map(|(i, [a, b])| (a.clone(), b.clone(), format!("never_meet[{i}]")))
        .collect();
    Ok(CellFile {
        path: path.to_path_buf(),
        bodies,
        allowed,
        never_meet,
    })
}

/// Reads a small text file with the checks every input gets (regular file, size cap, UTF-8).
fn read_text(path: &Path) -> Result<String> {
    let bytes = super::read_capped(path, MAX_CELL_FILE_BYTES).map_err(|fail| {
        let message = match fail {
            super::ReadFail::Open(e) => format!(
                "cannot be opened ({e}): check the name (a `cell:` in a path file is relative \
                 to the path file's folder)"
            ),
            super::ReadFail::NotRegular => {
                "is not a regular file (a folder, pipe or device): name a .yaml cell file".into()
            }
            super::ReadFail::TooLarge => format!(
                "is larger than {} kB, more than any cell file: check the file name",
                MAX_CELL_FILE_BYTES / 1024
            ),
        };
        Error::input(path, "file", message)
    })?;
    String::from_utf8(bytes).map_err(|e| {
        Error::input(
            path,
            format!("byte {}", e.utf8_error().valid_up_to()),
            "is not UTF-8 text: save the cell file as UTF-8 YAML",
        )
    })
}

/// Parses YAML text into `T`, locating errors by line and column.
fn parse<T: serde::de::DeserializeOwned>(text: &str, path: &Path) -> Result<T> {
    if let Some(line) = too_deep(text) {
        return Err(Error::input(
            path,
            format!("line {line}"),
            format!("brackets nest more than {MAX_NESTING} levels deep: a cell file needs 3; check that this is a cell file"),
        ));
    }
    if text
        .lines()
        .all(|l| l.trim().is_empty() || l.trim_start().starts_with('#'))
    {
        return Err(Error::input(
            path,
            "file",
            "is empty: list the cell's `bodies:`",
        ));
    }
    serde_yaml::from_str(text).map_err(|e| {
        let at = e.location().map_or_else(
            || "file".to_string(),
            |l| format!("line {} column {}", l.line(), l.column()),
        );
        let message = e.to_string();
        let message = match message.split(" at line ").next() {
            Some(head) => head.to_string(),
            None => message,
        };
        let hint = if message.contains("unknown field") {
            "remove the key or correct its spelling"
        } else if message.contains("missing field") {
            "add the key"
        } else if message.contains("unknown variant") {
            "use one of the listed values"
        } else {
            "write the value in the form the cell file format expects (see README)"
        };
        Error::input(path, at, format!("{message}: {hint}"))
    })
}

/// The line where bracket nesting first exceeds [`MAX_NESTING`], quoted text and comments
/// aside (a conservative scan: any `[`/`{` outside quotes counts).
fn too_deep(text: &str) -> Option<usize> {
    let (mut depth, mut line, mut quote) = (0usize, 1usize, None::<char>);
    let mut comment = false;
    for c in text.chars() {
        match (c, quote) {
            ('\n', _) => {
                line += 1;
                comment = false;
            }
            _ if comment => {}
            (q @ ('"' | '\''), None) => quote = Some(q),
            (q, Some(open)) if q == open => quote = None,
            (_, Some(_)) => {}
            ('#', None) => comment = true,
            ('[' | '{', None) => {
                depth += 1;
                if depth > MAX_NESTING {
                    return Some(line);
                }
            }
            (']' | '}', None) => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    None
}

/// Converts a tool's `geometry` list (tip-link frame) to SI bodies; `file` is the path file.
pub fn tool_bodies(
    raw: &[RawBody],
    scale: Scale,
    file: &Path,
    field: &str,
) -> Result<Vec<BodySpec>> {
    if raw.len() > MAX_TOOL_BODIES {
        return Err(Error::input(
            file,
            field,
            format!("lists {} bodies, more than the {MAX_TOOL_BODIES} a tool may have: merge small ones", raw.len()),
        ));
    }
    let folder = file.parent().unwrap_or(Path::new("."));
    let mut out: Vec<BodySpec> = Vec::with_capacity(raw.len());
    for (i, b) in raw.iter().enumerate() {
        let here = format!("{field}[{i}]");
        let default = if raw.len() == 1 {
            "tool".to_string()
        } else {
            format!("tool_{}", i + 1)
        };
        let body = b.convert(scale, file, folder, &here, &default, false)?;
        if out.iter().any(|o| o.name == body.name) {
            return Err(Error::input(
                file,
                format!("{here}.name"),
                format!(
                    "'{}' names two tool bodies: give each its own name",
                    body.name
                ),
            ));
        }
        out.push(body);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn reads_bodies_in_si_with_contacts() {
        // 1200 mm = 1.2 m, 90° = π/2: the file's units apply to every value.
        // source: common practice (unit conversion)
        let dir = tempfile::tempdir().unwrap();
        let p = write(
            dir.path(),
            "c.yaml",
            "bodies:\n  - {name: table, frame: base, box: [1200, 800, 40], xyz: [900, 0, 210], rpy: [0, 0, 90]}\n  - {name: post, frame: work, cylinder: {radius: 15, length: 200}}\nallowed_contacts:\n  - {between: [base_link, table], when: always}\n  - {between: [link6, post], when: process}\n  - {between: [link5, post], when: process, depth: 0.5}\nnever_meet:\n  - [link1, link6]\n",
        );
        let cell = load_cell(&p).unwrap();
        assert_eq!(cell.bodies.len(), 2);
        let Primitive::Box { size } = &cell.bodies[0].primitive else {
            panic!("not a box")
        };
        assert!((size.x - 1.2).abs() < 1e-12 && (size.z - 0.04).abs() < 1e-12);
        assert!((cell.bodies[0].anchor_T_body.translation.vector.x - 0.9).abs() < 1e-12);
        let yaw = cell.bodies[0].anchor_T_body.rotation.euler_angles().2;
        assert!((yaw - std::f64::consts::FRAC_PI_2).abs() < 1e-12);
        assert_eq!(cell.bodies[1].anchor, Some(Anchor::Work));
        assert_eq!(cell.allowed[0].when, AllowWhen::Always);
        // A process contact without depth takes the default; 0.5 mm = 0.0005 m.
        assert_eq!(cell.allowed[1].depth, DEFAULT_CONTACT_DEPTH_M);
        assert!((cell.allowed[2].depth - 0.0005).abs() < 1e-15);
        assert_eq!(cell.never_meet[0].2, "never_meet[0]");
    }

    #[test]
    fn every_refusal_names_the_field() {
        // source: common practice (each error names file and field and what to do)
        let dir = tempfile::tempdir().unwrap();
        let cases = [
            ("bodies:\n  - {name: a, box: [1, 1, 1]}\n", "bodies[0]", "no `frame`"),
            ("bodies:\n  - {name: a, frame: floor, box: [1, 1, 1]}\n", "bodies[0].frame", "use `base`"),
            ("bodies:\n  - {name: a, frame: base, box: [1, 1, 1], sphere: {radius: 1}}\n", "bodies[0]", "exactly one shape"),
            ("bodies:\n  - {name: a, frame: base, box: [1, 0, 1]}\n", "bodies[0]", "size y"),
            ("bodies:\n  - {name: a, frame: base, box: [1, 1, 1]}\n  - {name: a, frame: base, box: [1, 1, 1]}\n", "bodies[1].name", "also the name of bodies[0]"),
            ("bodies:\n  - {name: a, frame: base, sphere: {radius: 5}, xyz: [1e9, 0, 0]}\n", "bodies[0].xyz", "within"),
            ("bodies:\n  - {name: a, frame: base, mesh: {file: nothere.stl}}\n", "bodies[0].mesh.file", "cannot be opened"),
            ("bodies:\n  - {name: a, frame: base, cone: 3}\n", "line 2", "unknown field"),
            ("bodies: [[[[[[[[[[[[[[[[[[[[]]]]]]]]]]]]]]]]]]]\n", "line 1", "nest"),
            ("# nothing\n", "file", "empty"),
            ("bodies:\n  - {name: a, frame: base, box: [1, 1, 1]}\nallowed_contacts:\n  - {between: [a, link6], when: process, depth: -1}\n", "allowed_contacts[0].depth", "outside 0 .. 0.1 m"),
            ("bodies:\n  - {name: a, frame: base, box: [1, 1, 1]}\nallowed_contacts:\n  - {between: [a, link6], when: always, depth: 1}\n", "allowed_contacts[0].depth", "when: process"),
        ];
        for (text, location, phrase) in cases {
            let p = write(dir.path(), "c.yaml", text);
            let e = load_cell(&p).unwrap_err().to_string();
            assert!(e.contains(&format!("c.yaml: {location}")), "{text}: {e}");
            assert!(e.contains(phrase), "{text}: {e}");
        }
    }

    #[test]
    fn tool_bodies_take_no_frame_and_default_names() {
        // source: common practice
        let raw: Vec<RawBody> = serde_yaml::from_str(
            "- {cylinder: {radius: 20, length: 150}, xyz: [0, 0, 75]}\n- {sphere: {radius: 8}, xyz: [0, 0, 170]}\n",
        )
        .unwrap();
        let scale = Scale {
            m_per_length: 1e-3,
            rad_per_angle: 1.0,
        };
        let bodies = tool_bodies(&raw, scale, Path::new("p.yaml"), "tool.geometry").unwrap();
        assert_eq!(bodies[0].name, "tool_1");
        assert_eq!(bodies[1].name, "tool_2");
        let framed: Vec<RawBody> =
            serde_yaml::from_str("- {frame: work, sphere: {radius: 8}}\n").unwrap();
        let e = tool_bodies(&framed, scale, Path::new("p.yaml"), "tool.geometry").unwrap_err();
        assert!(e.to_string().contains("tool.geometry[0].frame"), "{e}");
    }
}
