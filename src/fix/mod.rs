//! From diagnosis to fix: search the levers a programmer has when a path fails and hand back
//! an amended path that passes.
//!
//! - [`speed`]: the largest TCP speed per segment from one check walk (joint and tool angular
//!   speeds scale with the TCP speed on a linear segment), and proposals where the programmed
//!   speed is too high (one speed over each run of process segments); where joints accelerate
//!   too hard, slower speeds with the accelerations scaled by the square of the factor.
//! - Configuration: from the check's configuration table (arms with a closed-form solver),
//!   the arm configuration that runs the whole path; when the one the check chose does not
//!   and another does, the amended file asks for it (`config:`).
//! - [`spin`]: with `tool.free_spin`, a spin angle about the tool z axis per sample, chosen
//!   together with the arm configuration by dynamic programming for the largest margins.
//! - [`blend`]: corner blends at waypoints where the TCP stops between two straight-line
//!   moves for nothing, kept when the re-check is better.
//! - [`place`]: the work frame moved over a grid of placements, each checked.
//!
//! `fix` re-checks the amended path in-process and reports before and after side by side.
//! The amended file is re-emitted from the job ([`emit`] explains the choices).

pub mod blend;
pub mod emit;
mod heatmap;
pub mod place;
pub mod speed;
pub mod spin;
mod text;

pub use heatmap::svg as placement_map;
pub use text::render_fix_text;

use crate::assess::Kind;
use crate::check::{check, CheckOptions, CheckOutcome, Verdict};
use crate::error::{Error, Result};
use crate::job::{self, Job, Overrides};
use crate::report::{Report, Summary};
use crate::robot::load_urdf;
use crate::solve::SampleSink;
use serde::Serialize;
use speed::{RatioSink, SegmentSpeed};
use std::path::{Path, PathBuf};

/// One segment's speed row in display units (the file's length unit per second).
#[derive(Debug, Clone, Serialize)]
pub struct SpeedRow {
    /// Segment index.
    pub segment: usize,
    /// Name of the waypoint the segment starts at.
    pub from: String,
    /// Name of the waypoint the segment ends at.
    pub to: String,
    /// Motion of the segment.
    pub motion: crate::job::Motion,
    /// A process segment (`process: true`: one speed along a run of them).
    pub process: bool,
    /// Programmed TCP speed.
    pub programmed: f64,
    /// Worst speed over allowed speed at the programmed speed (≤ 1 within limits).
    pub ratio: f64,
    /// Worst joint acceleration over allowed acceleration (≤ 1 within limits).
    pub acceleration_ratio: f64,
    /// What sets the ratio: a joint name, `tool angular speed`, or `-` when nothing moves.
    pub limited_by: String,
    /// Largest TCP speed within every limit, when the TCP speed sets it.
    pub max_speed: Option<f64>,
    /// Proposed TCP speed when the programmed one is too high.
    pub proposed: Option<f64>,
    /// Why no proposal could be made although the segment is too fast.
    pub note: Option<String>,
}

/// One proposed corner blend in display units.
#[derive(Debug, Clone, Serialize)]
pub struct BlendRow {
    /// Name of the waypoint the blend rounds.
    pub waypoint: String,
    /// Radius, in the file's length unit (`length_unit`).
    pub radius: f64,
    /// What set the radius: a cap or half of a neighbouring segment.
    pub bound: blend::RadiusBound,
    /// Turn between the two segments, in the file's angle unit.
    pub turn: f64,
    /// Lowest TCP speed in the blend as a share of the programmed speed, in %.
    pub lowest_speed_percent: f64,
    /// The corner lies inside a process (both neighbours are process segments).
    pub process: bool,
    /// Why this blend, in words.
    pub why: String,
}

/// What the configuration search found.
#[derive(Debug, Clone, Serialize)]
pub struct ConfigOutcome {
    /// The configuration the check followed (closed-form arms only).
    pub used: Option<String>,
    /// Configurations that run the whole path.
    pub running: Vec<String>,
    /// The configuration written into the amended file, when it differs from `used`.
    pub chosen: Option<String>,
}

