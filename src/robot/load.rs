//! URDF → [`Robot`]: find the chain from the root link to the tip link, check every joint on
//! it, fold fixed joints into the transforms and compile the flat [`Chain`].

use super::chain::{Chain, ChainJoint, JointKind, MAX_DOF};
use super::ranges::{effort_problem, limit_problem, origin_problem, show, velocity_problem};
use super::xml::{survey, JointSite, Sites};
use super::{JointInfo, LinkMount, Robot};
use crate::error::{Error, Result};
use nalgebra::{Isometry3, Translation3, Unit, Vector3};
use std::collections::{HashMap, HashSet};
use std::io::Read;
use std::path::Path;

/// Largest URDF file armpath reads (bytes). Real arm descriptions without meshes are a few
/// hundred kB; the cap keeps a wrong file (an image, a log) from being read whole.
const MAX_URDF_BYTES: u64 = 64 * 1024 * 1024;

/// Load a robot from a URDF file; `tip` picks the tip link (default: the only leaf link).
pub fn load_urdf(path: &Path, tip: Option<&str>) -> Result<Robot> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .unwrap_or("")
        .to_ascii_lowercase();
    if ext == "xacro" {
        return Err(Error::robot(
            path,
            "file type",
            "this is a xacro macro file, not URDF: expand it to plain URDF first \
             (e.g. with the xacro tool of your ROS installation) and pass the .urdf file",
        ));
    }
    let meta = std::fs::metadata(path).map_err(|e| io_error(path, e))?;
    if meta.is_dir() {
        return Err(Error::robot(
            path,
            "file",
            "is a folder: pass the robot's .urdf file",
        ));
    }
    if !meta.is_file() {
        // A pipe, socket or device may block the read or never end.
        return Err(Error::robot(
            path,
            "file",
            "is not a regular file but a pipe, socket or device, which armpath does not read \
             (it may block or never end): save the robot description to a .urdf file and pass \
             that (check the file name)",
        ));
    }
    let too_large = || {
        Error::robot(
            path,
            "file",
            format!(
                "is larger than any robot description armpath accepts ({} MB): check the file name",
                MAX_URDF_BYTES / 1_000_000
            ),
        )
    };
    if meta.len() > MAX_URDF_BYTES {
        return Err(too_large());
    }
    // Read through a cap as well: the file may grow while it is read.
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_URDF_BYTES + 1).read_to_end(&mut bytes))
        .map_err(|e| io_error(path, e))?;
    if bytes.len() as u64 > MAX_URDF_BYTES {
        return Err(too_large());
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        Error::robot(
            path,
            format!("byte {}", e.utf8_error().valid_up_to()),
            "is not UTF-8 text: pass a URDF (XML) file",
        )
    })?;
    from_urdf_str(&text, path, tip)
}

/// Load a robot from URDF text; `path` is used in messages only.
pub fn from_urdf_str(text: &str, path: &Path, tip: Option<&str>) -> Result<Robot> {
    if text.trim().is_empty() {
        return Err(Error::robot(
            path,
            "file",
            "is empty: pass a URDF file with a <robot> element",
        ));
    }
    if text.contains("<!ENTITY") {
        // urdf-rs does not expand entities, but a description that declares them is not
        // plain URDF and may be an entity bomb: refuse it clearly.
        return Err(Error::robot(
            path,
            "DOCTYPE",
            "declares XML entities, which URDF does not use: remove the <!DOCTYPE>/<!ENTITY> block",
        ));
    }
    let sites = survey(text, path)?;
    let urdf = urdf_rs::read_from_string(text).map_err(|e| {
        Error::robot(
            path,
            "XML",
            format!(
                "is not valid URDF ({e}): check that the file is a complete <robot> description"
            ),
        )
    })?;
    build(&urdf, path, tip, &sites)
}

/// A failure to open or read the robot file, with what to do about it.
fn io_error(path: &Path, e: std::io::Error) -> Error {
    let message = if e.kind() == std::io::ErrorKind::NotFound {
        "does not exist: check the file name and folder (a `robot:` in a path file is relative \
         to the path file's folder)"
            .to_string()
    } else {
        format!("cannot be read ({e}): check that the file is readable")
    };
    Error::robot(path, "file", message)
}

fn vec3(v: &urdf_rs::Vec3) -> Vector3<f64> {
    Vector3::new(v.0[0], v.0[1], v.0[2])
}

/// ` (line N)` when the line is known, for the end of a message.
fn on_line(line: Option<usize>) -> String {
    line.map_or_else(String::new, |l| format!(" (line {l})"))
}

