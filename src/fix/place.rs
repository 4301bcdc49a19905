//! Placement search: the work frame moved over a grid of offsets, the path checked at each.
//!
//! Offsets are given in the path file's units and added to `work_frame`: `dx, dy, dz` to its
//! origin in the robot base frame, `dyaw` as a turn about the base z axis through the
//! work-frame origin (the part turned on the table, the path turning with it). Every
//! placement is a full check (closed-form configuration table and the walk, no sinks), run in
//! parallel over the cores with `rayon`; the checks are independent, so the result does not
//! depend on the number of threads.
//!
//! Ranking: verdict first (pass, then warn, then fail), then fewer collisions (a placement
//! where the arm or tool hits the cell is worse than any other failure), then fewer errors,
//! then the larger
//! margin ([`crate::solve::margin`] of the smallest limit ratio and the smallest singularity
//! measure, the score the start-pose choice ranks with),
//! then the smaller offset (the placement closest to the programmed one).

use crate::check::Verdict;
use crate::check::{check, CheckOptions};
use crate::error::{Error, Result};
use crate::job::Job;
use crate::robot::Robot;
use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};
use rayon::prelude::*;
use std::fmt::Write;

/// Grids with more placements than this are refused: at a few milliseconds per check on the
/// demo paths, 100 000 placements already take minutes; a finer grid should be a second,
/// narrower run around the best placements of a coarse one.
pub const MAX_PLACEMENTS: usize = 100_000;

/// A grid axis `FROM:TO:STEP` in file units (deg or rad for yaw).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Axis {
    /// First value.
    pub from: f64,
    /// Last value (included when the steps land on it).
    pub to: f64,
    /// Step between values.
    pub step: f64,
}

impl Axis {
    /// Just the value 0 (an axis not searched).
    pub const ZERO: Axis = Axis {
        from: 0.0,
        to: 0.0,
        step: 1.0,
    };

    /// Parse `FROM:TO:STEP` (FROM ≤ TO, STEP > 0), or a single value `V`. `option` names the
    /// flag in messages.
    pub fn parse(option: &str, text: &str) -> Result<Axis> {
        let parts: Vec<&str> = text.split(':').map(str::trim).collect();
        let bad = |what: String| {
            Error::usage(
                option,
                format!("'{text}' {what}: give FROM:TO:STEP, e.g. -100:100:10, or one value"),
            )
        };
        let nums: Vec<f64> = parts
            .iter()
            .map(|p| {
                p.parse::<f64>()
                    .ok()
                    .filter(|v| v.is_finite())
                    .ok_or_else(|| bad(format!("has '{p}', which is not a finite number")))
            })
            .collect::<Result<_>>()?;
        let axis = match nums.as_slice() {
            [v] => Axis {
                from: *v,
                to: *v,
                step: 1.0,
            },
            [f, t, s] => Axis {
                from: *f,
                to: *t,
                step: *s,
            },
            _ => return Err(bad(format!("has {} parts", nums.len()))),
        };
        if axis.step <= 0.0 {
            return Err(bad("has a step that is not positive".into()));
        }
        if axis.from > axis.to {
            return Err(bad("runs from a larger to a smaller value".into()));
        }
        if (axis.to - axis.from) / axis.step > MAX_PLACEMENTS as f64 {
            return Err(bad(format!("has more than {MAX_PLACEMENTS} values")));
        }
        Ok(axis)
    }

    /// The values FROM, FROM + STEP, … up to TO (TO included when on the grid, within a
    /// millionth of a step to absorb decimal rounding).
    pub fn values(&self) -> Vec<f64> {
        (0..self.count())
            .map(|i| self.from + self.step * i as f64)
            .collect()
    }

    /// Number of values, without making them (at most `MAX_PLACEMENTS + 1` after `parse`).
    pub fn count(&self) -> u64 {
        ((self.to - self.from) / self.step + 1e-6).floor() as u64 + 1
    }
}

