//! Distance queries on a [`CellModel`]: at one joint configuration, and over the straight
//! joint-space motion between two configurations (the between-samples rule).
//!
//! # The between-samples rule
//!
//! Between two samples `qa` and `qb` the walk moves the joints along `q(s) = qa + s·(qb − qa)`.
//! A point of a body carried by joint frame f moves at most `Σ_{j≤f} λ_j·|Δq_j|` on that
//! motion, where `λ_j` bounds its distance from joint j's axis (the chain's fixed offsets from
//! joint j to frame f plus the body's extent: the triangle inequality, whatever the other
//! joints do) and is 1 for a prismatic joint. For a body pair the sum of both bodies' bounds,
//! `M`, bounds how much their distance can change. With distances `da` at `qa` and `db` at
//! `qb`, the distance anywhere on the motion is at least `(da + db − M) / 2`; so when
//! `M < da + db` the pair cannot touch in between (conservative advancement). Otherwise the
//! motion is halved at its midpoint, measured there, and both halves are tested again, until
//! every pair is proven clear, a contact is found, or the pair's bound falls below
//! [`CONTACT_RESOLUTION_M`] (then no penetration deeper than half of it can be hidden in the
//! interval). A pair already in contact at either end is reported there and not refined.
//!
//! # Measuring only what can have changed
//!
//! The same bound spares most queries: a pair measured at `q0` with distance `d0` is at least
//! `d0 − Σ λ·|Δq|` apart at any later configuration, the sum running over the steps between
//! the configurations measured since (by the triangle inequality it is at least `λ·|q − q0|`,
//! so the bound holds in whatever order configurations are measured). While that lower bound
//! stays above the clearance limit plus [`EXACT_MARGIN_M`], the pair can raise no finding and
//! the bound itself serves the between-samples rule, so the pair is measured again only when
//! its bound falls below that. Each step costs one product per moving body and one addition
//! per pair.
//!
//! # Meshes
//!
//! A convex solid against a mesh is measured on the mesh's own tree (see `mesh_tree`) with a
//! need of the clearance limit plus twice [`EXACT_MARGIN_M`]: below it the distance is exact
//! within [`MESH_TOLERANCE_M`] (never above the true distance), beyond it only a lower bound
//! of at least the need is kept, which serves both the findings and the between-samples rule.
//! Each (solid, mesh) pair remembers its nearest triangle, the first candidate next time.
//!
//! # Allowed process contacts
//!
//! On process samples a pair allowed there raises nothing down to its depth bound; the
//! between-samples rule tests it against that bound instead of 0 (distances shifted by it).

use super::mesh_tree::{Hint, Placed, NO_HINT};
use super::model::CellModel;
use super::shape::Solid;
#[cfg(doc)]
use super::MESH_TOLERANCE_M;
use crate::robot::MAX_DOF;
use nalgebra::{Isometry3, Point3, Unit, Vector3};
use parry3d_f64::query::gjk::{self, CSOPoint, GJKResult, VoronoiSimplex};
use parry3d_f64::query::{self, epa::EPA};

/// Motion bound (m) below which an interval is not split further: 0.2 mm is below the
/// repeatability of most industrial arms and far below any model's accuracy, so a contact
/// hidden within it (at most 0.1 mm deep) says nothing the model could back.
pub const CONTACT_RESOLUTION_M: f64 = 2e-4;

/// Deepest halving of one sample interval: 2^20 pieces reach the resolution from a motion
/// bound of 200 m, far beyond any sample step; the cap only guards against a runaway.
pub const MAX_SPLIT_DEPTH: usize = 20;

/// Pairs provably more than this (m) beyond the clearance limit apart, by their bounding
/// spheres or by the motion bound since their last measurement, are not measured exactly:
/// the lower bound can raise no finding. 5 mm keeps the bounds loose enough to be renewed
/// rarely, while the between-samples rule, which needs the two ends' distances to exceed a
/// sample's motion bound, still passes any sample step moving a body less than twice the
/// clearance limit without splitting.
pub const EXACT_MARGIN_M: f64 = 0.005;

