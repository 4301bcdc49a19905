//! Tests of the cell model and probe with answers derived from the geometry by hand.

use super::*;
use crate::robot::{from_urdf_str, load_urdf, Robot};
use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};
use std::path::{Path, PathBuf};

fn arm6() -> Robot {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("robots/arm6.urdf");
    load_urdf(&path, None).unwrap()
}

fn body(name: &str, anchor: Option<Anchor>, primitive: Primitive, xyz: [f64; 3]) -> BodySpec {
    BodySpec {
        name: name.into(),
        anchor,
        primitive,
        anchor_T_body: Isometry3::from_parts(
            Translation3::from(Vector3::from(xyz)),
            UnitQuaternion::identity(),
        ),
        field: format!("test {name}"),
        mesh: None,
    }
}

fn cell(bodies: Vec<BodySpec>) -> CellFile {
    CellFile {
        path: PathBuf::from("cell.yaml"),
        bodies,
        allowed: Vec::new(),
        never_meet: Vec::new(),
    }
}

fn build(robot: &Robot, tool: &[BodySpec], cell: Option<&CellFile>) -> CellModel {
    CellModel::build(CellInputs {
        robot,
        tool,
        cell,
        base_T_work: Isometry3::identity(),
        clearance: 0.01,
    })
    .unwrap()
}

fn pair_index(model: &CellModel, a: &str, b: &str) -> usize {
    (0..model.pairs().len())
        .find(|&p| {
            let (x, y) = model.pair_names(p);
            (x == a && y == b) || (x == b && y == a)
        })
        .unwrap_or_else(|| panic!("no pair {a}–{b}"))
}

/// One revolute joint about +y at the origin carrying a 0.5 × 0.05 × 0.05 m bar along +x.
const BAR_URDF: &str = r#"<robot name="bar">
  <link name="base"/>
  <joint name="j" type="revolute"><parent link="base"/><child link="bar"/>
    <origin xyz="0 0 0" rpy="0 0 0"/><axis xyz="0 1 0"/>
    <limit lower="-3" upper="3" effort="1" velocity="1"/></joint>
  <link name="bar"><collision><origin xyz="0.25 0 0" rpy="0 0 0"/>
    <geometry><box size="0.5 0.05 0.05"/></geometry></collision></link>
</robot>"#;

/// One prismatic joint along +x carrying a ball of radius 1 mm.
const SLIDE_URDF: &str = r#"<robot name="slide">
  <link name="base"/>
  <joint name="s" type="prismatic"><parent link="base"/><child link="carriage"/>
    <origin xyz="0 0 0" rpy="0 0 0"/><axis xyz="1 0 0"/>
    <limit lower="-1" upper="1" effort="1" velocity="1"/></joint>
  <link name="carriage"><collision><geometry><sphere radius="0.001"/></geometry></collision></link>
</robot>"#;

/// The slide robot with a 2 mm wall, 1 m square, centred at x = `wall_x` (m).
fn slide_and_wall(wall_x: f64) -> CellModel {
    let robot = from_urdf_str(SLIDE_URDF, Path::new("slide.urdf"), None).unwrap();
    let wall = cell(vec![body(
        "wall",
        Some(Anchor::Base),
        Primitive::Box {
            size: Vector3::new(0.002, 1.0, 1.0),
        },
        [wall_x, 0.0, 0.0],
    )]);
    build(&robot, &[], Some(&wall))
}

#[test]
fn links_ride_on_their_joint_frames() {
    // arm6.urdf: the flange hangs off link6 by a fixed joint 0.04 m along x, turned a quarter
    // turn about y; the root link is on the base frame.
    // source: robots/arm6.urdf (joint flange_mount)
    let robot = arm6();
    let links = robot.links();
    assert_eq!(links[0].name, "base_link");
    assert_eq!(links[0].frame, None);
    let flange = links.iter().find(|l| l.name == "flange").unwrap();
    assert_eq!(flange.frame, Some(5));
    assert!((flange.frame_T_link.translation.vector - Vector3::new(0.04, 0.0, 0.0)).norm() < 1e-15);
    let z = flange.frame_T_link.rotation * Vector3::z();
    assert!((z - Vector3::x()).norm() < 1e-12, "{z}");
    let link3 = links.iter().find(|l| l.name == "link3").unwrap();
    assert_eq!(link3.frame, Some(2));
    assert_eq!(link3.collisions.len(), 1);
}