/// The result of `armpath fix`.
#[derive(Debug, Clone, Serialize)]
pub struct FixReport {
    /// The path file fixed.
    pub file: String,
    /// The amended path file, when anything was amended.
    pub amended_file: Option<String>,
    /// Speed unit of `speeds` (`mm/s` or `m/s`).
    pub speed_unit: String,
    /// One row per segment.
    pub speeds: Vec<SpeedRow>,
    /// What the configuration search found.
    pub configuration: ConfigOutcome,
    /// Length unit of the blend radii (`mm` or `m`).
    pub length_unit: String,
    /// Corner blends proposed and kept in the amended file.
    pub blends: Vec<BlendRow>,
    /// Blends tried and not kept, and why: the waypoints left out when the rest was kept,
    /// or the re-check's counts when none was.
    pub blend_note: Option<String>,
    /// What the tool-spin search found (free-spin tools).
    pub spin: Option<spin::SpinOutcome>,
    /// Why a free-spin tool got no spin profile.
    pub spin_note: Option<String>,
    /// What was changed, one line each.
    pub changes: Vec<String>,
    /// The check of the programmed path.
    pub before: Summary,
    /// The re-check of the amended path (`None` when nothing was amended).
    pub after: Option<Summary>,
    /// Safety cautions, printed with every report.
    pub cautions: Vec<&'static str>,
}

impl FixReport {
    /// 0 when the amended path (or the original, if unchanged) has no error findings, else 1.
    pub fn exit_code(&self) -> i32 {
        let s = self.after.as_ref().unwrap_or(&self.before);
        if s.errors > 0 {
            1
        } else {
            0
        }
    }
}

/// Default amended-file name: `NAME.fixed.yaml` beside the input.
pub fn default_out(path: &Path) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "path".into());
    path.with_file_name(format!("{stem}.fixed.yaml"))
}

/// Check `job` with extra sinks (the robot is loaded from the job). An outcome with
/// non-finite numbers is refused, as `check` does.
fn run_check(
    job: &Job,
    options: &CheckOptions,
    sinks: &mut [&mut dyn SampleSink],
) -> Result<CheckOutcome> {
    let robot = load_urdf(&job.robot, job.tip.as_deref())?;
    let outcome = check(job, &robot, options, sinks)?;
    outcome.refuse_non_finite()?;
    Ok(outcome)
}

/// The summary of a check's report, for the before/after table.
fn summary(outcome: &CheckOutcome) -> Result<Summary> {
    Ok(Report::from_outcome(outcome)?.summary)
}

