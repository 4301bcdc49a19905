//! URDF → [`Robot`]: find the chain from the root link to the tip link, check every joint on
//! it, fold fixed joints into the transforms and compile the flat [`Chain`].

use super::chain::{Chain, ChainJoint, JointKind, MAX_DOF};
use super::{JointInfo, Robot};
use crate::error::{Error, Result};
use nalgebra::{Isometry3, Translation3, Unit, Vector3};
use std::collections::{HashMap, HashSet};
use std::io::Read;
use std::path::Path;

/// Largest URDF file armpath reads (bytes). Real arm descriptions without meshes are a few
/// hundred kB; the cap keeps a wrong file (an image, a log) from being read whole.
const MAX_URDF_BYTES: u64 = 64 * 1024 * 1024;

/// Deepest element nesting accepted in a URDF. A URDF needs 5 levels (robot > link > visual >
/// geometry > mesh) and simulator extensions a few more, so 64 leaves ample room. The limit
/// exists because the XML reader's work grows with the square of the depth (20,000 levels
/// take a second, 100,000 half a minute) and it recurses once per level; a linear pre-scan
/// refuses such a file instead of hanging.
const MAX_XML_DEPTH: usize = 64;

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
    // Read through a cap as well: a device or pipe (`/dev/zero`) reports length 0 but may
    // never end.
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
    if let Err((line, message)) = check_xml_structure(text) {
        return Err(Error::robot(path, format!("line {line}"), message));
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

/// Linear scan of the XML element structure: every element closed, in order, and nested at
/// most [`MAX_XML_DEPTH`] deep. Returns the line (1-based) and a message for the first
/// problem. It runs before the XML reader because that reader reports a cut-short file
/// without a line ("No elements found") and is slow on deep nesting (see [`MAX_XML_DEPTH`]).
///
/// The scan knows comments, CDATA, processing instructions, `<!DOCTYPE ...>` (with an
/// internal subset in brackets) and quoted attribute values; anything else inside `<...>`
/// is left to the XML reader, so a well-formed file always passes.
fn check_xml_structure(text: &str) -> std::result::Result<(), (usize, String)> {
    let b = text.as_bytes();
    let line_at = |pos: usize| {
        1 + b[..pos.min(b.len())]
            .iter()
            .filter(|&&c| c == b'\n')
            .count()
    };
    // Open elements: name and the byte where the tag starts (lines are counted only for
    // messages, so the scan stays linear).
    let mut open: Vec<(&str, usize)> = Vec::new();
    let find = |from: usize, pat: &str| text[from..].find(pat).map(|i| from + i);
    let mut i = 0;
    while let Some(lt) = find(i, "<") {
        let rest = &text[lt..];
        let unclosed = |what: &str| {
            (
                line_at(lt),
                format!(
                    "is not valid URDF: {what} starting here is never closed: the file is cut \
                     short or a `>` is missing"
                ),
            )
        };
        if rest.starts_with("<!--") {
            i = find(lt + 4, "-->").ok_or_else(|| unclosed("the comment"))? + 3;
        } else if rest.starts_with("<![CDATA[") {
            i = find(lt + 9, "]]>").ok_or_else(|| unclosed("the CDATA section"))? + 3;
        } else if rest.starts_with("<?") {
            i = find(lt + 2, "?>").ok_or_else(|| unclosed("the `<?...?>` instruction"))? + 2;
        } else if rest.starts_with("<!") {
            // DOCTYPE: `>` ends it unless inside the bracketed internal subset or quotes.
            let (mut j, mut depth, mut quote) = (lt + 2, 0usize, None);
            loop {
                match (b.get(j), quote) {
                    (None, _) => return Err(unclosed("the `<!...>` declaration")),
                    (Some(&c), Some(q)) if c == q => quote = None,
                    (Some(_), Some(_)) => {}
                    (Some(&c), None) if c == b'"' || c == b'\'' => quote = Some(c),
                    (Some(b'['), None) => depth += 1,
                    (Some(b']'), None) => depth = depth.saturating_sub(1),
                    (Some(b'>'), None) if depth == 0 => break,
                    _ => {}
                }
                j += 1;
            }
            i = j + 1;
        } else {
            let closing = rest.starts_with("</");
            let name_start = lt + if closing { 2 } else { 1 };
            let name_end = text[name_start..]
                .find(|c: char| c.is_whitespace() || c == '>' || c == '/')
                .map_or(b.len(), |k| name_start + k);
            let name = &text[name_start..name_end];
            // A name that starts with ':' has an empty namespace prefix, which namespace-aware
            // XML forbids; the XML reader accepts it and then panics when it writes the
            // element back out, so it is refused here.
            let colon_name = || {
                (
                    line_at(lt),
                    "is not valid URDF: an element or attribute name in this tag starts with \
                     ':': remove the colon or write the prefix before it"
                        .to_string(),
                )
            };
            if name.starts_with(':') {
                return Err(colon_name());
            }
            // Find the tag's end outside quoted attribute values.
            let (mut j, mut quote) = (name_end, None);
            loop {
                match (b.get(j), quote) {
                    (None, _) => {
                        return Err(unclosed(&format!(
                            "the tag <{}{name}",
                            if closing { "/" } else { "" }
                        )))
                    }
                    (Some(&c), Some(q)) if c == q => quote = None,
                    (Some(_), Some(_)) => {}
                    (Some(&c), None) if c == b'"' || c == b'\'' => quote = Some(c),
                    (Some(b'>'), None) => break,
                    // An attribute name begins after whitespace or a closing quote.
                    (Some(b':'), None)
                        if matches!(b[j - 1], b' ' | b'\t' | b'\r' | b'\n' | b'"' | b'\'') =>
                    {
                        return Err(colon_name())
                    }
                    _ => {}
                }
                j += 1;
            }
            let self_closing = b[j - 1] == b'/' && j - 1 > lt;
            if closing {
                match open.pop() {
                    Some((o, _)) if o == name => {}
                    Some((o, at)) => {
                        return Err((
                            line_at(lt),
                            format!(
                                "is not valid URDF: </{name}> closes <{o}>, opened on line {}: \
                                 close the elements in the order they were opened",
                                line_at(at)
                            ),
                        ))
                    }
                    None => {
                        return Err((
                            line_at(lt),
                            format!(
                                "is not valid URDF: </{name}> closes no open element: remove it"
                            ),
                        ))
                    }
                }
            } else if !self_closing && !name.is_empty() {
                open.push((name, lt));
                if open.len() > MAX_XML_DEPTH {
                    return Err((
                        line_at(lt),
                        format!(
                            "elements nest more than {MAX_XML_DEPTH} deep here (a URDF needs \
                             about 5): check that this is a robot description"
                        ),
                    ));
                }
            }
            i = j + 1;
        }
    }
    match open.last() {
        Some((name, at)) => Err((
            line_at(*at),
            format!(
                "is not valid URDF: <{name}> opened here is never closed: the file is cut short \
                 or `</{name}>` is missing"
            ),
        )),
        None => Ok(()),
    }
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
                    format!(
                        "is not a link of this robot: choose one of its links: {}",
                        all.join(", ")
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

#[cfg(test)]
mod tests {
    use super::*;

    fn scan(text: &str) -> std::result::Result<(), (usize, String)> {
        check_xml_structure(text)
    }

    #[test]
    fn well_formed_xml_passes_the_structure_scan() {
        // source: XML 1.0 (W3C), sections 2.5 comments, 2.7 CDATA, 2.6 processing
        // instructions, 2.8 document type declaration, 3.1 start-tags (quoted attribute
        // values may hold '>' and '/')
        for text in [
            include_str!("../../robots/arm6.urdf"),
            include_str!("../../robots/arm7.urdf"),
            "<robot name=\"r\"/>",
            "<?xml version=\"1.0\"?><!-- a <b> c --><robot name=\"r\"><link name=\"a\"/></robot>",
            "<robot name='a>b/'><link name=\"x/>\"></link></robot>",
            "<!DOCTYPE robot [<!ELEMENT robot ANY> <!ATTLIST robot name CDATA \">\">]><robot/>",
            "<robot><![CDATA[</robot> <x>]]></robot>",
            "<robot\n  name=\"r\"\n><link\nname=\"a\"\n/></robot >",
        ] {
            assert_eq!(scan(text), Ok(()), "{text}");
        }
    }

    #[test]
    fn structure_faults_are_located() {
        // source: the inputs below, whose faulty line is known by construction
        let cut =
            "<robot name=\"r\">\n<link name=\"a\"/>\n<joint name=\"j\">\n<parent link=\"a\"/>\n";
        let (line, msg) = scan(cut).unwrap_err();
        assert_eq!(line, 3);
        assert!(
            msg.contains("<joint>") && msg.contains("never closed"),
            "{msg}"
        );
        let (line, msg) = scan("<robot>\n<link name=\"a").unwrap_err();
        assert_eq!(line, 2);
        assert!(msg.contains("<link") && msg.contains("cut short"), "{msg}");
        let (line, msg) = scan("<robot>\n<link>\n</joint>\n</robot>").unwrap_err();
        assert_eq!(line, 3);
        assert!(
            msg.contains("</joint> closes <link>, opened on line 2"),
            "{msg}"
        );
        let (line, msg) = scan("<robot/>\n</robot>").unwrap_err();
        assert_eq!(line, 2);
        assert!(msg.contains("closes no open element"), "{msg}");
        let (line, msg) = scan("<robot>\n<!-- unfinished\n</robot>").unwrap_err();
        assert_eq!(line, 2);
        assert!(msg.contains("comment"), "{msg}");
        // Names with an empty namespace prefix (found by the `urdf` fuzz target: the XML
        // reader panicked on `xmlns="0":upper="0.5"`).
        for text in [
            "<robot xmlns=\"urn:x\">\n<limit xmlns=\"0\":upper=\"0.5\"/></robot>",
            "<robot xmlns=\"urn:x\">\n<limit :upper=\"0.5\"/></robot>",
            "<robot>\n<:limit/></robot>",
        ] {
            let (line, msg) = scan(text).unwrap_err();
            assert_eq!(line, 2, "{text}");
            assert!(msg.contains("starts with ':'"), "{msg}");
        }
        // A colon inside a name or a value is fine.
        assert_eq!(
            scan("<robot xmlns:xacro=\"urn:x\" a=\":b\"><xacro:p/></robot>"),
            Ok(())
        );
    }

    #[test]
    fn nesting_beyond_the_limit_is_refused_in_linear_time() {
        // source: MAX_XML_DEPTH; one level below it passes, one above fails
        let nest = |n: usize| format!("{}{}", "<a>".repeat(n), "</a>".repeat(n));
        assert_eq!(scan(&nest(MAX_XML_DEPTH)), Ok(()));
        let (line, msg) = scan(&nest(MAX_XML_DEPTH + 1)).unwrap_err();
        assert_eq!(line, 1);
        assert!(msg.contains("nest more than 64"), "{msg}");
        // A million levels are refused at once rather than parsed.
        let start = std::time::Instant::now();
        assert!(scan(&nest(1_000_000)).is_err());
        assert!(start.elapsed() < std::time::Duration::from_secs(2));
    }
}
