//! Mesh solids in the probe: concave parts, bodies inside closed meshes, distances to faces
//! and the between-samples rule against a mesh, with answers derived from the geometry.

use super::stl::{box_triangles, MeshPoints};
use super::*;
use crate::robot::{from_urdf_str, Robot};
use nalgebra::{Isometry3, Point3, Translation3, UnitQuaternion, Vector3};
use parry3d_f64::query;
use parry3d_f64::shape::{Ball, ConvexPolyhedron};
use std::path::{Path, PathBuf};

/// One prismatic joint along +x carrying a ball of `radius` m at the joint's origin.
fn slide(radius: f64) -> Robot {
    let urdf = format!(
        r#"<robot name="slide">
  <link name="base"/>
  <joint name="s" type="prismatic"><parent link="base"/><child link="carriage"/>
    <origin xyz="0 0 0" rpy="0 0 0"/><axis xyz="1 0 0"/>
    <limit lower="-1" upper="1" effort="1" velocity="1"/></joint>
  <link name="carriage"><collision><geometry><sphere radius="{radius}"/></geometry></collision></link>
</robot>"#
    );
    from_urdf_str(&urdf, Path::new("slide.urdf"), None).unwrap()
}

/// The slide with one mesh body on the base frame at `xyz`; the probe measures every pair
/// exactly.
fn slide_and_mesh(radius: f64, triangles: Vec<[Point3<f64>; 3]>, xyz: [f64; 3]) -> CellModel {
    let robot = slide(radius);
    let part = BodySpec {
        name: "part".into(),
        anchor: Some(Anchor::Base),
        primitive: Primitive::Mesh(MeshPoints::from_triangles(triangles)),
        anchor_T_body: Isometry3::from_parts(
            Translation3::from(Vector3::from(xyz)),
            UnitQuaternion::identity(),
        ),
        field: "test part".into(),
        mesh: None,
    };
    let cell = CellFile {
        path: PathBuf::from("cell.yaml"),
        bodies: vec![part],
        allowed: Vec::new(),
        never_meet: Vec::new(),
    };
    CellModel::build(CellInputs {
        robot: &robot,
        tool: &[],
        cell: Some(&cell),
        base_T_work: Isometry3::identity(),
        clearance: 0.001,
    })
    .unwrap()
}

/// True when the model notes that the part's mesh is open.
fn open_note(model: &CellModel) -> bool {
    model
        .notes()
        .iter()
        .any(|n| n.contains("'part' is not closed"))
}

/// Distance of the slide's ball at `q` to the part, measured exactly.
fn distance_at(model: &CellModel, q: f64) -> f64 {
    let mut probe = CellProbe::new(model);
    probe.exact_within = f64::INFINITY;
    probe.sample(model, &[q], false);
    probe.distance(0)
}

/// A polygon in the x–z plane (counter-clockwise seen from −y, fanned from its first corner,
/// which must see every other corner) extruded along y between ±`half`: a closed, consistently
/// oriented surface.
fn extrude(polygon: &[(f64, f64)], half: f64) -> Vec<[Point3<f64>; 3]> {
    let at = |i: usize, y: f64| {
        let (x, z) = polygon[i % polygon.len()];
        Point3::new(x, y, z)
    };
    let n = polygon.len();
    let mut out = Vec::new();
    for i in 1..n - 1 {
        out.push([at(0, -half), at(i, -half), at(i + 1, -half)]);
        out.push([at(0, half), at(i + 1, half), at(i, half)]);
    }
    for i in 0..n {
        out.push([at(i + 1, -half), at(i, -half), at(i, half)]);
        out.push([at(i + 1, -half), at(i, half), at(i + 1, half)]);
    }
    out
}

/// The L cross-section: a foot 0.1 × 0.02 m along x and an upright 0.02 × 0.1 m along z,
/// listed from the inner (reflex) corner so that the fan covers exactly the L.
const L_SECTION: [(f64, f64); 6] = [
    (0.02, 0.02),
    (0.02, 0.1),
    (0.0, 0.1),
    (0.0, 0.0),
    (0.1, 0.0),
    (0.1, 0.02),
];