/// ` on line N` when the line is known, for items in a list.
fn on_line_in_list(line: Option<usize>) -> String {
    line.map_or_else(String::new, |l| format!(" on line {l}"))
}

/// An axis whose largest component is below this is taken as zero: a typo, not a direction.
const MIN_AXIS_COMPONENT: f64 = 1e-9;

/// The unit vector along `v`, or `None` when `v` is zero or not finite. Scaling by the largest
/// component first keeps the norm from overflowing (`1e200 1e200 0`) or underflowing.
fn unit_axis(v: Vector3<f64>) -> Option<Unit<Vector3<f64>>> {
    let largest = v.amax();
    (v.iter().all(|c| c.is_finite()) && largest >= MIN_AXIS_COMPONENT)
        .then(|| Unit::new_normalize(v / largest))
}

fn origin_of(
    joint: &urdf_rs::Joint,
    path: &Path,
    site: Option<JointSite>,
) -> Result<Isometry3<f64>> {
    let xyz = vec3(&joint.origin.xyz);
    let rpy = vec3(&joint.origin.rpy);
    let problem = if !(xyz.iter().chain(rpy.iter()).all(|v| v.is_finite())) {
        Some("has a value that is not a finite number: fix xyz / rpy".to_string())
    } else {
        origin_problem(&joint.origin.xyz.0, &joint.origin.rpy.0)
    };
    if let Some(message) = problem {
        let line = site.and_then(|s| s.origin.or(Some(s.line)));
        return Err(Error::robot(
            path,
            format!("joint '{}' <origin>", joint.name),
            format!("{message}{}", on_line(line)),
        ));
    }
    Ok(Isometry3::from_parts(
        Translation3::from(xyz),
        crate::rotation::from_rpy(rpy.x, rpy.y, rpy.z),
    ))
}

/// The joints of a loop met by walking up from `start` (each link's parent joint in turn),
/// listed parent to child; empty when the walk reaches a root instead.
fn loop_above<'a>(
    start: &'a str,
    joint_of_child: &HashMap<&'a str, &'a urdf_rs::Joint>,
) -> Vec<&'a urdf_rs::Joint> {
    let mut seen: HashMap<&str, usize> = HashMap::new();
    let mut walk: Vec<&urdf_rs::Joint> = Vec::new();
    let mut link = start;
    loop {
        if let Some(&i) = seen.get(link) {
            let mut cycle = walk.split_off(i);
            cycle.reverse();
            return cycle;
        }
        seen.insert(link, walk.len());
        let Some(j) = joint_of_child.get(link) else {
            return Vec::new();
        };
        walk.push(j);
        link = j.parent.link.as_str();
    }
}