/// One placement: offsets in file units and the check's result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Placement {
    /// Offset along the base x axis (file length unit).
    pub dx: f64,
    /// Offset along the base y axis (file length unit).
    pub dy: f64,
    /// Offset along the base z axis (file length unit).
    pub dz: f64,
    /// Turn about the base z axis (file angle unit).
    pub dyaw: f64,
    /// Verdict of the check at this placement.
    pub verdict: Verdict,
    /// Error findings.
    pub errors: usize,
    /// `collision` findings (also counted in `errors`).
    pub collisions: usize,
    /// Warning findings.
    pub warnings: usize,
    /// Smallest singularity measure along the path (0 singular … 1).
    pub min_singularity: Option<f64>,
    /// Smallest joint-limit margin over half the joint's range (1 = mid-range).
    pub min_limit_margin: Option<f64>,
    /// Ranking margin (see module docs); larger is better.
    pub score: f64,
}

impl Placement {
    fn verdict_rank(&self) -> u8 {
        match self.verdict {
            Verdict::Pass => 2,
            Verdict::Warn => 1,
            Verdict::Fail => 0,
        }
    }

    /// Is `self` a better placement than `other`?
    pub fn better_than(&self, other: &Placement) -> bool {
        self.rank_cmp(other) == std::cmp::Ordering::Greater
    }

    /// Ordering by the ranking of the module docs (Greater = better).
    pub fn rank_cmp(&self, other: &Placement) -> std::cmp::Ordering {
        let dist = |p: &Placement| p.dx * p.dx + p.dy * p.dy + p.dz * p.dz + p.dyaw * p.dyaw;
        self.verdict_rank()
            .cmp(&other.verdict_rank())
            .then(other.collisions.cmp(&self.collisions))
            .then(other.errors.cmp(&self.errors))
            .then(self.score.total_cmp(&other.score))
            .then(dist(other).total_cmp(&dist(self)))
    }
}

/// The grid of a search, file units.
#[derive(Debug, Clone, Copy)]
pub struct Grid {
    /// Offsets along x.
    pub x: Axis,
    /// Offsets along y.
    pub y: Axis,
    /// Offsets along z.
    pub z: Axis,
    /// Turns about z.
    pub yaw: Axis,
}

impl Grid {
    /// Number of placements, exact: four axes of up to `MAX_PLACEMENTS + 1` values each
    /// multiply to less than 2¹²⁸.
    pub fn count(&self) -> u128 {
        [self.x, self.y, self.z, self.yaw]
            .iter()
            .map(|a| u128::from(a.count()))
            .product()
    }

    /// The placement count when it is within [`MAX_PLACEMENTS`], else a usage error showing
    /// the true count and the cap.
    pub fn checked_len(&self) -> Result<usize> {
        let n = self.count();
        if n > MAX_PLACEMENTS as u128 {
            return Err(Error::usage(
                "--x/--y/--z/--yaw",
                format!(
                    "the grid has {n} placements, more than {MAX_PLACEMENTS}: use coarser steps or narrower ranges"
                ),
            ));
        }
        Ok(n as usize)
    }
}

/// The job with the work frame moved by the offsets (file units).
pub fn moved(job: &Job, dx: f64, dy: f64, dz: f64, dyaw: f64) -> Job {
    let l = job.units.length_to_m();
    let a = job.units.angle_to_rad();
    let mut j = job.clone();
    let w = job.base_T_work;
    let origin = w.translation.vector + Vector3::new(dx, dy, dz) * l;
    let turn = UnitQuaternion::from_axis_angle(&Vector3::z_axis(), dyaw * a);
    j.base_T_work = Isometry3::from_parts(Translation3::from(origin), turn * w.rotation);
    // The part moved: given start joints no longer stand on the first waypoint, they guide
    // the first pose's solution only.
    if let Some(sj) = &mut j.start_joints {
        sj.seed = true;
    }
    j
}

