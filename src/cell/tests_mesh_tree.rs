//! The mesh tree's queries against parry's own (the reference library, parry3d-f64 0.8.0) on
//! random placements around a generated concave part.

use super::mesh_tree::{Placed, NO_HINT};
use super::shape::{Primitive, Solid};
use super::stl::MeshPoints;
use super::MESH_TOLERANCE_M;
use nalgebra::{Isometry3, Point3, Translation3, UnitQuaternion, Vector3};
use parry3d_f64::query::{self, gjk::VoronoiSimplex, PointQuery};
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};

/// Slack (m) for rounding in GJK and in parry's own query: both stop at a relative
/// precision near 1e-7 of distances below 0.1 m. source: common practice
const ROUNDING_M: f64 = 2e-8;

/// A closed part 0.2 × 0.16 m over a grid of `n` × `n` cells: its top is a wavy terrain
/// (bumps and hollows of ±8 mm, so concave), its bottom flat at z = −0.03, walls around.
fn wavy_block(n: usize) -> Vec<[Point3<f64>; 3]> {
    let xy = |i: usize, j: usize| (0.2 * i as f64 / n as f64, 0.16 * j as f64 / n as f64);
    let top = |i: usize, j: usize| {
        let (x, y) = xy(i, j);
        Point3::new(x, y, 0.008 * (40.0 * x).sin() * (30.0 * y).cos())
    };
    let bottom = |i: usize, j: usize| {
        let (x, y) = xy(i, j);
        Point3::new(x, y, -0.03)
    };
    let mut out = Vec::new();
    for i in 0..n {
        for j in 0..n {
            let q = [(i, j), (i + 1, j), (i + 1, j + 1), (i, j + 1)];
            let [a, b, c, d] = q.map(|(u, v)| top(u, v));
            out.extend([[a, b, c], [a, c, d]]);
            let [a, b, c, d] = q.map(|(u, v)| bottom(u, v));
            out.extend([[a, c, b], [a, d, c]]);
        }
    }
    // Walls: each border edge of the top, counter-clockwise seen from above, goes down.
    let ring: Vec<(usize, usize)> = (0..n)
        .map(|i| (i, 0))
        .chain((0..n).map(|j| (n, j)))
        .chain((1..=n).rev().map(|i| (i, n)))
        .chain((1..=n).rev().map(|j| (0, j)))
        .collect();
    for k in 0..ring.len() {
        let (u, v) = (ring[k], ring[(k + 1) % ring.len()]);
        let (ut, vt) = (top(u.0, u.1), top(v.0, v.1));
        let (ub, vb) = (bottom(u.0, u.1), bottom(v.0, v.1));
        out.extend([[ut, ub, vb], [ut, vb, vt]]);
    }
    out
}

/// The four convex primitives the probe meets, each of a size drawn in 5 .. 40 mm.
fn random_primitive(rng: &mut StdRng) -> Primitive {
    let kind = rng.gen_range(0..4);
    let mut size = || rng.gen_range(0.005..0.04);
    match kind {
        0 => Primitive::Box {
            size: Vector3::new(size(), size(), size()),
        },
        1 => Primitive::Cylinder {
            radius: size(),
            length: size(),
        },
        2 => Primitive::Sphere { radius: size() },
        _ => Primitive::Capsule {
            radius: size(),
            length: size(),
        },
    }
}

/// A pose around the part: centre within its box grown by 50 mm, any orientation.
fn random_pose(rng: &mut StdRng) -> Isometry3<f64> {
    let t = Translation3::new(
        rng.gen_range(-0.05..0.25),
        rng.gen_range(-0.05..0.21),
        rng.gen_range(-0.08..0.06),
    );
    let r = UnitQuaternion::from_euler_angles(
        rng.gen_range(-3.1..3.1),
        rng.gen_range(-1.5..1.5),
        rng.gen_range(-3.1..3.1),
    );
    Isometry3::from_parts(t, r)
}

/// Parry's distance from the part to `body` at `pos` (its shape frame). A capsule is measured
/// as its segment less the radius: parry's GJK on the rounded surface itself stops early,
/// up to about a micrometre high on these sizes, while on a segment it ends exactly.
fn parry_distance(part: &Solid, body: &Solid, pos: &Isometry3<f64>) -> f64 {
    let mesh = part.surface().unwrap().mesh();
    let at = Isometry3::identity();
    match body.shape().as_capsule() {
        Some(c) => (query::distance(&at, mesh, pos, &c.segment).unwrap() - c.radius).max(0.0),
        None => query::distance(&at, mesh, pos, body.shape()).unwrap(),
    }
}

/// The part as a solid (its mesh's frame is the world here).
fn part(n: usize) -> Solid {
    Solid::new(
        &Primitive::Mesh(MeshPoints::from_triangles(wavy_block(n))),
        Isometry3::identity(),
    )
    .unwrap()
}

