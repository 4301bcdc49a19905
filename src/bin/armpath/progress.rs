//! Progress bars on standard error for long runs: a sample sink for `check` and a counter of
//! finished placements for `place`.

use armpath::robot::Robot;
use armpath::solve::{SampleRecord, SampleSink};
use indicatif::{ProgressBar, ProgressStyle};

/// A bar in armpath's layout: `what` names the work, `unit` what is counted.
fn bar(len: u64, what: &str, unit: &str) -> ProgressBar {
    let b = ProgressBar::new(len);
    b.set_style(
        ProgressStyle::with_template(&format!(
            "{what} {{bar:32}} {{pos}}/{{len}} {unit} · {{elapsed}} elapsed, ~{{eta}} left"
        ))
        .unwrap_or_else(|_| ProgressStyle::default_bar()),
    );
    b
}

/// Progress on a terminal for long checks. Updated every 4,096 samples so that the bar's
/// internal lock stays out of the per-sample loop; hidden for short paths.
#[derive(Default)]
pub struct CheckProgress {
    bar: Option<ProgressBar>,
    count: u64,
}

impl CheckProgress {
    /// Paths below this many samples finish in well under a second: no bar.
    const MIN_SAMPLES: u64 = 200_000;
    const EVERY: u64 = 4096;

    /// Takes the bar off the terminal.
    pub fn finish(&mut self) {
        if let Some(b) = self.bar.take() {
            b.finish_and_clear();
        }
    }
}

impl SampleSink for CheckProgress {
    /// The bar is taken off (`begin` draws a new one) and the count starts again.
    fn restart(&mut self) {
        self.finish();
        self.count = 0;
    }
    fn begin(&mut self, _robot: &Robot, estimated_samples: u64) {
        if estimated_samples >= Self::MIN_SAMPLES {
            self.bar = Some(bar(estimated_samples, "checking", "samples"));
        }
    }
    fn sample(&mut self, _robot: &Robot, _rec: &SampleRecord) {
        self.count += 1;
        if self.count.is_multiple_of(Self::EVERY) {
            if let Some(b) = &self.bar {
                if self.count > b.length().unwrap_or(0) {
                    b.set_length(self.count);
                }
                b.set_position(self.count);
            }
        }
    }
}

/// Progress of `place`: one step per finished placement (from any worker thread).
pub struct PlaceProgress {
    bar: Option<ProgressBar>,
}

impl PlaceProgress {
    /// A bar over `placements` when `show`, else nothing is drawn.
    pub fn new(show: bool, placements: u64) -> Self {
        PlaceProgress {
            bar: show.then(|| bar(placements, "placing", "placements")),
        }
    }

    /// One placement finished.
    pub fn tick(&self) {
        if let Some(b) = &self.bar {
            b.inc(1);
        }
    }

    /// Takes the bar off the terminal.
    pub fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}