/// Run the fix search on `job` (loaded with any command-line overrides) and write the
/// amended path file to `out`. The amended file holds every setting and waypoint itself (a
/// CSV input's waypoints are written inline), so it is re-checked on its own. `out` must not
/// be one of the job's input files.
pub fn fix(job: &Job, out: &Path, options: &CheckOptions) -> Result<FixReport> {
    crate::output::refuse_overwrite(&crate::output::job_inputs(job), &[("--out", Some(out))])?;
    let path = job.source.as_path();
    let job = job.clone();
    let mut robot = load_urdf(&job.robot, job.tip.as_deref())?;
    let mut amended = job.clone();
    let mut changes = Vec::new();

    let before = run_check(&job, options, &mut [])?;
    let before_summary = summary(&before)?;
    // Spin first: it changes the orientations, hence the joint path the speeds come from. The
    // spun path is kept only when its check is better: fewer errors, or as many and a margin
    // larger by more than 0.01 (a tenth of the singularity-measure scale, so that rounding
    // noise does not replace the programmed orientations).
    let mut spin_outcome = None;
    let mut spin_note = None;
    let mut spun = false;
    if job.tool.free_spin {
        robot.set_tool(job.tool.tip_T_tcp);
        if let Some(mut s) = spin::search(&job, &robot, options)? {
            if s.changed {
                let trial = run_check(&s.job, options, &mut [])?;
                let (t, b) = (trial.errors(), before.errors());
                // A spin that makes the tool or arm hit something is no fix, whatever else
                // it improves.
                let no_new_contact = trial.collisions() <= before.collisions();
                if !no_new_contact {
                    s.outcome.collides = collision_pairs(&trial);
                }
                if no_new_contact && (t < b || (t == b && trial.margin() > before.margin() + 0.01))
                {
                    amended = s.job.clone();
                    spun = true;
                    s.outcome.applied = true;
                    changes.push(format!(
                        "tool spin about its z axis: {} … {} {} over the path, in configuration {} ({} waypoints, {} added)",
                        emit::num(s.outcome.min_spin, 1),
                        emit::num(s.outcome.max_spin, 1),
                        job.units.angle.name(),
                        s.outcome.config,
                        amended.waypoints.len(),
                        s.outcome.added_waypoints
                    ));
                }
            }
            spin_outcome = Some(s.outcome);
        } else {
            spin_note = Some(
                "no spin profile found: no configuration runs the path within the spin range and \
                 rates, the path is too long for the search (sample it more coarsely), or the arm \
                 has no closed-form solver"
                    .to_string(),
            );
        }
    }

    // The walk the speeds come from: the (possibly spun) path at the programmed speeds.
    let plan = crate::plan::plan(&amended, options.max_samples)?;
    let mut ratios = RatioSink::new(&amended, &plan);
    let base = if spun {
        run_check(&amended, options, &mut [&mut ratios])?
    } else {
        // Without a spin the same walk as the check before, with the ratio sink.
        run_check(&job, options, &mut [&mut ratios])?
    };
    robot.set_tool(amended.tool.tip_T_tcp);
    let speeds: Vec<SegmentSpeed> = speed::proposals(&amended, &plan, &robot, &ratios);

    // Configuration: keep the check's when it runs the path, else the first that does.
    let running = base.running();
    let used = base.start.config;
    let mut chosen = None;
    if !spun {
        if let Some(first) = first_without_new_contact(&amended, &running, &base, options)? {
            if used.is_none_or(|u| !running.contains(&u)) {
                set_config(&mut amended, first);
                changes.push(format!(
                    "arm configuration {first} (runs the whole path{})",
                    used.map(|u| format!("; {u} does not")).unwrap_or_default()
                ));
                chosen = Some(first);
            }
        }
    }

    let n_speed = speed::apply(&mut amended, &speeds);
    let l = job.units.length_to_m();
    for s in speeds.iter().filter(|s| s.proposed.is_some()) {
        if let Some(v) = s.proposed {
            if (v - s.programmed).abs() > 1e-12 {
                changes.push(format!(
                    "segment {} ({} → {}): speed {} → {} {}",
                    s.segment,
                    s.from,
                    s.to,
                    emit::num(s.programmed / l, 4),
                    emit::num(v / l, 4),
                    job.units.speed_name()
                ));
            }
        }
    }
    let _ = n_speed;
    if let Some(f2) = speed::acceleration_scale(&speeds) {
        scale_accelerations(&mut amended, f2, &mut changes);
    }

    // Blends last: they reshape the timing around corners only, and the speeds above stand
    // (a blend runs at most at the cruise rate, which the speed proposals bound).
    let amended_so_far = !changes.is_empty();
    let (blends, blend_note) =
        try_blends(&mut amended, &before, amended_so_far, options, &mut changes)?;

    let (amended_file, after) = if changes.is_empty() {
        (None, None)
    } else {
        let mut header = vec![
            format!("Amended by armpath fix from {}.", path.display()),
            "A simulated kinematic check is not a safety assessment: verify on the real cell, first runs at reduced speed.".to_string(),
        ];
        header.extend(changes.iter().map(|c| format!("- {c}")));
        let text = emit::path_file(&amended, &header)?;
        crate::output::write_all(out, text.as_bytes())?;
        let reloaded = job::load(out, &Overrides::default()).map_err(|e| {
            Error::input(
                out,
                "amended file",
                format!("the amended path could not be read back ({e}); please report this"),
            )
        })?;
        let after = summary(&run_check(&reloaded, options, &mut [])?)?;
        (Some(out.display().to_string()), Some(after))
    };
    Ok(FixReport {
        file: path.display().to_string(),
        amended_file,
        speed_unit: job.units.speed_name(),
        speeds: speeds
            .iter()
            .map(|s| SpeedRow {
                segment: s.segment,
                from: s.from.clone(),
                to: s.to.clone(),
                motion: s.motion,
                process: s.process,
                programmed: s.programmed / l,
                ratio: s.ratio,
                acceleration_ratio: s.acceleration_ratio,
                limited_by: s.limited_by.clone(),
                max_speed: s.max_speed.map(|v| v / l),
                proposed: s.proposed.map(|v| v / l),
                note: s.note.clone(),
            })
            .collect(),
        configuration: ConfigOutcome {
            used: used.map(|c| c.to_string()),
            running: running.iter().map(|c| c.to_string()).collect(),
            chosen: chosen.map(|c| c.to_string()),
        },
        length_unit: job.units.length.name().to_string(),
        blends: blends.iter().map(|b| blend_row(&amended, b)).collect(),
        blend_note,
        spin: spin_outcome,
        spin_note,
        changes,
        before: before_summary,
        after,
        cautions: crate::report::cautions_for(&job),
    })
}

/// Checks a set of corner blends may take: the whole set, then the set without the blends
/// next to segments that it made worse. Each is a full check; a third narrowing would mostly
/// chase the same corners again.
const BLEND_TRIALS: usize = 2;