/// The solid placed for the tree, at `world_T_body`.
fn placed<'a>(s: &'a Solid, world_T_body: &Isometry3<f64>) -> Placed<'a> {
    Placed {
        support: s.support().unwrap(),
        ball: s.ball_radius(),
        rounded: s.rounded(),
        mesh_T_shape: world_T_body * s.body_T_shape,
        centre: world_T_body * Point3::from(s.centre),
        radius: s.radius,
    }
}

#[test]
fn the_generated_part_is_closed_and_concave() {
    // Between two bumps the top dips: the midpoint of two crests at x = π/80 and 5π/80 (y = 0)
    // lies 8 mm above the hollow at x = 3π/80, outside the part although inside its hull.
    // source: common practice (sin(40x) crests at 40x = π/2 + 2kπ)
    let mesh = part(60);
    let s = mesh.surface().unwrap();
    assert!(s.is_closed());
    let x = 3.0 * std::f64::consts::PI / 80.0;
    assert!(!s.contains(&Point3::new(x, 0.001, 0.007)));
    assert!(s.contains(&Point3::new(x, 0.001, -0.009)));
}

#[test]
fn the_tree_distance_equals_parrys_on_random_placements() {
    // 400 random convex solids around the concave part: exact answers (need = ∞) within the
    // stated tolerance of parry's composite-shape distance, never above it.
    // source: parry3d-f64 0.8.0 (query::distance on the same TriMesh)
    let mesh = part(40);
    let surface = mesh.surface().unwrap();
    let mut rng = StdRng::seed_from_u64(7);
    let mut simplex = VoronoiSimplex::new();
    let mut hint = NO_HINT;
    let (mut near, mut touching) = (0, 0);
    for k in 0..400 {
        let body = Solid::new(&random_primitive(&mut rng), Isometry3::identity()).unwrap();
        let at = random_pose(&mut rng);
        let pos = at * body.body_T_shape;
        let reference = parry_distance(&mesh, &body, &pos);
        // Every fourth query keeps the previous hint, the rest start fresh.
        if k % 4 != 0 {
            hint = NO_HINT;
        }
        let d =
            surface
                .tree()
                .distance(&placed(&body, &at), f64::INFINITY, &mut hint, &mut simplex);
        assert!(
            d <= reference + ROUNDING_M && d >= reference - MESH_TOLERANCE_M - ROUNDING_M,
            "placement {k}: tree {d}, parry {reference}, {body:?}"
        );
        near += usize::from(reference > 0.0 && reference < 0.01);
        touching += usize::from(reference == 0.0);
    }
    // The draw covers both near misses and contacts.
    assert!(
        near > 20 && touching > 20,
        "{near} near, {touching} touching"
    );
}

#[test]
fn a_bounded_answer_never_exceeds_the_true_distance() {
    // With a finite need the answer is a lower bound: exact (within the tolerance) below the
    // need, at least the need otherwise, never above parry's distance; and a hint left by a
    // far placement does not spoil the next one.
    // source: parry3d-f64 0.8.0 (query::distance on the same TriMesh)
    let mesh = part(40);
    let surface = mesh.surface().unwrap();
    let mut rng = StdRng::seed_from_u64(11);
    let mut simplex = VoronoiSimplex::new();
    let mut hint = NO_HINT;
    let mut bounded = 0;
    for k in 0..400 {
        let body = Solid::new(&random_primitive(&mut rng), Isometry3::identity()).unwrap();
        let at = random_pose(&mut rng);
        let pos = at * body.body_T_shape;
        let reference = parry_distance(&mesh, &body, &pos);
        let need = rng.gen_range(0.0..0.03);
        let d = surface
            .tree()
            .distance(&placed(&body, &at), need, &mut hint, &mut simplex);
        assert!(
            d <= reference + ROUNDING_M,
            "placement {k}: bound {d} above parry's {reference}"
        );
        if d < need {
            assert!(
                d >= reference - MESH_TOLERANCE_M - ROUNDING_M,
                "placement {k}: {d} below need {need} but parry says {reference}"
            );
        } else {
            bounded += usize::from(reference > need);
        }
    }
    assert!(bounded > 50, "{bounded}");
}

#[test]
fn containment_equals_parrys_on_random_points() {
    // Points drawn in the part's box grown by 10 mm: inside exactly where parry's pseudo-normal
    // test says so.
    // source: parry3d-f64 0.8.0 (TriMesh::contains_local_point with pseudo-normals)
    let mesh = part(30);
    let surface = mesh.surface().unwrap();
    let mut rng = StdRng::seed_from_u64(3);
    let mut inside = 0;
    for k in 0..2000 {
        let p = Point3::new(
            rng.gen_range(-0.01..0.21),
            rng.gen_range(-0.01..0.17),
            rng.gen_range(-0.04..0.02),
        );
        let reference = surface.mesh().contains_local_point(&p);
        assert_eq!(surface.contains(&p), reference, "point {k}: {p}");
        inside += usize::from(reference);
    }
    assert!(inside > 500 && inside < 1800, "{inside}");
}