/// Search distance handed to GJK: farther than any two bodies of a cell can be (1 km).
const GJK_MAX_DIST: f64 = 1e3;

/// The nearest non-allowed pair at a sample (or found between it and the previous one).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Proximity {
    /// Index into [`CellModel::pairs`].
    pub pair: usize,
    /// Distance (m); zero or negative is contact, negative is the penetration depth.
    pub distance: f64,
    /// True when found between two samples by the between-samples rule.
    pub between: bool,
}

/// Scratch space for queries on one model: preallocated once, reused for every sample.
pub struct CellProbe {
    world: Vec<Isometry3<f64>>,
    centres: Vec<Point3<f64>>,
    /// Pair distances, one row of `pairs` per configuration: rows 0 and 1 for the last two
    /// samples, rows 2.. for midpoints at each split depth.
    rows: Vec<f64>,
    npairs: usize,
    current: usize,
    previous: Option<[f64; MAX_DOF]>,
    simplex: VoronoiSimplex,
    epa: EPA,
    /// Per pair: the distance (or lower bound) at its last measurement (NaN until measured)
    /// and the motion bound spent since.
    anchor_d: Vec<f64>,
    spent: Vec<f64>,
    /// Per body: the motion bound of the last step (m), and of the interval being refined.
    step: Vec<f64>,
    motion: Vec<f64>,
    /// The last configuration measured, if any.
    last_q: Option<[f64; MAX_DOF]>,
    /// Per (convex solid, mesh solid) index pair `o * nplaced + m`: the mesh's triangle
    /// nearest at that pair's last query, the first candidate of the next one.
    nearest_slot: Vec<Hint>,
    nplaced: usize,
    /// False where only the sign of an overlap matters (the never-meet filter): overlapping
    /// pairs then give 0 without a penetration depth.
    pub(crate) depth_wanted: bool,
    /// See [`EXACT_MARGIN_M`]; widened to ∞ when exact distances are needed everywhere.
    pub(crate) exact_within: f64,
    evaluations: u64,
}

impl std::fmt::Debug for CellProbe {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("CellProbe")
            .field("evaluations", &self.evaluations)
            .finish()
    }
}

impl CellProbe {
    /// Scratch for `model` (allocates; do it once per walk).
    pub fn new(model: &CellModel) -> CellProbe {
        let n = model.placed.len();
        let npairs = model.pairs.len();
        let mut probe = CellProbe {
            world: vec![Isometry3::identity(); n],
            centres: vec![Point3::origin(); n],
            rows: vec![f64::INFINITY; (2 + MAX_SPLIT_DEPTH + 1) * npairs.max(1)],
            npairs,
            current: 0,
            previous: None,
            simplex: VoronoiSimplex::new(),
            epa: EPA::new(),
            anchor_d: vec![f64::NAN; npairs],
            spent: vec![0.0; npairs],
            step: vec![0.0; model.bodies.len()],
            motion: vec![0.0; model.bodies.len()],
            last_q: None,
            nearest_slot: vec![NO_HINT; n * n],
            nplaced: n,
            depth_wanted: true,
            exact_within: model.clearance + EXACT_MARGIN_M,
            evaluations: 0,
        };
        for (i, p) in model.placed.iter().enumerate() {
            if p.frame.is_none() {
                probe.world[i] = p.frame_T_shape;
                probe.centres[i] = p.frame_centre;
            }
        }
        probe
    }

    /// Forgets the previous sample: the next [`CellProbe::sample`] tests no motion into it
    /// (after a stretch without joints, or at the start of a walk).
    pub fn restart(&mut self) {
        self.previous = None;
    }

    /// Configurations measured so far (samples and midpoints).
    pub fn evaluations(&self) -> u64 {
        self.evaluations
    }