/// Propose corner blends on `amended` (see [`blend`]) and keep them when the re-check is
/// better. The measure: no more `collision` findings, and fewer errors, or as many errors and
/// fewer warnings, than the path without them (the check `before` of the programmed path
/// when nothing else was amended, else a check of `amended`). Nothing is tried when that
/// path passes. When the whole set is not better, the blends next to a segment where it has
/// more findings (errors first, then warnings) are left out and the rest tried once more.
/// Returns the blends kept and a note on those tried and not kept.
fn try_blends(
    amended: &mut Job,
    before: &CheckOutcome,
    amended_so_far: bool,
    options: &CheckOptions,
    changes: &mut Vec<String>,
) -> Result<(Vec<blend::BlendProposal>, Option<String>)> {
    if !amended_so_far && before.verdict() == Verdict::Pass {
        return Ok((Vec::new(), None));
    }
    let mut candidates =
        blend::proposals(amended, &crate::plan::plan(amended, options.max_samples)?);
    if candidates.is_empty() {
        return Ok((Vec::new(), None));
    }
    let checked;
    let reference = if amended_so_far {
        checked = run_check(amended, options, &mut [])?;
        &checked
    } else {
        before
    };
    if reference.verdict() == Verdict::Pass {
        return Ok((Vec::new(), None));
    }
    let counts = |o: &CheckOutcome| (o.errors(), o.warnings());
    let mut left_out = Vec::new();
    let mut last_trial = (0, 0);
    for _ in 0..BLEND_TRIALS {
        let mut trial_job = amended.clone();
        blend::apply(&mut trial_job, &candidates);
        let trial = run_check(&trial_job, options, &mut [])?;
        if trial.collisions() <= reference.collisions() && counts(&trial) < counts(reference) {
            *amended = trial_job;
            changes.push(blend_change(amended, &candidates));
            let note = (!left_out.is_empty()).then(|| {
                format!(
                    "left out at {}: with blends there the path has more findings next to them",
                    left_out.join(", ")
                )
            });
            return Ok((candidates, note));
        }
        last_trial = counts(&trial);
        let worse = worse_segments(&trial, reference);
        let (keep, drop): (Vec<blend::BlendProposal>, Vec<_>) = candidates
            .iter()
            .partition(|b| !worse.contains(&(b.waypoint - 1)) && !worse.contains(&b.waypoint));
        if keep.is_empty() || drop.is_empty() {
            break;
        }
        left_out.extend(drop.iter().map(|b| amended.waypoint_name(b.waypoint)));
        candidates = keep;
    }
    Ok((
        Vec::new(),
        Some(format!(
            "blends at {} corners tried and not kept: with them the path has {} errors and {} \
             warnings, without them {} and {}",
            candidates.len() + left_out.len(),
            last_trial.0,
            last_trial.1,
            reference.errors(),
            reference.warnings()
        )),
    ))
}

/// Segments (sorted) on which `trial` has more errors than `reference`, or as many and more
/// warnings.
fn worse_segments(trial: &CheckOutcome, reference: &CheckOutcome) -> Vec<usize> {
    use std::collections::BTreeMap;
    let tally = |o: &CheckOutcome| {
        let mut per: BTreeMap<usize, (usize, usize)> = BTreeMap::new();
        for f in &o.findings {
            if let Some(k) = f.segment {
                let e = per.entry(k).or_default();
                match f.severity() {
                    crate::assess::Severity::Error => e.0 += 1,
                    crate::assess::Severity::Warning => e.1 += 1,
                }
            }
        }
        per
    };
    let old = tally(reference);
    tally(trial)
        .into_iter()
        .filter(|(k, n)| *n > old.get(k).copied().unwrap_or_default())
        .map(|(k, _)| k)
        .collect()
}

/// The change line for the blends kept.
fn blend_change(job: &Job, blends: &[blend::BlendProposal]) -> String {
    let l = job.units.length_to_m();
    let (small, large) = blends.iter().fold((f64::INFINITY, 0.0f64), |(a, b), p| {
        (a.min(p.radius), b.max(p.radius))
    });
    format!(
        "corner blends at {} waypoints, {} … {} {}: the TCP no longer stops there",
        blends.len(),
        emit::num(small / l, 4),
        emit::num(large / l, 4),
        job.units.length.name()
    )
}

