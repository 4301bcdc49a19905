//! The joint trajectory as CSV, streamed while the path is walked, one row per sample:
//! `t_s,s_mm,segment,<joint>_deg...` (`<joint>_mm` for prismatic joints), then each joint's
//! speed `<joint>_deg_s...` and acceleration `<joint>_deg_s2...` (`mm_s`, `mm_s2`), then the
//! commanded TCP speed `tcp_mm_s`. Speeds are averages over the interval ending at the row,
//! accelerations are taken between neighbouring intervals; both are 0 where unknown (first
//! row, across a jump or an unreachable sample).

use super::{joint_display, joint_unit};
use crate::error::{Error, Result};
use crate::output::OutputFile;
use crate::robot::Robot;
use crate::solve::{SampleRecord, SampleSink};
use std::io::Write;
use std::path::Path;

/// A [`SampleSink`] writing the joint CSV. Write errors are kept and reported by
/// [`JointsCsv::finish`], so the walk itself never fails on I/O.
pub struct JointsCsv {
    out: OutputFile,
    error: Option<std::io::Error>,
    header_written: bool,
    /// Reused line buffer: no allocation per row once it has grown.
    line: String,
}

impl JointsCsv {
    /// Opens `path` for the CSV (`-` = standard output); the header is written with the first
    /// sample. An error names the file when it cannot be opened.
    pub fn create(path: &Path) -> Result<Self> {
        Ok(JointsCsv {
            out: OutputFile::create(path)?,
            error: None,
            header_written: false,
            line: String::with_capacity(256),
        })
    }

    /// Flush and move the file into place, or report the first write error.
    pub fn finish(self) -> Result<()> {
        if let Some(source) = self.error {
            return Err(Error::Io {
                path: self.out.path().to_path_buf(),
                action: "writing",
                source,
            });
        }
        self.out.commit()
    }
}

impl SampleSink for JointsCsv {
    /// The temporary file is emptied; the header is written again with the next sample.
    fn restart(&mut self) {
        self.header_written = false;
        self.error = self.out.rewind().err();
    }
    /// Only a CSV written to a temporary file (not standard output or a device) can be
    /// taken back.
    fn restartable(&self) -> bool {
        self.out.rewindable()
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        use std::fmt::Write as _;
        if self.error.is_some() {
            return;
        }
        self.line.clear();
        if !self.header_written {
            self.line.push_str("t_s,s_mm,segment");
            for suffix in ["", "_s", "_s2"] {
                for j in robot.joints() {
                    let _ = write!(self.line, ",{}_{}{suffix}", j.name, joint_unit(j.kind));
                }
            }
            self.line.push_str(",tcp_mm_s\n");
            self.header_written = true;
        }
        let _ = write!(self.line, "{:.6},{:.4},{}", rec.t, rec.s * 1e3, rec.segment);
        for values in [&rec.joints, &rec.joint_speed, &rec.joint_acceleration] {
            for (j, q) in robot.joints().iter().zip(values.iter()) {
                let _ = write!(self.line, ",{:.6}", joint_display(j.kind, *q));
            }
        }
        let _ = writeln!(self.line, ",{:.4}", rec.tcp_speed * 1e3);
        if let Err(e) = self.out.write_all(self.line.as_bytes()) {
            self.error = Some(e);
        }
    }
}