#[test]
fn box_sphere_distance_from_geometry() {
    // A 20 mm ball as the tool at the flange origin; at zero joints the flange origin is at
    // (0.93, 0, 0.93) in the base frame (arm6.urdf header). A box of 0.2 m edges centred at
    // (1.2, 0.1, 0.93): its near face is x = 1.1, and the ball's centre projects inside the
    // face (|0 − 0.1| < 0.1, |0.93 − 0.93| < 0.1), so the distance is 1.1 − 0.93 − 0.02 =
    // 0.15 m. Moved to (1.2, 0.3, 1.13) the nearest box point is the edge point (1.1, 0.2,
    // 1.03): distance sqrt(0.17² + 0.2² + 0.1²) − 0.02.
    // source: common practice (point–box distance by clamping to the box)
    let robot = arm6();
    let tool = [body(
        "ball",
        None,
        Primitive::Sphere { radius: 0.02 },
        [0.0; 3],
    )];
    for (centre, expected) in [
        ([1.2, 0.1, 0.93], 0.15),
        (
            [1.2, 0.3, 1.13],
            (0.17f64 * 0.17 + 0.04 + 0.01).sqrt() - 0.02,
        ),
    ] {
        let c = cell(vec![body(
            "block",
            Some(Anchor::Base),
            Primitive::Box {
                size: Vector3::repeat(0.2),
            },
            centre,
        )]);
        let model = build(&robot, &tool, Some(&c));
        let mut probe = CellProbe::new(&model);
        probe.exact_within = f64::INFINITY;
        probe.sample(&model, &[0.0; 6], false);
        let d = probe.distance(pair_index(&model, "ball", "block"));
        // GJK stops within about 1e-8 m of the exact distance.
        assert!((d - expected).abs() < 1e-7, "{d} vs {expected}");
    }
}

#[test]
fn bar_meets_a_plane_at_the_solved_angle() {
    // The bar turns about +y; positive angles tip its free end down. Its lowest point is the
    // far bottom edge (0.5, ·, −0.025), at height −(0.5 sin θ + 0.025 cos θ). A slab whose top
    // is at z = −0.3 is first touched when 0.5 sin θ + 0.025 cos θ = 0.3, i.e.
    // θ* = asin(0.3 / R) − atan2(0.025, 0.5) with R = sqrt(0.5² + 0.025²).
    // source: common practice (a sin θ + b cos θ = R sin(θ + φ))
    let robot = from_urdf_str(BAR_URDF, Path::new("bar.urdf"), None).unwrap();
    let slab = cell(vec![body(
        "slab",
        Some(Anchor::Base),
        Primitive::Box {
            size: Vector3::new(2.0, 2.0, 0.1),
        },
        [0.0, 0.0, -0.35],
    )]);
    let model = build(&robot, &[], Some(&slab));
    let r = (0.5f64 * 0.5 + 0.025 * 0.025).sqrt();
    let theta = (0.3 / r).asin() - 0.025f64.atan2(0.5);
    let mut probe = CellProbe::new(&model);
    probe.exact_within = f64::INFINITY;
    let at = |probe: &mut CellProbe, q: f64| {
        probe.restart();
        probe.sample(&model, &[q], false);
        probe.distance(0)
    };
    // At θ = 0 the bar's underside is at −0.025: 0.275 m above the slab.
    assert!((at(&mut probe, 0.0) - 0.275).abs() < 1e-9);
    assert!(at(&mut probe, theta - 1e-4) > 0.0);
    assert!(at(&mut probe, theta + 1e-4) < 0.0);
    assert!(at(&mut probe, theta).abs() < 1e-8);
}

