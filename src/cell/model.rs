//! The cell model: every body that can collide (robot links from their URDF `<collision>`
//! elements, the tool's bodies on the tip link, the cell's fixtures and part) on the frame
//! that carries it, and the list of body pairs worth testing. Built once per check; the
//! per-sample queries live in `probe`.

use super::file::{AllowWhen, Anchor, BodySpec, CellFile};
use super::shape::{Primitive, Solid};
use super::stl::read_stl;
use crate::error::{Error, Result};
use crate::robot::{Chain, Robot, MAX_DOF};
use nalgebra::{Isometry3, Point3, Translation3, Vector3};
use std::ops::Range;
use std::path::Path;

/// Random in-range configurations drawn to find robot body pairs that never come close. 2,000
/// draws put several samples in every coarse cell of a 6-axis arm's reachable shape; with
/// [`NEVER_MEET_MARGIN_M`] on top, a pair that approaches somewhere between draws is kept.
pub const NEVER_MEET_SAMPLES: usize = 2000;

/// A robot body pair whose distance stays above this (m) in every drawn configuration is
/// dropped from the self-collision test. 0.1 m is far more than the distance two links move
/// between neighbouring draws of a compact arm, so a pair that can meet is never dropped for
/// lack of a lucky draw.
pub const NEVER_MEET_MARGIN_M: f64 = 0.1;

/// Seed of the never-meet draws: fixed, so that a check is reproducible.
pub(super) const NEVER_MEET_SEED: u64 = 0x0ce1_10fa;

/// What a body belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum BodyRole {
    /// A robot link (its URDF `<collision>` elements).
    Link,
    /// A tool body, on the tip link.
    Tool,
    /// A cell body: fixture, part, floor.
    Cell,
}

/// One body: a name and the solids that make it.
#[derive(Debug, Clone)]
pub struct Body {
    /// Name as reports show it (robot link, tool body or cell body name).
    pub name: String,
    /// Whether it belongs to the robot, the tool or the cell.
    pub role: BodyRole,
    /// Joint frame carrying it (`None`: fixed in the base frame).
    pub frame: Option<usize>,
    pub(crate) solids: Range<usize>,
    /// How far (m) a point of the body moves at most per radian (or metre) of each joint:
    /// the body's distance from each joint axis bounded by the chain's fixed offsets.
    pub(crate) lever: [f64; MAX_DOF],
}

/// A solid placed on its carrying frame.
#[derive(Debug, Clone)]
pub(crate) struct Placed {
    pub(crate) solid: Solid,
    pub(crate) frame: Option<usize>,
    /// Pose of the parry shape in the carrying frame (the base frame for fixed bodies).
    pub(crate) frame_T_shape: Isometry3<f64>,
    /// Bounding-sphere centre in the carrying frame.
    pub(crate) frame_centre: Point3<f64>,
}

/// A body pair that is tested.
#[derive(Debug, Clone)]
pub struct Pair {
    /// Index of the first body in the model.
    pub a: usize,
    /// Index of the second body in the model.
    pub b: usize,
    /// True when the pair may touch on `process: true` segments (an allowed contact).
    pub allowed_in_process: bool,
    /// How deep (m) that allowed contact may go; deeper is a collision (see
    /// [`crate::cell::file::DEFAULT_CONTACT_DEPTH_M`]).
    pub allowed_depth: f64,
}

impl Pair {
    /// True when a distance `d` (m; negative: penetration depth) of this pair raises no
    /// finding at a sample that is (`process`) or is not on a process segment: the pair is
    /// an allowed process contact and `d` is no deeper than its bound.
    #[inline]
    pub fn allowed_at(&self, process: bool, d: f64) -> bool {
        process && self.allowed_in_process && d >= -self.allowed_depth
    }
}

/// Everything that can collide, and which pairs are tested. See the module doc.
#[derive(Debug, Clone)]
pub struct CellModel {
    pub(crate) chain: Chain,
    pub(crate) bodies: Vec<Body>,
    pub(crate) placed: Vec<Placed>,
    pub(crate) pairs: Vec<Pair>,
    /// Distances below this (m) are reported as a clearance warning.
    pub(crate) clearance: f64,
    /// What the model leaves out, for the reports.
    pub(crate) notes: Vec<String>,
}

