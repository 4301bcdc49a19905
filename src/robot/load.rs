//! URDF → [`Robot`]: find the chain from the root link to the tip link, check every joint on
//! it, fold fixed joints into the transforms and compile the flat [`Chain`].

use super::chain::{Chain, ChainJoint, JointKind, MAX_DOF};
use super::{JointInfo, Robot};
use crate::error::{Error, Result};
use nalgebra::{Isometry3, Translation3, Unit, Vector3};
use std::collections::{HashMap, HashSet};
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
    let meta = std::fs::metadata(path).map_err(|source| Error::Io {
        path: path.into(),
        action: "reading the robot description",
        source,
    })?;
    if meta.is_dir() {
        return Err(Error::robot(
            path,
            "file",
            "is a folder: pass the robot's .urdf file",
        ));
    }
    if meta.len() > MAX_URDF_BYTES {
        return Err(Error::robot(
            path,
            "file",
            format!(
                "is {} MB, larger than any robot description armpath accepts ({} MB): check the file name",
                meta.len() / 1_000_000,
                MAX_URDF_BYTES / 1_000_000
            ),
        ));
    }
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.into(),
        action: "reading the robot description",
        source,
    })?;
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
    let urdf = urdf_rs::read_from_string(text).map_err(|e| {
        Error::robot(
            path,
            "XML",
            format!(
                "is not valid URDF ({e}): check that the file is a complete <robot> description"
            ),
        )
    })?;
    build(&urdf, path, tip)
}

fn vec3(v: &urdf_rs::Vec3) -> Vector3<f64> {
    Vector3::new(v.0[0], v.0[1], v.0[2])
}

fn origin_of(joint: &urdf_rs::Joint, path: &Path) -> Result<Isometry3<f64>> {
    let xyz = vec3(&joint.origin.xyz);
    let rpy = vec3(&joint.origin.rpy);
    if !(xyz.iter().chain(rpy.iter()).all(|v| v.is_finite())) {
        return Err(Error::robot(
            path,
            format!("joint '{}' <origin>", joint.name),
            "has a value that is not a finite number: fix xyz / rpy",
        ));
    }
    Ok(Isometry3::from_parts(
        Translation3::from(xyz),
        crate::rotation::from_rpy(rpy.x, rpy.y, rpy.z),
    ))
}