/// The report row of blend `b` proposed on `job`, with its reason.
fn blend_row(job: &Job, b: &blend::BlendProposal) -> BlendRow {
    let (l, a) = (job.units.length_to_m(), job.units.angle_to_rad());
    let (unit, angle_unit) = (job.units.length.name(), job.units.angle.name());
    let turn = format!("turning {} {angle_unit}", emit::num(b.turn / a, 1));
    let share = b.lowest_speed_share * 100.0;
    let speed = if b.process {
        format!(
            "process corner {turn}: the TCP keeps {share:.1} % of the programmed speed \
             (within the {} % tolerance) instead of stopping",
            emit::num(job.limits.process_speed_tolerance * 100.0, 2)
        )
    } else {
        format!("travel corner {turn}: the TCP keeps moving instead of stopping")
    };
    let segment = |k: usize| {
        format!(
            "half of segment {} → {}",
            job.waypoint_name(k),
            job.waypoint_name(k + 1)
        )
    };
    let bound = match b.bound {
        blend::RadiusBound::ProcessCap => format!(
            "the process cap of {} {unit}",
            emit::num(blend::PROCESS_BLEND_CAP / l, 4)
        ),
        blend::RadiusBound::TravelCap => format!(
            "the travel cap of {} {unit}",
            emit::num(blend::TRAVEL_BLEND_CAP / l, 4)
        ),
        blend::RadiusBound::HalfBefore => segment(b.waypoint - 1),
        blend::RadiusBound::HalfAfter => segment(b.waypoint),
    };
    BlendRow {
        waypoint: job.waypoint_name(b.waypoint),
        radius: b.radius / l,
        bound: b.bound,
        turn: b.turn / a,
        lowest_speed_percent: share,
        process: b.process,
        why: format!("{speed}; radius set by {bound}"),
    }
}

/// Scale the TCP and tool angular accelerations of `job` by `f2` (rounded down to three
/// significant digits in the file's units, never below the accepted minimum) and note it.
fn scale_accelerations(job: &mut Job, f2: f64, changes: &mut Vec<String>) {
    let (l, a) = (job.units.length_to_m(), job.units.angle_to_rad());
    let lim = &mut job.limits;
    let (tcp0, tool0) = (lim.tcp_acceleration, lim.tool_angular_acceleration);
    let tcp = (speed::round_down_3(tcp0 * f2 / l) * l).max(job::TCP_ACCELERATION_RANGE_M_S2.0);
    let tool = (speed::round_down_3(tool0 * f2 / a) * a)
        .max(job::TOOL_ANGULAR_ACCELERATION_RANGE_RAD_S2.0);
    lim.tcp_acceleration = tcp;
    lim.tool_angular_acceleration = tool;
    changes.push(format!(
        "accelerations: TCP {} → {} {}/s², tool {} → {} {}/s² (joint accelerations too high: \
         the slower speeds and these accelerations run the same path {:.2}× slower in time)",
        emit::num(tcp0 / l, 4),
        emit::num(tcp / l, 4),
        job.units.length.name(),
        emit::num(tool0 / a, 4),
        emit::num(tool / a, 4),
        job.units.angle.name(),
        1.0 / f2.sqrt()
    ));
}

/// The body pairs of `outcome`'s collision findings, `"a ⟷ b"`, each once, in path order.
fn collision_pairs(outcome: &CheckOutcome) -> Vec<String> {
    let mut pairs: Vec<String> = Vec::new();
    for f in outcome
        .findings
        .iter()
        .filter(|f| f.kind == Kind::Collision)
    {
        if let Some([a, b]) = &f.bodies {
            let pair = format!("{a} ⟷ {b}");
            if !pairs.contains(&pair) {
                pairs.push(pair);
            }
        }
    }
    pairs
}

/// The first of the `running` configurations (which run the whole path) whose check has no
/// more collisions than `base`'s: without a cell model the first one; with one, each is
/// checked in turn (the configuration table walks without the cell). `None` when none does.
fn first_without_new_contact(
    job: &Job,
    running: &[crate::ik::analytic::Config],
    base: &CheckOutcome,
    options: &CheckOptions,
) -> Result<Option<crate::ik::analytic::Config>> {
    if base.cell.is_none() {
        return Ok(running.first().copied());
    }
    for &c in running {
        let mut trial = job.clone();
        set_config(&mut trial, c);
        let outcome = run_check(&trial, options, &mut [])?;
        if outcome.collisions() <= base.collisions() {
            return Ok(Some(c));
        }
    }
    Ok(None)
}

/// Ask for configuration `config` in the amended job. `start_joints` would override it, so
/// they are dropped.
pub(crate) fn set_config(job: &mut Job, config: crate::ik::analytic::Config) {
    job.config = crate::job::ConfigRequest::exactly(config);
    job.start_joints = None;
}