#[test]
fn a_ball_in_the_inner_corner_of_an_l_clears_the_mesh_but_not_its_hull() {
    // A 10 mm ball centred at (0.05, 0, 0.05) in the L's frame: 0.03 m above the foot's top
    // (z = 0.02) and 0.03 m beside the upright's face (x = 0.02), so 0.03 − 0.01 = 0.02 m from
    // the L; the foot's and upright's far corners (0.1, 0.02) and (0.02, 0.1) make the hull's
    // chamfer x + z = 0.12, and the centre (x + z = 0.1) lies inside the hull.
    // source: common practice (point–plane distance; hull of a polygon)
    let tris = extrude(&L_SECTION, 0.1);
    // The L is placed so that the ball at q = 0.55 sits at (0.05, 0, 0.05) in its frame.
    let model = slide_and_mesh(0.01, tris.clone(), [0.5, 0.0, -0.05]);
    assert!(!open_note(&model), "closed: {:?}", model.notes());
    let d = distance_at(&model, 0.55);
    assert!((d - 0.02).abs() < 1e-9, "{d}");
    // The same ball against the hull of the same corners: reference parry3d-f64 0.8.0.
    let corners = MeshPoints::from_triangles(tris);
    let hull = ConvexPolyhedron::from_convex_hull(corners.points()).unwrap();
    let ball_in_l = Isometry3::translation(0.05, 0.0, 0.05);
    let hull_d =
        query::distance(&Isometry3::identity(), &hull, &ball_in_l, &Ball::new(0.01)).unwrap();
    assert!(hull_d <= 0.0, "{hull_d}");
}

#[test]
fn a_ball_inside_a_closed_cube_mesh_is_in_contact() {
    // A 10 mm ball at the centre of a 0.2 m cube is 0.1 − 0.01 = 0.09 m from every face but
    // wholly inside: contact, read as minus that distance. Reversed facing changes nothing;
    // with the lid removed the cube is an open sheet and the ball is 0.09 m from it.
    // source: common practice (point–plane distance)
    let cube = box_triangles(Vector3::repeat(-0.1), Vector3::repeat(0.1));
    let model = slide_and_mesh(0.01, cube.clone(), [0.5, 0.0, 0.0]);
    let d = distance_at(&model, 0.5);
    assert!((d + 0.09).abs() < 1e-9, "{d}");
    let mut probe = CellProbe::new(&model);
    let hit = probe
        .sample(&model, &[0.5], false)
        .expect("contact reported");
    assert!(hit.distance < 0.0, "{hit:?}");

    let inward: Vec<_> = cube.iter().map(|t| [t[0], t[2], t[1]]).collect();
    let model = slide_and_mesh(0.01, inward, [0.5, 0.0, 0.0]);
    assert!((distance_at(&model, 0.5) + 0.09).abs() < 1e-9);

    let mut open = cube;
    open.drain(2..4); // the two triangles of the face z = +0.1
    let model = slide_and_mesh(0.01, open, [0.5, 0.0, 0.0]);
    assert!(open_note(&model), "{:?}", model.notes());
    assert!((distance_at(&model, 0.5) - 0.09).abs() < 1e-9);
}

#[test]
fn a_point_like_ball_is_the_plane_distance_from_a_slanted_face() {
    // The tetrahedron (0,0,0), (a,0,0), (0,a,0), (0,0,a) with a = 0.1 m has the slanted face
    // x + y + z = a. The point (a, a, a) projects onto it at (a/3, a/3, a/3), inside the face
    // (all barycentric weights 1/3), so its distance is the plane distance (3a − a)/√3; a
    // ball of 1 µm is that minus 1 µm.
    // source: common practice (point–plane distance |n·p − c| / |n|)
    let a = 0.1;
    let o = Point3::origin();
    let [x, y, z] = [
        Point3::new(a, 0.0, 0.0),
        Point3::new(0.0, a, 0.0),
        Point3::new(0.0, 0.0, a),
    ];
    let tetra = vec![[o, y, x], [o, x, z], [o, z, y], [x, y, z]];
    // Ball at q = 0.6: (0.6, 0, 0) in the base is (a, a, a) in the tetrahedron's frame.
    let model = slide_and_mesh(1e-6, tetra, [0.6 - a, -a, -a]);
    assert!(!open_note(&model), "closed: {:?}", model.notes());
    let expected = 2.0 * a / 3f64.sqrt() - 1e-6;
    let d = distance_at(&model, 0.6);
    assert!((d - expected).abs() < 1e-12, "{d} vs {expected}");
}