#[test]
fn thin_wall_between_two_samples_is_caught() {
    // A 1 mm ball slides along x from 100 mm to 105 mm in one sample step. A 2 mm wall spans
    // x = 101.5 .. 103.5 mm: the ball clears it by 0.5 mm at both samples, yet passes
    // through it in between. Halfway (102.5 mm) the ball sits in the middle of the wall, where
    // pushing it out takes 1 mm (half the wall) + 1 mm (its radius): depth 2 mm.
    // source: common practice (slab–ball overlap along the slab normal)
    let model = slide_and_wall(0.1025);
    let mut probe = CellProbe::new(&model);
    let first = probe.sample(&model, &[0.100], false);
    assert!(first.is_some_and(|p| (p.distance - 0.0005).abs() < 1e-9 && !p.between));
    let second = probe
        .sample(&model, &[0.105], false)
        .expect("the wall between the samples");
    assert!(probe.distance(0) > 0.0, "clear at the second sample itself");
    assert!(second.between);
    assert!((second.distance + 0.002).abs() < 1e-6, "{second:?}");
    // The same step beside the wall (moved 10 mm on) is proven clear without a contact.
    probe.restart();
    probe.sample(&model, &[0.110], false);
    let clear = probe.sample(&model, &[0.115], false);
    assert!(clear.is_none_or(|p| p.distance > 0.0), "{clear:?}");
}

#[test]
fn free_motion_is_proven_clear_without_splitting() {
    // Far from the wall the bound (5 mm of slide) is below the two distances (≈ 0.4 m): the
    // rule proves the step clear from the two samples alone.
    // source: common practice (conservative advancement)
    let model = slide_and_wall(0.5);
    let mut probe = CellProbe::new(&model);
    probe.sample(&model, &[0.100], false);
    probe.sample(&model, &[0.105], false);
    assert_eq!(probe.evaluations(), 2);
}

#[test]
fn forearm_folds_onto_the_upper_arm_at_the_computed_angle() {
    // arm6.urdf, j2 = 0 so the upper arm stands upright: its box spans x = ±0.07 m and
    // z = 0.05 .. 0.55 m in link2's frame, axis 3 at z = 0.6. The forearm tube (link4, radius
    // 0.06) starts 0.42 m along the forearm from axis 3 (0.30 to axis 4's origin + 0.12), on
    // axis 4, 0.12 m below axis 3. Bending j3 by θ tips the forearm down: the tube's near-end
    // rim point nearest the upper arm lies at x = 0.42 cos θ − (0.12 + 0.06) sin θ, so it meets
    // the upper arm's front face x = 0.07 when 0.42 cos θ − 0.18 sin θ = 0.07:
    // θ* = acos(0.07 / R) − atan2(0.18, 0.42), R = sqrt(0.42² + 0.18²) ≈ 1.0121 rad (58.0°),
    // at a height inside the face (z ≈ 0.15 m). At θ = 45° the gap is 0.24·cos 45° − 0.07.
    // source: common practice (rotation of a point about an axis; a cos θ − b sin θ = R cos(θ + φ))
    let robot = arm6();
    let model = build(&robot, &[], None);
    let p = pair_index(&model, "link2", "link4");
    let r = (0.42f64 * 0.42 + 0.18 * 0.18).sqrt();
    let theta = (0.07 / r).acos() - 0.18f64.atan2(0.42);
    assert!((theta - 1.0121).abs() < 1e-4, "{theta}");
    let mut probe = CellProbe::new(&model);
    probe.exact_within = f64::INFINITY;
    let mut at = |t: f64| {
        probe.restart();
        let hit = probe.sample(&model, &[0.0, 0.0, t, 0.0, 0.0, 0.0], false);
        (probe.distance(p), hit)
    };
    let (d, _) = at(std::f64::consts::FRAC_PI_4);
    // GJK on a curved rim converges to within about 1e-6 m.
    let gap = 0.24 * std::f64::consts::FRAC_1_SQRT_2 - 0.07;
    assert!((d - gap).abs() < 1e-6, "{d} vs {gap}");
    let (before, _) = at(theta - 2e-3);
    assert!(before > 0.0, "{before}");
    let (after, hit) = at(theta + 2e-3);
    assert!(after < 0.0, "{after}");
    let hit = hit.expect("self-collision reported");
    assert_eq!(model.pair_names(hit.pair), ("link2", "link4"));
}