    /// Distance (m) of `pair` at the last sample (negative: penetration depth).
    pub fn distance(&self, pair: usize) -> f64 {
        self.rows[self.current * self.npairs + pair]
    }

    /// Measures every pair at `q` and, when a previous sample is held, the motion from it
    /// (see the module doc). Returns the nearest pair below the clearance limit that is not
    /// allowed (pairs allowed on process segments are skipped when `process`), the deepest
    /// contact winning. Allocates nothing.
    pub fn sample(&mut self, model: &CellModel, q: &[f64], process: bool) -> Option<Proximity> {
        let row = 1 - self.current;
        self.evaluate(model, q, row, None);
        let mut worst = self.nearest(model, row, process, false);
        let mut qb = [0.0; MAX_DOF];
        qb[..q.len()].copy_from_slice(q);
        if let Some(qa) = self.previous {
            self.refine(model, &qa, self.current, &qb, row, 2, process, &mut worst);
        }
        self.previous = Some(qb);
        self.current = row;
        worst
    }

    /// Measures only `pairs` at `q` into the current row (the never-meet filter).
    pub(crate) fn measure(&mut self, model: &CellModel, q: &[f64], pairs: &[usize]) {
        self.evaluate(model, q, self.current, Some(pairs));
    }

    /// The nearest pair of `row` below the clearance limit (see [`CellProbe::sample`]).
    fn nearest(
        &self,
        model: &CellModel,
        row: usize,
        process: bool,
        between: bool,
    ) -> Option<Proximity> {
        let d = &self.rows[row * self.npairs..(row + 1) * self.npairs];
        let mut worst: Option<Proximity> = None;
        for (p, (&dist, pair)) in d.iter().zip(&model.pairs).enumerate() {
            if dist >= model.clearance || pair.allowed_at(process, dist) {
                continue;
            }
            if worst.is_none_or(|w| dist < w.distance) {
                worst = Some(Proximity {
                    pair: p,
                    distance: dist,
                    between,
                });
            }
        }
        worst
    }

    #[allow(clippy::too_many_arguments)]
    fn refine(
        &mut self,
        model: &CellModel,
        qa: &[f64; MAX_DOF],
        ra: usize,
        qb: &[f64; MAX_DOF],
        rb: usize,
        depth_row: usize,
        process: bool,
        worst: &mut Option<Proximity>,
    ) {
        let dof = model.chain.dof();
        // Each body's motion bound over the interval, then each pair's as the sum of its two.
        for (m, body) in self.motion.iter_mut().zip(&model.bodies) {
            *m = 0.0;
            if body.frame.is_some() {
                for j in 0..dof {
                    *m += body.lever[j] * (qb[j] - qa[j]).abs();
                }
            }
        }
        let n = self.npairs;
        let open = model.pairs.iter().enumerate().any(|(p, pair)| {
            // An allowed process contact is refined against its depth bound instead of 0.
            let allowance = if process && pair.allowed_in_process {
                pair.allowed_depth
            } else {
                0.0
            };
            let (da, db) = (
                self.rows[ra * n + p] + allowance,
                self.rows[rb * n + p] + allowance,
            );
            if da <= 0.0 || db <= 0.0 {
                return false;
            }
            let bound = self.motion[pair.a] + self.motion[pair.b];
            bound >= da + db && bound > CONTACT_RESOLUTION_M
        });
        if !open || depth_row >= 2 + MAX_SPLIT_DEPTH {
            return;
        }
        let mut qm = [0.0; MAX_DOF];
        for j in 0..dof {
            qm[j] = 0.5 * (qa[j] + qb[j]);
        }
        self.evaluate(model, &qm[..dof], depth_row, None);
        if let Some(found) = self.nearest(model, depth_row, process, true) {
            if worst.is_none_or(|w| found.distance < w.distance) {
                *worst = Some(found);
            }
        }
        self.refine(model, qa, ra, &qm, depth_row, depth_row + 1, process, worst);
        self.refine(model, &qm, depth_row, qb, rb, depth_row + 1, process, worst);
    }

