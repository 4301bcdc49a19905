//! URDF loading: the chain, the facts derived from it and every refusal.

use armpath::robot::{from_urdf_str, load_urdf, spherical_wrist, JointKind};
use armpath::Error;
use std::path::Path;

fn urdf(joints: &str, links: &[&str]) -> String {
    let links: String = links
        .iter()
        .map(|l| format!("<link name=\"{l}\"/>"))
        .collect();
    format!("<?xml version=\"1.0\"?><robot name=\"t\">{links}{joints}</robot>")
}

fn revolute(name: &str, parent: &str, child: &str, extra: &str) -> String {
    format!(
        "<joint name=\"{name}\" type=\"revolute\"><parent link=\"{parent}\"/><child link=\"{child}\"/>\
         <origin xyz=\"0 0 0.1\" rpy=\"0 0 0\"/>{extra}</joint>"
    )
}

const LIMIT: &str =
    "<axis xyz=\"0 0 1\"/><limit lower=\"-1\" upper=\"1\" effort=\"1\" velocity=\"1\"/>";

fn err_of(text: &str, tip: Option<&str>) -> String {
    match from_urdf_str(text, Path::new("t.urdf"), tip) {
        Ok(_) => panic!("expected an error"),
        Err(e) => e.to_string(),
    }
}

#[test]
fn shipped_robots_load_with_expected_facts() {
    // source: robots/*.urdf (their own declared joint counts and wrist layouts)
    let arm6 = load_urdf(Path::new("robots/arm6.urdf"), None).unwrap();
    assert_eq!(arm6.dof(), 6);
    assert_eq!(arm6.tip_link(), "flange");
    assert!(spherical_wrist(&arm6).spherical);
    // Reach from the first joint's origin: the shoulder point (a1, 0, c1) lies sqrt(a1² + c1²)
    // from it and the flange at most c2 + sqrt(a2² + c3²) + c4 from the shoulder (triangle
    // inequality); the sampled estimate lies just below that bound.
    // source: robots/arm6.urdf header comment (a1, a2, c1..c4)
    let bound = (0.15f64.powi(2) + 0.45f64.powi(2)).sqrt()
        + 0.60
        + (0.12f64.powi(2) + 0.68f64.powi(2)).sqrt()
        + 0.10;
    let r = arm6.reach();
    assert!(
        r <= bound + 1e-9 && r > 0.9 * bound,
        "reach {r} vs bound {bound}"
    );
    let offset = load_urdf(Path::new("robots/arm6_offset.urdf"), None).unwrap();
    let w = spherical_wrist(&offset);
    assert!(!w.spherical);
    assert!(w.reason.unwrap().contains("miss"));
    let arm7 = load_urdf(Path::new("robots/arm7.urdf"), None).unwrap();
    assert_eq!(arm7.dof(), 7);
    let p3 = load_urdf(Path::new("tests/fixtures/prismatic3.urdf"), None).unwrap();
    assert_eq!(p3.joints()[1].kind, JointKind::Prismatic);
}

#[test]
fn non_unit_axis_is_normalised_and_continuous_has_no_limits() {
    // source: URDF specification (joint axis is normalised; continuous joints have no limits)
    let j = "<joint name=\"a\" type=\"continuous\"><parent link=\"b\"/><child link=\"c\"/>\
             <axis xyz=\"0 0 2\"/><limit effort=\"1\" velocity=\"2\"/></joint>";
    let r = from_urdf_str(&urdf(j, &["b", "c"]), Path::new("t.urdf"), None).unwrap();
    assert_eq!(r.chain().joints()[0].axis.into_inner().z, 1.0);
    assert!(r.joints()[0].lower.is_infinite() && r.joints()[0].upper.is_infinite());
}

#[test]
fn refusals_name_the_problem() {
    // source: common practice (each message names the joint/link and the fix)
    let ok = revolute("a", "b", "c", LIMIT);
    // several leaves without a tip
    let two = format!("{ok}{}", revolute("d", "b", "e", LIMIT));
    let e = err_of(&urdf(&two, &["b", "c", "e"]), None);
    assert!(e.contains("several leaf links (c, e)"), "{e}");
    // unknown tip
    let e = err_of(&urdf(&ok, &["b", "c"]), Some("zz"));
    assert!(
        e.contains("tip link 'zz'") && e.contains("links: b, c"),
        "{e}"
    );
    // missing limit
    let e = err_of(
        &urdf(
            &revolute("a", "b", "c", "<axis xyz=\"0 0 1\"/>"),
            &["b", "c"],
        ),
        None,
    );
    assert!(
        e.contains("joint 'a' <limit>") && e.contains("missing"),
        "{e}"
    );
    // zero axis
    let zero = "<axis xyz=\"0 0 0\"/><limit lower=\"-1\" upper=\"1\" effort=\"1\" velocity=\"1\"/>";
    let e = err_of(&urdf(&revolute("a", "b", "c", zero), &["b", "c"]), None);
    assert!(e.contains("<axis>") && e.contains("zero"), "{e}");
    // planar / floating joints
    let planar =
        "<joint name=\"p\" type=\"planar\"><parent link=\"b\"/><child link=\"c\"/></joint>";
    let e = err_of(&urdf(planar, &["b", "c"]), None);
    assert!(e.contains("joint 'p'") && e.contains("Planar"), "{e}");
    // mimic
    let mimic = revolute("a", "b", "c", &format!("{LIMIT}<mimic joint=\"x\"/>"));
    let e = err_of(&urdf(&mimic, &["b", "c"]), None);
    assert!(e.contains("mimic"), "{e}");
    // no movable joint
    let fixed = "<joint name=\"f\" type=\"fixed\"><parent link=\"b\"/><child link=\"c\"/></joint>";
    let e = err_of(&urdf(fixed, &["b", "c"]), None);
    assert!(e.contains("no movable joint"), "{e}");
    // several roots
    let e = err_of(&urdf(&ok, &["b", "c", "z"]), Some("c"));
    assert!(e.contains("several root links"), "{e}");
    // invalid XML and empty text
    let e = err_of("<robot name=\"t\"><link name=\"b\">", None);
    assert!(e.contains("not valid URDF"), "{e}");
    let e = err_of("   ", None);
    assert!(e.contains("empty"), "{e}");
    // entity declarations
    let e = err_of(
        "<?xml version=\"1.0\"?><!DOCTYPE r [<!ENTITY a \"aaaa\">]><robot name=\"t\"/>",
        None,
    );
    assert!(e.contains("ENTITY"), "{e}");
}

#[test]
fn xacro_and_missing_files_are_refused_without_running_anything() {
    // source: common practice (xacro must be expanded by the user; armpath starts no program)
    let dir = tempfile::tempdir().unwrap();
    let x = dir.path().join("arm.urdf.xacro");
    std::fs::write(&x, "<robot name=\"t\"/>").unwrap();
    let e = load_urdf(&x, None).unwrap_err().to_string();
    assert!(e.contains("xacro") && e.contains("expand"), "{e}");
    let e = load_urdf(&dir.path().join("none.urdf"), None).unwrap_err();
    assert!(matches!(e, Error::Robot { .. }));
    assert!(e.to_string().contains("does not exist"), "{e}");
    let e = load_urdf(dir.path(), None).unwrap_err().to_string();
    assert!(e.contains("folder"), "{e}");
}