fn build(urdf: &urdf_rs::Robot, path: &Path, tip: Option<&str>, sites: &Sites) -> Result<Robot> {
    let links: HashSet<&str> = urdf.links.iter().map(|l| l.name.as_str()).collect();
    let robot_at = || format!("robot '{}'", urdf.name);
    if links.is_empty() {
        return Err(Error::robot(
            path,
            robot_at(),
            "has no <link>: a URDF arm needs links joined by joints",
        ));
    }
    let joint_line = |j: &urdf_rs::Joint| sites.joint(&j.name).map(|s| s.line);
    let link_line = |l: &str| sites.link(l);
    // child link -> joint that moves it; parent link -> child joints.
    let mut joint_of_child: HashMap<&str, &urdf_rs::Joint> = HashMap::new();
    let mut children: HashMap<&str, Vec<&str>> = HashMap::new();
    for j in &urdf.joints {
        let at_joint = || format!("joint '{}'", j.name);
        for (role, link) in [("parent", &j.parent.link), ("child", &j.child.link)] {
            if !links.contains(link.as_str()) {
                return Err(Error::robot(
                    path,
                    at_joint(),
                    format!(
                        "names {role} link '{link}', which is not defined: add the <link> or \
                         fix the name{}",
                        on_line(joint_line(j))
                    ),
                ));
            }
        }
        if j.parent.link == j.child.link {
            return Err(Error::robot(
                path,
                at_joint(),
                format!(
                    "names link '{}' as both parent and child: a joint joins two different \
                     links, fix the parent or the child{}",
                    j.child.link,
                    on_line(joint_line(j))
                ),
            ));
        }
        if let Some(other) = joint_of_child.insert(j.child.link.as_str(), j) {
            return Err(Error::robot(
                path,
                format!("link '{}'", j.child.link),
                format!(
                    "is the child of two joints ('{}'{} and '{}'{}): a URDF is a tree, each \
                     link has one parent joint",
                    other.name,
                    on_line_in_list(joint_line(other)),
                    j.name,
                    on_line_in_list(joint_line(j))
                ),
            ));
        }
        children
            .entry(j.parent.link.as_str())
            .or_default()
            .push(j.child.link.as_str());
    }
    let mut sorted_links: Vec<&str> = links.iter().copied().collect();
    sorted_links.sort_unstable();
    let loop_error = |cycle: &[&urdf_rs::Joint], detached_from: Option<&str>| {
        let list: Vec<String> = cycle
            .iter()
            .map(|j| format!("'{}'{}", j.name, on_line_in_list(joint_line(j))))
            .collect();
        Error::robot(
            path,
            robot_at(),
            format!(
                "{} the joints {} form a loop: a URDF must be a tree, remove one of these joints",
                match detached_from {
                    None => "has no root link:".to_string(),
                    Some(root) => format!("has links detached from the root link '{root}':"),
                },
                list.join(" → ")
            ),
        )
    };
    let mut roots: Vec<&str> = sorted_links
        .iter()
        .copied()
        .filter(|l| !joint_of_child.contains_key(l))
        .collect();
    roots.sort_by_key(|l| link_line(l));
    let root = match roots[..] {
        [] => {
            return Err(loop_error(
                &loop_above(sorted_links[0], &joint_of_child),
                None,
            ))
        }
        [root] => root,
        _ => {
            let list: Vec<String> = roots
                .iter()
                .map(|l| format!("{l}{}", on_line_in_list(link_line(l))))
                .collect();
            return Err(Error::robot(
                path,
                robot_at(),
                format!(
                    "has several root links ({}): join them with joints into one tree, or \
                     remove the links no joint uses",
                    list.join(", ")
                ),
            ));
        }
    };
    // Every link must hang below the root; one that does not lies on (or below) a loop.
    let mut reached: HashSet<&str> = HashSet::from([root]);
    let mut todo = vec![root];
    while let Some(l) = todo.pop() {
        for &c in children.get(l).into_iter().flatten() {
            if reached.insert(c) {
                todo.push(c);
            }
        }
    }
    if let Some(&stray) = sorted_links.iter().find(|l| !reached.contains(*l)) {
        return Err(loop_error(&loop_above(stray, &joint_of_child), Some(root)));
    }
    let mut leaves: Vec<&str> = sorted_links
        .iter()
        .copied()
        .filter(|l| !children.contains_key(l))
        .collect();
    leaves.sort_unstable();
    let tip_link: &str = match tip {
        Some(t) => {
            if !links.contains(t) {
                return Err(Error::robot(
                    path,
                    format!("tip link '{t}'"),
                    format!(
                        "is not a link of this robot: choose one of its links: {}",
                        sorted_links.join(", ")
                    ),
                ));
            }
            t
        }
        None => {
            if leaves.len() != 1 {
                return Err(Error::robot(
                    path,
                    "tip link",
                    format!(
                        "the robot has several leaf links ({}): choose the tip with --tip LINK or `tip:` in the path file",
                        leaves.join(", ")
                    ),
                ));
            }
            leaves[0]
        }
    };
    // Walk from the tip up to the root (it ends there: every link hangs below the root), then
    // reverse.
    let mut path_joints: Vec<&urdf_rs::Joint> = Vec::new();
    let mut link = tip_link;
    while let Some(j) = joint_of_child.get(link) {
        path_joints.push(j);
        link = j.parent.link.as_str();
    }
    path_joints.reverse();

    let mut joints = Vec::new();
    let mut infos = Vec::new();
    let mut pending = Isometry3::identity(); // fixed transforms since the last movable joint
    let mut mounts = vec![mount(urdf, root, None, pending, sites)];
    for j in path_joints {
        let site = sites.joint(&j.name);
        let origin = origin_of(j, path, site)?;
        let at = || format!("joint '{}'", j.name);
        let line = site.map(|s| s.line);
        let limit_line = on_line(site.and_then(|s| s.limit).or(line));
        let kind = match j.joint_type {
            urdf_rs::JointType::Fixed => {
                pending *= origin;
                let frame = joints.len().checked_sub(1);
                mounts.push(mount(urdf, &j.child.link, frame, pending, sites));
                continue;
            }
            urdf_rs::JointType::Revolute => JointKind::Revolute,
            urdf_rs::JointType::Continuous => JointKind::Continuous,
            urdf_rs::JointType::Prismatic => JointKind::Prismatic,
            ref other => {
                return Err(Error::robot(
                    path,
                    at(),
                    format!(
                        "is of type {other:?}, which armpath does not model (it handles revolute, continuous, prismatic and fixed): \
                         replace it or choose a tip link before it{}",
                        on_line(line)
                    ),
                ))
            }
        };
        if j.mimic.is_some() {
            return Err(Error::robot(
                path,
                at(),
                format!(
                    "is a mimic joint, which armpath does not model: remove the <mimic> or \
                     choose a tip link before it{}",
                    on_line(line)
                ),
            ));
        }
        let axis = unit_axis(vec3(&j.axis.xyz)).ok_or_else(|| {
            Error::robot(
                path,
                format!("{} <axis>", at()),
                format!(
                    "is zero or not finite: give a direction such as xyz=\"0 0 1\"{}",
                    on_line(site.and_then(|s| s.axis).or(line))
                ),
            )
        })?;
        let lim = &j.limit;
        let (lower, upper) = if kind == JointKind::Continuous {
            (f64::NEG_INFINITY, f64::INFINITY)
        } else {
            if lim.lower == 0.0 && lim.upper == 0.0 && lim.velocity == 0.0 && lim.effort == 0.0 {
                return Err(Error::robot(
                    path,
                    format!("{} <limit>", at()),
                    format!(
                        "is missing (or all zero): URDF requires <limit lower upper effort \
                         velocity> on revolute and prismatic joints{}",
                        on_line(line)
                    ),
                ));
            }
            let problem = if !(lim.lower.is_finite() && lim.upper.is_finite())
                || lim.lower > lim.upper
            {
                Some(format!(
                    "lower = {} and upper = {} do not form a range: give finite values with lower <= upper",
                    show(lim.lower),
                    show(lim.upper)
                ))
            } else {
                limit_problem(kind, lim.lower, lim.upper)
            };
            if let Some(message) = problem {
                return Err(Error::robot(
                    path,
                    format!("{} <limit>", at()),
                    format!("{message}{limit_line}"),
                ));
            }
            (lim.lower, lim.upper)
        };
        for (field, problem) in [
            ("velocity", velocity_problem(kind, lim.velocity)),
            ("effort", effort_problem(lim.effort)),
        ] {
            if let Some(message) = problem {
                return Err(Error::robot(
                    path,
                    format!("{} <limit {field}>", at()),
                    format!("{message}{limit_line}"),
                ));
            }
        }
        joints.push(ChainJoint {
            parent_T_joint: pending * origin,
            axis,
            kind,
        });
        pending = Isometry3::identity();
        mounts.push(mount(
            urdf,
            &j.child.link,
            Some(joints.len() - 1),
            pending,
            sites,
        ));
        infos.push(JointInfo {
            name: j.name.clone(),
            kind,
            lower,
            upper,
            velocity: lim.velocity,
            acceleration: None,
        });
    }
    if joints.is_empty() {
        return Err(Error::robot(
            path,
            format!("chain {root} → {tip_link}"),
            "has no movable joint: choose another tip link or check the joint types",
        ));
    }
    if joints.len() > MAX_DOF {
        return Err(Error::robot(
            path,
            format!("chain {root} → {tip_link}"),
            format!(
                "has {} movable joints; armpath handles up to {MAX_DOF}: choose a tip link nearer the base",
                joints.len()
            ),
        ));
    }
    Ok(Robot::from_parts(
        urdf.name.clone(),
        path.to_path_buf(),
        root.to_string(),
        tip_link.to_string(),
        infos,
        Chain::new(joints, pending),
        mounts,
    ))
}

