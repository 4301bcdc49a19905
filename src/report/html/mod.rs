//! The visual report: one self-contained HTML page with the verdict, the findings, plots
//! against path distance and against time, top and side views of the TCP path, every input
//! the check depends on (settings, tool, work frame, segments, arm configurations) and the
//! cautions.
//!
//! The page is built in two steps. While the path is walked, [`PlotData`] (a sample sink)
//! keeps a bounded digest of every sample; after the check, [`render_html`] draws the
//! figures with plotters (SVG) and writes the page around them. [`HtmlReport`] ties both to
//! an output file for the command line.

mod arm;
mod axes;
mod clearance;
mod data;
mod envelope;
mod figures;
mod inputs;
mod markup;
mod page;
mod places;
mod plots;
mod poses;
mod scene;
mod slider;
mod views;

pub use data::{
    position_at, Bucket, Envelope, PlotData, PlotJoint, Trace, TracePoint, WaypointAt, BUCKETS,
    TRACE_POINTS,
};
pub use markup::escape;
pub use page::MAX_ROWS;
pub use poses::{KeptPose, PoseKeeper, SLIDER_POSES};

use crate::error::{Error, Result};
use crate::job::Job;
use crate::output::OutputFile;
use crate::report::Report;
use crate::robot::Robot;
use crate::solve::{SampleRecord, SampleSink};
use std::io::Write;
use std::path::Path;

/// A setting for display: at most four decimals, trailing zeros dropped (limits given in
/// other units come back from SI with rounding noise: 59.99999999999999 reads as 60).
pub(crate) fn nice(v: f64) -> String {
    let t = format!("{v:.4}");
    let t = if t.contains('.') {
        t.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        t
    };
    if t == "-0" {
        "0".into()
    } else {
        t
    }
}

/// Render the page for a report and the plot data collected during its walk.
pub fn render_html(report: &Report, data: &PlotData) -> String {
    page::render(report, data)
}

/// `--html FILE`: the output is opened before the walk (a bad path fails early), the plot
/// data is collected during it, and the page is written atomically once the report exists.
pub struct HtmlReport {
    out: OutputFile,
    data: PlotData,
}

impl HtmlReport {
    /// Opens `path` for the page (`-` = standard output) and prepares the plot collector for
    /// `job`; an error names the file when it cannot be opened.
    pub fn create(path: &Path, job: &Job) -> Result<Self> {
        Ok(HtmlReport {
            out: OutputFile::create(path)?,
            data: PlotData::new(job),
        })
    }

    /// Write the page and move the file into place.
    pub fn finish(mut self, report: &Report) -> Result<()> {
        let page = render_html(report, &self.data);
        self.out
            .write_all(page.as_bytes())
            .map_err(|source| Error::Io {
                path: self.out.path().to_path_buf(),
                action: "writing",
                source,
            })?;
        self.out.commit()
    }
}

impl SampleSink for HtmlReport {
    fn begin(&mut self, robot: &Robot, estimated_samples: u64) {
        self.data.begin(robot, estimated_samples);
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        self.data.sample(robot, rec);
    }
    /// Nothing is written before [`HtmlReport::finish`]: only the collector starts over.
    fn restart(&mut self) {
        self.data.restart();
    }
}

#[cfg(test)]
mod tests {
    use super::nice;

    #[test]
    fn settings_read_without_rounding_noise() {
        // source: common practice (60 deg/s given in the file, 60 shown)
        assert_eq!(nice(59.99999999999999), "60");
        assert_eq!(nice(0.8), "0.8");
        assert_eq!(nice(0.01), "0.01");
        assert_eq!(nice(-0.00001), "0");
        assert_eq!(nice(1250.0), "1250");
    }
}
