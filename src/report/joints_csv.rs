//! The joint trajectory as CSV, streamed while the path is walked:
//! `t_s,s_mm,segment,<joint>_deg...` (`<joint>_mm` for prismatic joints), one row per sample.

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
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        use std::fmt::Write as _;
        if self.error.is_some() {
            return;
        }
        self.line.clear();
        if !self.header_written {
            self.line.push_str("t_s,s_mm,segment");
            for j in robot.joints() {
                let _ = write!(self.line, ",{}_{}", j.name, joint_unit(j.kind));
            }
            self.line.push('\n');
            self.header_written = true;
        }
        let _ = write!(self.line, "{:.6},{:.4},{}", rec.t, rec.s * 1e3, rec.segment);
        for (j, q) in robot.joints().iter().zip(rec.joints.iter()) {
            let _ = write!(self.line, ",{:.6}", joint_display(j.kind, *q));
        }
        self.line.push('\n');
        if let Err(e) = self.out.write_all(self.line.as_bytes()) {
            self.error = Some(e);
        }
    }
}