/// Inputs of [`CellModel::build`].
#[derive(Debug, Clone, Copy)]
pub struct CellInputs<'a> {
    /// The arm, with its URDF collision geometry.
    pub robot: &'a Robot,
    /// Tool bodies in the tip-link frame (`anchor` is `None`).
    pub tool: &'a [BodySpec],
    /// The cell file, if any.
    pub cell: Option<&'a CellFile>,
    /// Work frame in the base frame (where `frame: work` bodies are placed).
    pub base_T_work: Isometry3<f64>,
    /// Clearance limit (m): distances below it are warnings.
    pub clearance: f64,
}

impl CellModel {
    /// Builds the model: reads the robot's collision geometry (meshes relative to the URDF's
    /// folder), mounts the tool on the tip link, places the cell bodies, and lists the pairs:
    /// every robot or tool body against every cell body, and robot bodies against each other
    /// when they are not on the same or neighbouring joint frames, are not listed in
    /// `never_meet`, and come within [`NEVER_MEET_MARGIN_M`] in at least one of
    /// [`NEVER_MEET_SAMPLES`] drawn configurations. Allowed contacts (`when: always`) are not
    /// tested; `when: process` ones are skipped on process samples. Cell bodies are not tested
    /// against each other (they do not move relative to one another during a check).
    pub fn build(inputs: CellInputs) -> Result<CellModel> {
        let robot = inputs.robot;
        let mut model = CellModel {
            chain: robot.chain().clone(),
            bodies: Vec::new(),
            placed: Vec::new(),
            pairs: Vec::new(),
            clearance: inputs.clearance,
            notes: Vec::new(),
        };
        let urdf_folder = robot.source().parent().unwrap_or(Path::new("."));
        let mut bare = Vec::new();
        for link in robot.links() {
            if link.collisions.is_empty() {
                bare.push(link.name.clone());
                continue;
            }
            let mut solids = Vec::new();
            for (k, c) in link.collisions.iter().enumerate() {
                let at = format!("link '{}' <collision> {}", link.name, k + 1);
                let line = link
                    .line
                    .map_or_else(String::new, |l| format!(" (link on line {l})"));
                let primitive =
                    urdf_primitive(&c.geometry, urdf_folder, robot.source(), &at, &line)?;
                let link_T_geom = origin(&c.origin);
                let solid =
                    Solid::new(&primitive, link.frame_T_link * link_T_geom).ok_or_else(|| {
                        Error::robot(
                            robot.source(),
                            &at,
                            format!("mesh encloses no volume (its corners lie on one plane, or no triangle has three distinct corners): give a closed mesh, or a box for a thin plate{line}"),
                        )
                    })?;
                solids.push(solid);
            }
            model.add_body(&link.name, BodyRole::Link, link.frame, solids, robot);
        }
        if !bare.is_empty() {
            model.notes.push(format!(
                "links without collision geometry, not tested: {}",
                bare.join(", ")
            ));
        }
        let tip = robot.links().iter().find(|l| l.name == robot.tip_link());
        let (tip_frame, frame_T_tip) = tip
            .map_or((robot.dof().checked_sub(1), Isometry3::identity()), |l| {
                (l.frame, l.frame_T_link)
            });
        for t in inputs.tool {
            let solid = body_solid(t, frame_T_tip * t.anchor_T_body, None)?;
            model.check_new_name(&t.name, None, &t.field)?;
            model.add_body(&t.name, BodyRole::Tool, tip_frame, vec![solid], robot);
        }
        if let Some(cell) = inputs.cell {
            for b in &cell.bodies {
                let base_T_anchor = match b.anchor {
                    Some(Anchor::Work) => inputs.base_T_work,
                    _ => Isometry3::identity(),
                };
                let solid = body_solid(b, base_T_anchor * b.anchor_T_body, Some(&cell.path))?;
                model.check_new_name(&b.name, Some(&cell.path), &b.field)?;
                model.add_body(&b.name, BodyRole::Cell, None, vec![solid], robot);
            }
        }
        model.make_pairs(inputs.cell, robot)?;
        Ok(model)
    }

    fn check_new_name(&self, name: &str, file: Option<&Path>, field: &str) -> Result<()> {
        if let Some(other) = self.bodies.iter().find(|b| b.name == name) {
            let what = match other.role {
                BodyRole::Link => "a robot link",
                BodyRole::Tool => "a tool body",
                BodyRole::Cell => "a cell body",
            };
            let message =
                format!("'{name}' is already the name of {what}: give every body its own name");
            return Err(match file {
                Some(f) => Error::input(f, format!("{field}.name"), message),
                None => Error::usage(field, message),
            });
        }
        Ok(())
    }

