//! `armpath place`: its flags, the grid they describe, the outputs and the exit code (0 when
//! the best placement has no error findings, 1 when it has, 2 for bad input or usage).

use crate::flags::SettingFlags;
use crate::progress::PlaceProgress;
use armpath::error::{Error, Result};
use armpath::fix::place::{self, Axis, Grid, PlaceReport};
use armpath::output::{self, is_stdout, write_json};
use armpath::robot::load_urdf;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::time::Instant;

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
    let progress = PlaceProgress::new(
        std::io::stderr().is_terminal() && !is_stdout(a.json.as_deref()),
        placements as u64,
    );
    let started = Instant::now();
    let placements = place::search(&job, &robot, &grid, &options, &|| progress.tick())?;
    let seconds = started.elapsed().as_secs_f64();
    progress.finish();
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
        let svg = armpath::fix::placement_map(
            &cells,
            (grid.x.step, grid.y.step),
            job.units.length.name(),
            &title,
        )
        .map_err(|m| Error::usage("--map", format!("could not draw the map: {m}")))?;
        output::write_all(p, svg.as_bytes())?;
    }
    let report = PlaceReport {
        file: a.path.display().to_string(),
        length_unit: job.units.length.name(),
        angle_unit: job.units.angle.name(),
        placements: placements.len(),
        seconds,
        threads: rayon::current_num_threads(),
        best: place::best(&placements, a.best.max(1)),
        cautions: armpath::report::cautions_for(&job),
    };
    if !is_stdout(a.json.as_deref()) {
        output::print(&place::render_text(&report))?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &report)?;
    }
    Ok(report.exit_code() as u8)
}