#[test]
fn a_ball_passing_through_a_thin_mesh_wall_between_samples_is_caught() {
    // A 1 mm ball slides from 100 mm to 105 mm; a closed 2 mm mesh wall spans x = 101.5 ..
    // 103.5 mm: 0.5 mm clear at both samples, through the wall in between. Halfway the ball
    // lies wholly inside the wall's surface (its faces are 1 mm from the centre, the ball's
    // radius), so the halving finds contact (distance ≤ 0).
    // source: common practice (slab–ball overlap; conservative advancement)
    let wall = box_triangles(
        Vector3::new(-0.001, -0.5, -0.5),
        Vector3::new(0.001, 0.5, 0.5),
    );
    let model = slide_and_mesh(0.001, wall, [0.1025, 0.0, 0.0]);
    let mut probe = CellProbe::new(&model);
    let first = probe.sample(&model, &[0.100], false);
    assert!(first.is_some_and(|p| (p.distance - 0.0005).abs() < 1e-9 && !p.between));
    let second = probe
        .sample(&model, &[0.105], false)
        .expect("the wall between the samples");
    assert!(probe.distance(0) > 0.0, "clear at the second sample itself");
    assert!(second.between && second.distance <= 0.0, "{second:?}");
}

#[test]
fn an_allowed_contact_deeper_than_its_bound_between_samples_is_a_collision() {
    // The slide's 10 mm ball passes over a ridge: a 100 mm cube turned 45° about y, its top
    // edge along y at z = −7.5 mm. Within the edge's wedge the ball's centre (q, 0, 0) is
    // sqrt(q² + 0.0075²) from the edge: at q = ±a with a² = 0.009² − 0.0075² it is 9 mm (1 mm
    // deep, within the default 2 mm allowance); at q = 0 it is 7.5 mm, 2.5 mm deep. Only the
    // between-samples rule, refined against the allowance, sees the middle.
    // source: common practice (point–line distance; conservative advancement)
    let robot = slide(0.01);
    let bump = BodySpec {
        name: "bump".into(),
        anchor: Some(Anchor::Base),
        primitive: Primitive::Box {
            size: Vector3::repeat(0.1),
        },
        anchor_T_body: Isometry3::from_parts(
            Translation3::new(0.0, 0.0, -0.0075 - 0.05 * std::f64::consts::SQRT_2),
            UnitQuaternion::from_axis_angle(&Vector3::y_axis(), std::f64::consts::FRAC_PI_4),
        ),
        field: "test bump".into(),
        mesh: None,
    };
    let cell = CellFile {
        path: PathBuf::from("cell.yaml"),
        bodies: vec![bump],
        allowed: vec![AllowedContact {
            a: "carriage".into(),
            b: "bump".into(),
            when: AllowWhen::Process,
            depth: DEFAULT_CONTACT_DEPTH_M,
            field: "allowed_contacts[0]".into(),
        }],
        never_meet: Vec::new(),
    };
    let model = CellModel::build(CellInputs {
        robot: &robot,
        tool: &[],
        cell: Some(&cell),
        base_T_work: Isometry3::identity(),
        clearance: 0.001,
    })
    .unwrap();
    let a = (0.009f64.powi(2) - 0.0075f64.powi(2)).sqrt();
    let mut probe = CellProbe::new(&model);
    assert_eq!(probe.sample(&model, &[-a], true), None);
    assert!(
        (probe.distance(0) + 0.001).abs() < 1e-6,
        "{}",
        probe.distance(0)
    );
    let found = probe
        .sample(&model, &[a], true)
        .expect("2.5 mm deep in between");
    assert!(found.between, "{found:?}");
    // The deepest midpoint measured is within the contact resolution of q = 0.
    assert!(found.distance < -DEFAULT_CONTACT_DEPTH_M, "{found:?}");
    assert!(found.distance >= -0.0025 - 1e-9, "{found:?}");
}
