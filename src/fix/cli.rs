//! The `fix` and `place` subcommands: flags, outputs and exit codes (0 when the result has no
//! error findings, 1 when it has, 2 for bad input or usage, like `check`).

use super::place::{self, Axis, Grid};
use crate::error::{Error, Result};
use crate::flags::SettingFlags;
use crate::output::{self, is_stdout, write_json};
use crate::robot::load_urdf;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::time::Instant;

/// `armpath fix`.
#[derive(clap::Args, Debug)]
pub struct FixArgs {
    /// The path file (.yaml/.yml) or CSV waypoint file (.csv, with --robot and --speed).
    pub path: PathBuf,
    #[command(flatten)]
    pub settings: SettingFlags,
    /// Where to write the amended path file (default: NAME.fixed.yaml beside the input).
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write the result as JSON to FILE ('-' for standard output, replacing the text).
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
}

/// `armpath place`.
#[derive(clap::Args, Debug)]
pub struct PlaceArgs {
    /// The path file (.yaml/.yml) or CSV waypoint file (.csv, with --robot and --speed).
    pub path: PathBuf,
    #[command(flatten)]
    pub settings: SettingFlags,
    /// Offsets of the work frame along the base x axis, FROM:TO:STEP in the file's length unit.
    #[arg(long, value_name = "FROM:TO:STEP", allow_hyphen_values = true)]
    pub x: String,
    /// Offsets along the base y axis, FROM:TO:STEP in the file's length unit.
    #[arg(long, value_name = "FROM:TO:STEP", allow_hyphen_values = true)]
    pub y: String,
    /// Offsets along the base z axis, FROM:TO:STEP (default 0).
    #[arg(long, value_name = "FROM:TO:STEP", allow_hyphen_values = true)]
    pub z: Option<String>,
    /// Turns of the work frame about the base z axis through its origin, FROM:TO:STEP in the
    /// file's angle unit (default 0).
    #[arg(long, value_name = "FROM:TO:STEP", allow_hyphen_values = true)]
    pub yaw: Option<String>,
    /// Write every placement as CSV to FILE.
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
    /// Write the top-view map (SVG) to FILE.
    #[arg(long, value_name = "FILE")]
    pub map: Option<PathBuf>,
    /// How many of the best placements to list (default 5).
    #[arg(long, value_name = "N", default_value_t = 5)]
    pub best: usize,
    /// Write the best placements and the timing as JSON to FILE ('-' for standard output).
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
}

pub fn run_fix(a: FixArgs) -> Result<u8> {
    let out = a.out.clone().unwrap_or_else(|| super::default_out(&a.path));
    if out.as_os_str() == "-" {
        return Err(Error::usage(
            "--out",
            "the amended path must go to a file (it is read back and re-checked)",
        ));
    }
    let (job, options) = a.settings.load_job(
        &a.path,
        &[("--out", Some(&out)), ("--json", a.json.as_deref())],
    )?;
    let report = super::fix(&job, &out, &options)?;
    if !is_stdout(a.json.as_deref()) {
        output::print(&super::render_fix_text(&report))?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &report)?;
    }
    Ok(report.exit_code() as u8)
}

/// The JSON of `place`.
#[derive(serde::Serialize)]
struct PlaceReport<'a> {
    file: String,
    length_unit: &'static str,
    angle_unit: &'static str,
    placements: usize,
    seconds: f64,
    threads: usize,
    best: &'a [place::Placement],
    cautions: Vec<&'static str>,
}

pub fn run_place(a: PlaceArgs) -> Result<u8> {
    let grid = Grid {
        x: Axis::parse("--x", &a.x)?,
        y: Axis::parse("--y", &a.y)?,
        z: a.z
            .as_deref()
            .map(|t| Axis::parse("--z", t))
            .transpose()?
            .unwrap_or(Axis::ZERO),
        yaw: a
            .yaw
            .as_deref()
            .map(|t| Axis::parse("--yaw", t))
            .transpose()?
            .unwrap_or(Axis::ZERO),
    };
    let placements = grid.checked_len()?;
    let (job, options) = a.settings.load_job(
        &a.path,
        &[
            ("--csv", a.csv.as_deref()),
            ("--map", a.map.as_deref()),
            ("--json", a.json.as_deref()),
        ],
    )?;
    let robot = load_urdf(&job.robot, job.tip.as_deref())?;
    let bar = (std::io::stderr().is_terminal() && !is_stdout(a.json.as_deref())).then(|| {
        let b = indicatif::ProgressBar::new(placements as u64);
        b.set_style(
            indicatif::ProgressStyle::with_template(
                "placing {bar:32} {pos}/{len} placements · {elapsed} elapsed, ~{eta} left",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    });
    let started = Instant::now();
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let placements = place::search(&job, &robot, &grid, &options, &tick)?;
    let seconds = started.elapsed().as_secs_f64();
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    if let Some(p) = &a.csv {
        output::write_all(p, place::csv_text(&job, &placements).as_bytes())?;
    }
    if let Some(p) = &a.map {
        let cells = place::best_per_cell(&placements);
        let title = format!(
            "Placements of {} (top view, {} checked)",
            a.path
                .file_name()
                .map(|n| n.to_string_lossy())
                .unwrap_or_default(),
            placements.len()
        );
        let svg = super::placement_map(
            &cells,
            (grid.x.step, grid.y.step),
            job.units.length.name(),
            &title,
        )
        .map_err(|m| Error::usage("--map", format!("could not draw the map: {m}")))?;
        output::write_all(p, svg.as_bytes())?;
    }
    let best = place::best(&placements, a.best.max(1));
    let report = PlaceReport {
        file: a.path.display().to_string(),
        length_unit: job.units.length.name(),
        angle_unit: job.units.angle.name(),
        placements: placements.len(),
        seconds,
        threads: rayon::current_num_threads(),
        best: &best,
        cautions: crate::report::CAUTIONS.to_vec(),
    };
    if !is_stdout(a.json.as_deref()) {
        output::print(&place_text(&report))?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &report)?;
    }
    Ok(if best.first().is_some_and(|b| b.errors == 0) {
        0
    } else {
        1
    })
}

fn place_text(r: &PlaceReport<'_>) -> String {
    use std::fmt::Write;
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
