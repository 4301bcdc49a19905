//! `armpath fix`: its flags, the amended file's place, the outputs and the exit code (0 when
//! the amended path has no error findings, 1 when it has, 2 for bad input or usage).

use crate::flags::SettingFlags;
use armpath::error::{Error, Result};
use armpath::output::{self, is_stdout, write_json};
use std::path::PathBuf;

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

pub fn run_fix(a: FixArgs) -> Result<u8> {
    let out = a
        .out
        .clone()
        .unwrap_or_else(|| armpath::fix::default_out(&a.path));
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
    let report = armpath::fix::fix(&job, &out, &options)?;
    if !is_stdout(a.json.as_deref()) {
        output::print(&armpath::fix::render_fix_text(&report))?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &report)?;
    }
    Ok(report.exit_code() as u8)
}