    /// Places every moving solid at `q` and writes the distances of all pairs (or of `only`)
    /// into `row`.
    fn evaluate(&mut self, model: &CellModel, q: &[f64], row: usize, only: Option<&[usize]>) {
        self.evaluations += 1;
        let mut frames = [Isometry3::identity(); MAX_DOF];
        let mut base_T_link = Isometry3::identity();
        for ((joint, &qi), slot) in model.chain.joints().iter().zip(q).zip(frames.iter_mut()) {
            let motion = joint.motion(qi);
            base_T_link = base_T_link * joint.parent_T_joint * motion;
            *slot = base_T_link;
        }
        for (i, p) in model.placed.iter().enumerate() {
            if let Some(f) = p.frame {
                self.world[i] = frames[f] * p.frame_T_shape;
                self.centres[i] = frames[f] * p.frame_centre;
            }
        }
        let dof = q.len();
        if let Some(last) = self.last_q {
            for (b, body) in model.bodies.iter().enumerate() {
                let mut m = 0.0;
                if body.frame.is_some() {
                    for j in 0..dof {
                        m += body.lever[j] * (q[j] - last[j]).abs();
                    }
                }
                self.step[b] = m;
            }
            for (spent, pair) in self.spent.iter_mut().zip(&model.pairs) {
                *spent += self.step[pair.a] + self.step[pair.b];
            }
        }
        let mut now = [0.0; MAX_DOF];
        now[..dof].copy_from_slice(q);
        self.last_q = Some(now);
        let n = self.npairs;
        match only {
            Some(list) => {
                for &p in list {
                    self.rows[row * n + p] = self.bounded_distance(model, p);
                }
            }
            None => {
                for p in 0..n {
                    self.rows[row * n + p] = self.bounded_distance(model, p);
                }
            }
        }
    }

    /// The distance of pair `p` at the configuration just placed, or a lower bound on it
    /// from its last measurement when that bound is far enough (see the module doc).
    #[inline]
    fn bounded_distance(&mut self, model: &CellModel, p: usize) -> f64 {
        let bound = self.anchor_d[p] - self.spent[p];
        if bound > self.exact_within {
            return bound;
        }
        let d = self.pair_distance(model, p);
        self.anchor_d[p] = d;
        self.spent[p] = 0.0;
        d
    }

    /// Smallest distance between the solids of a pair's two bodies (a lower bound for far
    /// solids, see [`EXACT_MARGIN_M`]).
    fn pair_distance(&mut self, model: &CellModel, p: usize) -> f64 {
        let pair = &model.pairs[p];
        let mut best = f64::INFINITY;
        for i in model.bodies[pair.a].solids.clone() {
            for j in model.bodies[pair.b].solids.clone() {
                let gap = (self.centres[i] - self.centres[j]).norm()
                    - model.placed[i].solid.radius
                    - model.placed[j].solid.radius;
                let d = if gap > self.exact_within {
                    gap
                } else {
                    self.exact(model, i, j)
                };
                best = best.min(d);
            }
        }
        best
    }

    /// Exact distance between two placed solids: GJK, and EPA for the penetration depth when
    /// they overlap (negative result); see [`CellProbe::mesh_distance`] when one is a mesh.
    fn exact(&mut self, model: &CellModel, i: usize, j: usize) -> f64 {
        let (si, sj) = (&model.placed[i].solid, &model.placed[j].solid);
        let (Some(g1), Some(g2)) = (si.support(), sj.support()) else {
            return self.mesh_distance(model, i, j);
        };
        let pos12 = self.world[i].inv_mul(&self.world[j]);
        let dir = Unit::try_new(pos12.translation.vector, 1e-12).unwrap_or_else(Vector3::x_axis);
        self.simplex
            .reset(CSOPoint::from_shapes(&pos12, g1, g2, &dir));
        match gjk::closest_points(&pos12, g1, g2, GJK_MAX_DIST, true, &mut self.simplex) {
            GJKResult::ClosestPoints(p1, p2, _) => (p2 - p1).norm(),
            GJKResult::Intersection if !self.depth_wanted => 0.0,
            GJKResult::Intersection => match self.epa.closest_points(&pos12, g1, g2, &self.simplex)
            {
                Some((p1, p2, n)) => (p2 - p1).dot(&n).min(0.0),
                // EPA gives up on degenerate touching: contact of unknown (tiny) depth.
                None => 0.0,
            },
            GJKResult::NoIntersection(_) | GJKResult::Proximity(_) => GJK_MAX_DIST,
        }
    }