/// The mount of link `name` on joint frame `frame` at `frame_T_link`, with its collisions.
fn mount(
    urdf: &urdf_rs::Robot,
    name: &str,
    frame: Option<usize>,
    frame_T_link: Isometry3<f64>,
    sites: &Sites,
) -> LinkMount {
    let collisions = urdf
        .links
        .iter()
        .find(|l| l.name == name)
        .map(|l| l.collision.clone())
        .unwrap_or_default();
    LinkMount {
        name: name.to_string(),
        frame,
        frame_T_link,
        collisions,
        line: sites.link(name),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn huge_and_tiny_axes_keep_their_direction() {
        // source: common practice (a direction scaled by any positive factor is unchanged)
        let s = std::f64::consts::FRAC_1_SQRT_2;
        for scale in [1e200, 1.0, 1e-8] {
            let a = unit_axis(Vector3::new(scale, scale, 0.0)).unwrap();
            assert_relative_eq!(a.into_inner(), Vector3::new(s, s, 0.0), epsilon = 1e-15);
        }
        assert!(unit_axis(Vector3::new(1e-10, 0.0, 0.0)).is_none());
        assert!(unit_axis(Vector3::new(f64::INFINITY, 0.0, 0.0)).is_none());
        assert!(unit_axis(Vector3::new(f64::NAN, 1.0, 0.0)).is_none());
    }
}