/// Check every placement of `grid`; `tick` is called once per finished placement (from any
/// thread). Placements come back in grid order (x slowest, yaw fastest).
pub fn search(
    job: &Job,
    robot: &Robot,
    grid: &Grid,
    options: &CheckOptions,
    tick: &(dyn Fn() + Sync),
) -> Result<Vec<Placement>> {
    let mut points = Vec::with_capacity(grid.checked_len()?);
    for &dx in &grid.x.values() {
        for &dy in &grid.y.values() {
            for &dz in &grid.z.values() {
                for &dyaw in &grid.yaw.values() {
                    points.push((dx, dy, dz, dyaw));
                }
            }
        }
    }
    points
        .par_iter()
        .map(|&(dx, dy, dz, dyaw)| {
            let j = moved(job, dx, dy, dz, dyaw);
            let outcome = check(&j, robot, options, &mut []);
            tick();
            let outcome = outcome?;
            // Refuse a check with non-finite numbers, as `check` does.
            outcome.refuse_non_finite()?;
            let (ratio, measure) = outcome.margin_terms();
            // A placement without any measured term ranks lowest; a limit ratio alone is taken
            // as it is.
            let score = match (ratio, measure) {
                (None, None) => 0.0,
                (Some(a), None) => a,
                (_, Some(_)) => outcome.margin(),
            };
            Ok(Placement {
                dx,
                dy,
                dz,
                dyaw,
                verdict: outcome.verdict(),
                errors: outcome.errors(),
                collisions: outcome.collisions(),
                warnings: outcome.warnings(),
                min_singularity: measure,
                min_limit_margin: ratio,
                score,
            })
        })
        .collect()
}

/// The placements as CSV text (file units; a header line first).
pub fn csv_text(job: &Job, placements: &[Placement]) -> String {
    let (l, a) = (job.units.length.name(), job.units.angle.name());
    let mut out = format!(
        "dx_{l},dy_{l},dz_{l},dyaw_{a},verdict,errors,warnings,min_singularity,min_limit_margin_ratio,score\n"
    );
    let o = |v: Option<f64>| v.map(|x| format!("{x:.6}")).unwrap_or_default();
    for p in placements {
        let _ = writeln!(
            out,
            "{},{},{},{},{},{},{},{},{},{:.6}",
            super::emit::num(p.dx, 9),
            super::emit::num(p.dy, 9),
            super::emit::num(p.dz, 9),
            super::emit::num(p.dyaw, 9),
            p.verdict.name(),
            p.errors,
            p.warnings,
            o(p.min_singularity),
            o(p.min_limit_margin),
            p.score
        );
    }
    out
}

/// The best `n` placements, best first.
pub fn best(placements: &[Placement], n: usize) -> Vec<Placement> {
    let mut v = placements.to_vec();
    v.sort_by(|a, b| b.rank_cmp(a));
    v.truncate(n);
    v
}

/// The best placement of each (dx, dy) cell over z and yaw, for the top view.
pub fn best_per_cell(placements: &[Placement]) -> Vec<Placement> {
    let mut cells: Vec<Placement> = Vec::new();
    for p in placements {
        match cells.iter_mut().find(|c| c.dx == p.dx && c.dy == p.dy) {
            Some(c) => {
                if p.better_than(c) {
                    *c = p.clone();
                }
            }
            None => cells.push(p.clone()),
        }
    }
    cells
}

/// The result of `armpath place`: the best placements and how long the search took.
#[derive(Debug, Clone, serde::Serialize)]
pub struct PlaceReport {
    /// The path file searched, as given.
    pub file: String,
    /// Length unit of the offsets (the path file's).
    pub length_unit: &'static str,
    /// Angle unit of the yaw offsets (the path file's).
    pub angle_unit: &'static str,
    /// Placements checked.
    pub placements: usize,
    /// Wall-clock time of the search (s).
    pub seconds: f64,
    /// Worker threads the search ran on.
    pub threads: usize,
    /// The best placements, best first.
    pub best: Vec<Placement>,
    /// The cautions every report carries.
    pub cautions: Vec<&'static str>,
}

impl PlaceReport {
    /// Exit code of `place`: 0 when the best placement runs the path without errors, else 1.
    pub fn exit_code(&self) -> i32 {
        if self.best.first().is_some_and(|b| b.errors == 0) {
            0
        } else {
            1
        }
    }
}