    fn add_body(
        &mut self,
        name: &str,
        role: BodyRole,
        frame: Option<usize>,
        solids: Vec<Solid>,
        robot: &Robot,
    ) {
        let start = self.placed.len();
        let mut reach: f64 = 0.0;
        if solids
            .iter()
            .any(|s| s.surface().is_some_and(|m| !m.is_closed()))
        {
            self.notes.push(format!(
                "the mesh of '{name}' is not closed: it counts as a thin sheet with no inside"
            ));
        }
        for s in solids {
            reach = reach.max(s.reach_from_origin());
            self.placed.push(Placed {
                frame_T_shape: s.body_T_shape,
                frame_centre: Point3::from(s.centre),
                frame,
                solid: s,
            });
        }
        self.bodies.push(Body {
            name: name.to_string(),
            role,
            frame,
            solids: start..self.placed.len(),
            lever: lever(robot, frame, reach),
        });
    }

    fn make_pairs(&mut self, cell: Option<&CellFile>, robot: &Robot) -> Result<()> {
        let find = |name: &str, field: &str, file: &Path| {
            self.bodies
                .iter()
                .position(|b| b.name == name)
                .ok_or_else(|| {
                    let names: Vec<&str> = self.bodies.iter().map(|b| b.name.as_str()).collect();
                    Error::input(
                        file,
                        field,
                        format!(
                            "names '{name}', which is no body of this check: use one of {}",
                            names.join(", ")
                        ),
                    )
                })
        };
        let mut always = Vec::new();
        let mut in_process = Vec::new();
        let mut never = Vec::new();
        if let Some(cell) = cell {
            for c in &cell.allowed {
                let a = find(&c.a, &c.field, &cell.path)?;
                let b = find(&c.b, &c.field, &cell.path)?;
                match c.when {
                    AllowWhen::Always => always.push((a.min(b), a.max(b))),
                    AllowWhen::Process => in_process.push(((a.min(b), a.max(b)), c.depth)),
                }
            }
            for (a, b, field) in &cell.never_meet {
                let ia = find(a, field, &cell.path)?;
                let ib = find(b, field, &cell.path)?;
                if self.bodies[ia].role == BodyRole::Cell || self.bodies[ib].role == BodyRole::Cell
                {
                    return Err(Error::input(
                        &cell.path,
                        field,
                        "lists a cell body: never_meet is for robot link and tool pairs; use allowed_contacts for cell bodies",
                    ));
                }
                never.push((ia.min(ib), ia.max(ib)));
            }
        }
        let mut self_pairs = Vec::new();
        for a in 0..self.bodies.len() {
            for b in a + 1..self.bodies.len() {
                let (ba, bb) = (&self.bodies[a], &self.bodies[b]);
                let both_cell = ba.role == BodyRole::Cell && bb.role == BodyRole::Cell;
                if both_cell || always.contains(&(a, b)) {
                    continue;
                }
                let robot_pair = ba.role != BodyRole::Cell && bb.role != BodyRole::Cell;
                if robot_pair {
                    let fa = ba.frame.map_or(-1, |f| f as i64);
                    let fb = bb.frame.map_or(-1, |f| f as i64);
                    if (fa - fb).abs() <= 1 || never.contains(&(a, b)) {
                        continue;
                    }
                }
                if robot_pair {
                    self_pairs.push(self.pairs.len());
                }
                // A pair listed twice keeps its shallowest bound.
                let depth = in_process
                    .iter()
                    .filter(|(k, _)| *k == (a, b))
                    .map(|&(_, d)| d)
                    .reduce(f64::min);
                self.pairs.push(Pair {
                    a,
                    b,
                    allowed_in_process: depth.is_some(),
                    allowed_depth: depth.unwrap_or(0.0),
                });
            }
        }
        self.filter_never_meet(&self_pairs, robot);
        Ok(())
    }

    /// The bodies, robot links first, then tool bodies, then cell bodies.
    pub fn bodies(&self) -> &[Body] {
        &self.bodies
    }

    /// The tested pairs.
    pub fn pairs(&self) -> &[Pair] {
        &self.pairs
    }

    /// The names of a pair's bodies.
    pub fn pair_names(&self, pair: usize) -> (&str, &str) {
        let p = &self.pairs[pair];
        (&self.bodies[p.a].name, &self.bodies[p.b].name)
    }

    /// Clearance limit (m).
    pub fn clearance(&self) -> f64 {
        self.clearance
    }

    /// What was left out of the test and why (links without geometry, dropped pairs).
    pub fn notes(&self) -> &[String] {
        &self.notes
    }
}