    /// Distance between two placed solids of which at least one is a mesh surface. Crossing
    /// surfaces read 0 (contact; its depth is not measured on a mesh). A body lying wholly
    /// inside a closed mesh reads minus its distance to the surface: contact, with a depth
    /// that is at least that. Every result is a lower bound on the distance, as the
    /// between-samples rule needs.
    ///
    /// A convex solid against a mesh runs on armpath's own tree (see `mesh_tree`): exact
    /// within [`MESH_TOLERANCE_M`] below a need of `exact_within` plus [`EXACT_MARGIN_M`]
    /// and a lower bound of at least that beyond it (such a pair raises no finding, and its
    /// bound lasts [`EXACT_MARGIN_M`] of motion before it is measured again), starting from the triangle nearest at this pair's previous
    /// query; it allocates nothing. Two meshes go through parry's distance, whose tree
    /// traversal allocates its queue on each call: the one allocation left in the
    /// per-sample loop, made only for mesh–mesh pairs close enough to be measured.
    fn mesh_distance(&mut self, model: &CellModel, i: usize, j: usize) -> f64 {
        let (si, sj) = (&model.placed[i].solid, &model.placed[j].solid);
        let (wi, wj) = (self.world[i], self.world[j]);
        let convex = match (si.surface(), sj.surface(), si.support(), sj.support()) {
            (Some(mesh), None, None, Some(support)) => Some((mesh, support, i, j)),
            (None, Some(mesh), Some(support), None) => Some((mesh, support, j, i)),
            _ => None,
        };
        let mut tree_distance = |need: f64| {
            let (mesh, support, m, o) = convex?;
            let solid = Placed {
                support,
                ball: model.placed[o].solid.ball_radius(),
                rounded: model.placed[o].solid.rounded(),
                mesh_T_shape: self.world[m].inv_mul(&self.world[o]),
                centre: self.world[m].inverse_transform_point(&self.centres[o]),
                radius: model.placed[o].solid.radius,
            };
            let hint = &mut self.nearest_slot[o * self.nplaced + m];
            Some(mesh.tree().distance(&solid, need, hint, &mut self.simplex))
        };
        let need = self.exact_within + EXACT_MARGIN_M;
        // Every pairing of two meshes is supported by parry; an unsupported one would be a
        // parry change, and contact is the safe reading.
        let d = tree_distance(need)
            .unwrap_or_else(|| query::distance(&wi, si.shape(), &wj, sj.shape()).unwrap_or(0.0));
        if d <= 0.0 {
            return 0.0;
        }
        // Apart from the surface, a body is wholly on one side of it: one point tells which.
        let inside =
            |mesh: &Solid, at: &Isometry3<f64>, other: &Solid, other_at: &Isometry3<f64>| {
                mesh.surface().is_some_and(|s| {
                    s.contains(&at.inverse_transform_point(&(other_at * other.inner_point())))
                })
            };
        if inside(si, &wi, sj, &wj) || inside(sj, &wj, si, &wi) {
            // Inside, the depth is reported: a bound beyond the need is made exact.
            -if d >= need {
                tree_distance(f64::INFINITY).unwrap_or(d)
            } else {
                d
            }
        } else {
            d
        }
    }
}