#[test]
fn the_wrist_bends_through_its_range_without_touching_the_forearm() {
    // The flange puck (0.04 m ball, centre 0.09 m past the wrist centre) and the forearm
    // tube's end rim (0.09 m before the wrist centre, radius 0.06) would meet where
    // (0.09 c + 0.09)² + (0.09 s − 0.06)² = 0.04², i.e. 0.0162 c − 0.0108 s = −0.0182, whose
    // smallest solution, θ = π − atan2(0.0108, 0.0162) − acos(0.0182 / 0.019470) ≈ 2.193 rad
    // (125.7°), lies beyond j5's ±125° range: the wrist may bend fully.
    // source: common practice (distance from a point to a circle's rim)
    let robot = arm6();
    let model = build(&robot, &[], None);
    let mut probe = CellProbe::new(&model);
    let limit = robot.joints()[4].upper;
    assert!(limit < 2.193);
    for k in 0..=50 {
        let t = -limit + 2.0 * limit * k as f64 / 50.0;
        probe.restart();
        let hit = probe.sample(&model, &[0.0, 0.0, 0.0, 0.0, t, 0.0], false);
        assert!(hit.is_none_or(|h| h.distance > 0.0), "j5 = {t}: {hit:?}");
    }
}

#[test]
fn neighbours_are_never_tested_and_far_pairs_are_dropped() {
    // Links on the same or neighbouring joint frames share a joint: never a self-collision.
    // The pedestal and the flange puck can come close (the arm reaches down past its base),
    // while the pedestal and the upper arm's neighbour housing cannot be tested at all.
    // source: common practice (adjacent-link exclusion in self-collision checking)
    let robot = arm6();
    let model = build(&robot, &[], None);
    for p in 0..model.pairs().len() {
        let pair = &model.pairs()[p];
        let (fa, fb) = (model.bodies()[pair.a].frame, model.bodies()[pair.b].frame);
        let (fa, fb) = (fa.map_or(-1, |f| f as i64), fb.map_or(-1, |f| f as i64));
        assert!((fa - fb).abs() > 1, "{:?}", model.pair_names(p));
    }
    assert!(
        model.notes().iter().any(|n| n.contains("flange")),
        "{:?}",
        model.notes()
    );
    pair_index(&model, "link2", "link4");
}

#[test]
fn process_contact_allowed_only_on_process_samples() {
    // The tool ball sits 0.1 m out along the tool axis (base +x at zero joints): centre at
    // x = 1.03 m, so a block whose near face is at x = 1.049 m holds it 1 mm deep: a contact at
    // every sample, except on process samples when the pair is allowed there.
    // source: common practice
    let robot = arm6();
    let tool = [body(
        "tip",
        None,
        Primitive::Sphere { radius: 0.02 },
        [0.0, 0.0, 0.1],
    )];
    let mut c = cell(vec![body(
        "part",
        Some(Anchor::Work),
        Primitive::Box {
            size: Vector3::repeat(0.2),
        },
        [1.149, 0.0, 0.93],
    )]);
    c.allowed.push(AllowedContact {
        a: "tip".into(),
        b: "part".into(),
        when: AllowWhen::Process,
        depth: DEFAULT_CONTACT_DEPTH_M,
        field: "allowed_contacts[0]".into(),
    });
    let model = build(&robot, &tool, Some(&c));
    let mut probe = CellProbe::new(&model);
    let q = [0.0; 6];
    let off = probe
        .sample(&model, &q, false)
        .expect("contact off process");
    assert!((off.distance + 0.001).abs() < 1e-6, "{off:?}");
    probe.restart();
    assert_eq!(probe.sample(&model, &q, true), None);
    // Allowed only 0.5 mm deep, the same 1 mm contact is a collision on process samples too.
    c.allowed[0].depth = 0.0005;
    let model = build(&robot, &tool, Some(&c));
    let mut probe = CellProbe::new(&model);
    let on = probe.sample(&model, &q, true).expect("deeper than allowed");
    assert!((on.distance + 0.001).abs() < 1e-6, "{on:?}");
}

#[test]
fn unknown_names_in_the_cell_file_are_refused() {
    // source: common practice (each error names file, field and what to do)
    let robot = arm6();
    let mut c = cell(vec![]);
    c.never_meet
        .push(("link1".into(), "lnk6".into(), "never_meet[0]".into()));
    let e = CellModel::build(CellInputs {
        robot: &robot,
        tool: &[],
        cell: Some(&c),
        base_T_work: Isometry3::identity(),
        clearance: 0.01,
    })
    .unwrap_err()
    .to_string();
    assert!(e.contains("cell.yaml: never_meet[0]: names 'lnk6'"), "{e}");
}