/// The solid of a tool or cell body placed at `frame_T_body`.
fn body_solid(b: &BodySpec, frame_T_body: Isometry3<f64>, file: Option<&Path>) -> Result<Solid> {
    Solid::new(&b.primitive, frame_T_body).ok_or_else(|| {
        let message = format!(
            "the mesh of '{}' encloses no volume (its corners lie on one plane, or no triangle has \
             three distinct corners): give a closed mesh, or a box for a thin plate",
            b.name
        );
        match file {
            Some(f) => Error::input(f, format!("{}.mesh", b.field), message),
            None => Error::usage(format!("{}.mesh", b.field), message),
        }
    })
}

/// A URDF pose as an isometry.
fn origin(p: &urdf_rs::Pose) -> Isometry3<f64> {
    Isometry3::from_parts(
        Translation3::new(p.xyz.0[0], p.xyz.0[1], p.xyz.0[2]),
        crate::rotation::from_rpy(p.rpy.0[0], p.rpy.0[1], p.rpy.0[2]),
    )
}

/// A URDF `<geometry>` as a primitive; meshes are read relative to the URDF's folder.
fn urdf_primitive(
    g: &urdf_rs::Geometry,
    folder: &Path,
    urdf: &Path,
    at: &str,
    line: &str,
) -> Result<Primitive> {
    let p = match g {
        urdf_rs::Geometry::Box { size } => Primitive::Box {
            size: Vector3::new(size.0[0], size.0[1], size.0[2]),
        },
        urdf_rs::Geometry::Cylinder { radius, length } => Primitive::Cylinder {
            radius: *radius,
            length: *length,
        },
        urdf_rs::Geometry::Capsule { radius, length } => Primitive::Capsule {
            radius: *radius,
            length: *length,
        },
        urdf_rs::Geometry::Sphere { radius } => Primitive::Sphere { radius: *radius },
        urdf_rs::Geometry::Mesh { filename, scale } => {
            if filename.starts_with("package://") {
                return Err(Error::robot(
                    urdf,
                    at,
                    format!("mesh '{filename}' is named by a ROS package, which armpath does not resolve: write the path relative to the URDF's folder{line}"),
                ));
            }
            let name = filename.strip_prefix("file://").unwrap_or(filename);
            if !name.to_ascii_lowercase().ends_with(".stl") {
                return Err(Error::robot(
                    urdf,
                    at,
                    format!("mesh '{filename}' is not an STL file, the one mesh format armpath reads: export the collision mesh as STL{line}"),
                ));
            }
            let s = scale.as_ref().map_or(Vector3::repeat(1.0), |s| {
                Vector3::new(s.0[0], s.0[1], s.0[2])
            });
            if !s.iter().all(|v| v.is_finite() && *v > 0.0 && *v <= 1e6) {
                return Err(Error::robot(
                    urdf,
                    at,
                    format!("mesh scale must be positive numbers up to 1e6{line}"),
                ));
            }
            let points = read_stl(&folder.join(name), s, urdf, at).map_err(|e| match e {
                Error::Input {
                    location, message, ..
                } => Error::robot(urdf, location, format!("{message}{line}")),
                other => other,
            })?;
            return Ok(Primitive::Mesh(points));
        }
    };
    p.validate(urdf, at).map_err(|e| match e {
        Error::Input {
            location, message, ..
        } => Error::robot(urdf, location, format!("{message}{line}")),
        other => other,
    })?;
    Ok(p)
}

/// Per-joint lever of a body on `frame` whose points lie within `reach` of that frame's
/// origin: for a revolute joint j at or before the frame, the longest possible distance of a
/// body point from joint j's origin (the fixed offsets from joint j to the frame, the travel
/// of prismatic joints in between, and `reach`), which bounds its distance from the axis; 1
/// for a prismatic joint; 0 for joints after the frame and for fixed bodies.
fn lever(robot: &Robot, frame: Option<usize>, reach: f64) -> [f64; MAX_DOF] {
    let mut out = [0.0; MAX_DOF];
    let Some(f) = frame else { return out };
    let joints = robot.chain().joints();
    let infos = robot.joints();
    for j in 0..=f.min(joints.len().saturating_sub(1)) {
        if joints[j].kind.is_prismatic() {
            out[j] = 1.0;
            continue;
        }
        let mut length = reach;
        for joint in joints.iter().take(f + 1).skip(j + 1) {
            length += joint.parent_T_joint.translation.vector.norm();
        }
        for info in infos.iter().take(f + 1).skip(j + 1) {
            if info.kind.is_prismatic() {
                length += info.lower.abs().max(info.upper.abs());
            }
        }
        out[j] = length;
    }
    out
}