/// Terminal text of `armpath place`: the best placements as a table, then the cautions.
pub fn render_text(r: &PlaceReport) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "armpath place  {}\n{} checked in {:.2} s on {}\n",
        crate::report::visible(&r.file),
        crate::report::count(r.placements, "placement"),
        r.seconds,
        crate::report::count(r.threads, "thread")
    );
    let (l, a) = (r.length_unit, r.angle_unit);
    let _ = writeln!(
        out,
        "  {:>4} {:>10} {:>10} {:>10} {:>10}  {:<7} {:>6} {:>8} {:>12} {:>12}",
        "rank",
        format!("dx {l}"),
        format!("dy {l}"),
        format!("dz {l}"),
        format!("dyaw {a}"),
        "verdict",
        "errors",
        "warnings",
        "singularity",
        "limit margin"
    );
    let o = |v: Option<f64>| v.map(|x| format!("{x:.4}")).unwrap_or_else(|| "-".into());
    for (i, p) in r.best.iter().enumerate() {
        let _ = writeln!(
            out,
            "  {:>4} {:>10} {:>10} {:>10} {:>10}  {:<7} {:>6} {:>8} {:>12} {:>12}",
            i + 1,
            super::emit::num(p.dx, 3),
            super::emit::num(p.dy, 3),
            super::emit::num(p.dz, 3),
            super::emit::num(p.dyaw, 3),
            p.verdict.name(),
            p.errors,
            p.warnings,
            o(p.min_singularity),
            o(p.min_limit_margin)
        );
    }
    if r.best.first().is_none_or(|b| b.errors > 0) {
        let _ = writeln!(out, "\nNo placement of the grid runs the path without errors: widen the grid or change the path.");
    }
    let _ = writeln!(out);
    for c in &r.cautions {
        let _ = writeln!(out, "caution: {c}");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn placement(dx: f64, errors: usize) -> Placement {
        Placement {
            dx,
            dy: 0.0,
            dz: 0.0,
            dyaw: 0.0,
            verdict: if errors == 0 {
                Verdict::Pass
            } else {
                Verdict::Fail
            },
            errors,
            collisions: 0,
            warnings: 0,
            min_singularity: Some(0.5),
            min_limit_margin: None,
            score: 1.0,
        }
    }

    #[test]
    fn a_placement_that_collides_ranks_below_other_failures() {
        // One collision (one error) against three joint-limit errors: the colliding
        // placement is worse, whatever its error count.
        // source: common practice (a placement where the tool hits the part is no fix)
        let mut hits = placement(0.0, 1);
        hits.collisions = 1;
        let stretched = placement(50.0, 3);
        assert!(stretched.better_than(&hits));
        assert!(!hits.better_than(&stretched));
        // Without collisions the error count decides, as before.
        assert!(placement(50.0, 1).better_than(&placement(0.0, 3)));
    }

    fn report(best: Vec<Placement>) -> PlaceReport {
        PlaceReport {
            file: "cell.yaml".into(),
            length_unit: "mm",
            angle_unit: "deg",
            placements: 9,
            seconds: 0.25,
            threads: 2,
            best,
            cautions: crate::report::CAUTIONS.to_vec(),
        }
    }

    #[test]
    fn exit_code_and_text_follow_the_best_placement() {
        // source: common practice (exit 0 without error findings, 1 with them, as `check`)
        let good = report(vec![placement(100.0, 0), placement(0.0, 2)]);
        assert_eq!(good.exit_code(), 0);
        let text = render_text(&good);
        assert!(
            text.contains("9 placements checked in 0.25 s on 2 threads"),
            "{text}"
        );
        assert!(!text.contains("No placement of the grid"), "{text}");
        // One table row per listed placement, ranked from 1.
        let rows: Vec<&str> = text
            .lines()
            .filter(|l| {
                l.starts_with("  ") && l.trim_start().starts_with(|c: char| c.is_ascii_digit())
            })
            .collect();
        assert_eq!(rows.len(), 2, "{text}");
        assert!(rows[0].trim_start().starts_with("1 ") && rows[0].contains("100"));
        assert!(rows[1].contains(" fail "), "{text}");
        for c in crate::report::CAUTIONS {
            assert!(text.contains(&format!("caution: {c}")));
        }

        let bad = report(vec![placement(0.0, 1)]);
        assert_eq!(bad.exit_code(), 1);
        assert!(render_text(&bad).contains("No placement of the grid runs the path"));
        assert_eq!(report(Vec::new()).exit_code(), 1);
    }
}