fn build(urdf: &urdf_rs::Robot, path: &Path, tip: Option<&str>) -> Result<Robot> {
    let links: HashSet<&str> = urdf.links.iter().map(|l| l.name.as_str()).collect();
    if links.is_empty() {
        return Err(Error::robot(
            path,
            format!("robot '{}'", urdf.name),
            "has no <link>: a URDF arm needs links joined by joints",
        ));
    }
    // child link -> joint that moves it; parent link -> child joints.
    let mut joint_of_child: HashMap<&str, &urdf_rs::Joint> = HashMap::new();
    let mut has_children: HashSet<&str> = HashSet::new();
    for j in &urdf.joints {
        for (role, link) in [("parent", &j.parent.link), ("child", &j.child.link)] {
            if !links.contains(link.as_str()) {
                return Err(Error::robot(
                    path,
                    format!("joint '{}'", j.name),
                    format!("names {role} link '{link}', which is not defined: add the <link> or fix the name"),
                ));
            }
        }
        if joint_of_child.insert(j.child.link.as_str(), j).is_some() {
            return Err(Error::robot(
                path,
                format!("link '{}'", j.child.link),
                "is the child of two joints: a URDF is a tree, each link has one parent joint",
            ));
        }
        has_children.insert(j.parent.link.as_str());
    }
    let mut roots: Vec<&str> = links
        .iter()
        .copied()
        .filter(|l| !joint_of_child.contains_key(l))
        .collect();
    roots.sort_unstable();
    if roots.len() != 1 {
        return Err(Error::robot(
            path,
            format!("robot '{}'", urdf.name),
            if roots.is_empty() {
                "has no root link (the joints form a loop): a URDF must be a tree".to_string()
            } else {
                format!(
                    "has several root links ({}): join them with joints into one tree",
                    roots.join(", ")
                )
            },
        ));
    }
    let root = roots[0];
    let mut leaves: Vec<&str> = links
        .iter()
        .copied()
        .filter(|l| !has_children.contains(l))
        .collect();
    leaves.sort_unstable();
    let tip_link: &str = match tip {
        Some(t) => {
            if !links.contains(t) {
                let mut all: Vec<&str> = links.iter().copied().collect();
                all.sort_unstable();
                return Err(Error::robot(
                    path,
                    format!("tip link '{t}'"),
                    format!("is not a link of this robot; links: {}", all.join(", ")),
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
    // Walk from the tip up to the root, then reverse.
    let mut path_joints: Vec<&urdf_rs::Joint> = Vec::new();
    let mut link = tip_link;
    while let Some(j) = joint_of_child.get(link) {
        path_joints.push(j);
        link = j.parent.link.as_str();
        if path_joints.len() > urdf.joints.len() {
            return Err(Error::robot(
                path,
                format!("link '{link}'"),
                "lies on a loop of joints: a URDF must be a tree",
            ));
        }
    }
    path_joints.reverse();

    let mut joints = Vec::new();
    let mut infos = Vec::new();
    let mut pending = Isometry3::identity(); // fixed transforms since the last movable joint
    for j in path_joints {
        let origin = origin_of(j, path)?;
        let at = || format!("joint '{}'", j.name);
        let kind = match j.joint_type {
            urdf_rs::JointType::Fixed => {
                pending *= origin;
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
                         replace it or choose a tip link before it"
                    ),
                ))
            }
        };
        if j.mimic.is_some() {
            return Err(Error::robot(
                path,
                at(),
                "is a mimic joint, which armpath does not model: remove the <mimic> or choose a tip link before it",
            ));
        }
        let axis_raw = vec3(&j.axis.xyz);
        if !axis_raw.iter().all(|v| v.is_finite()) || axis_raw.norm() < 1e-9 {
            return Err(Error::robot(
                path,
                format!("{} <axis>", at()),
                "is zero or not finite: give a direction such as xyz=\"0 0 1\"",
            ));
        }
        let axis = Unit::new_normalize(axis_raw);
        let lim = &j.limit;
        let (lower, upper) = if kind == JointKind::Continuous {
            (f64::NEG_INFINITY, f64::INFINITY)
        } else {
            if lim.lower == 0.0 && lim.upper == 0.0 && lim.velocity == 0.0 && lim.effort == 0.0 {
                return Err(Error::robot(
                    path,
                    format!("{} <limit>", at()),
                    "is missing (or all zero): URDF requires <limit lower upper effort velocity> on revolute and prismatic joints",
                ));
            }
            if !(lim.lower.is_finite() && lim.upper.is_finite()) || lim.lower > lim.upper {
                return Err(Error::robot(
                    path,
                    format!("{} <limit>", at()),
                    format!(
                        "lower = {} and upper = {} do not form a range: give finite values with lower <= upper",
                        lim.lower, lim.upper
                    ),
                ));
            }
            (lim.lower, lim.upper)
        };
        if !(lim.velocity.is_finite() && lim.velocity > 0.0) {
            return Err(Error::robot(
                path,
                format!("{} <limit velocity>", at()),
                format!(
                    "is {}: armpath checks joint speeds against it, give the joint's maximum speed (rad/s or m/s, > 0)",
                    lim.velocity
                ),
            ));
        }
        joints.push(ChainJoint {
            parent_T_joint: pending * origin,
            axis,
            kind,
        });
        pending = Isometry3::identity();
        infos.push(JointInfo {
            name: j.name.clone(),
            kind,
            lower,
            upper,
            velocity: lim.velocity,
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
    ))
}
