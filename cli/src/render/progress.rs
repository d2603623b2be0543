//! Progress on stderr: a bar over replications (done, events per second, time left) and a spinner for searches.

use std::sync::atomic::{AtomicU64, Ordering};
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressStyle};
use layflow_models::sim::RepStats;
use layflow_models::study;

use crate::output::note;

/// A progress bar over replications that also shows the simulation speed.
///
/// It draws only when stderr is a terminal (indicatif's default) and never
/// with `quiet`, so piped or logged output stays clean.
pub struct Progress {
    bar: ProgressBar,
    events: AtomicU64,
    started: Instant,
}

impl Progress {
    /// A bar for `total` replications.
    pub fn new(total: u64, quiet: bool) -> Progress {
        Progress::with_noun(total, quiet, "replications")
    }

    /// A bar for `total` things called `noun` (e.g. "units").
    pub fn with_noun(total: u64, quiet: bool, noun: &str) -> Progress {
        let bar = if quiet { ProgressBar::hidden() } else { ProgressBar::new(total) };
        bar.set_style(
            ProgressStyle::with_template(&format!(
                "{{spinner}} {{prefix}} [{{bar:30}}] {{pos}}/{{len}} {noun}, {{msg}}, {{elapsed}} elapsed, ~{{eta}} left"
            ))
            .expect("valid progress template")
            .progress_chars("=> "),
        );
        Progress { bar, events: AtomicU64::new(0), started: Instant::now() }
    }

    /// Count `n` as done already (a resumed run), without touching the speed.
    pub fn advance(&self, n: u64) {
        self.bar.inc(n);
        self.bar.reset_eta();
    }

    /// Print a line above the bar (or plainly, when the bar is hidden but not quiet).
    pub fn println(&self, line: String) {
        if self.bar.is_hidden() {
            note!("{line}");
        } else {
            self.bar.println(line);
        }
    }

    /// Remove the bar.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}

impl study::Progress for Progress {
    /// What is running now, e.g. `layout proposed, demand ×1.2`.
    fn stage(&self, what: String) {
        self.bar.set_prefix(what);
    }

    /// Grow the total (sequential selection adds replications as it goes).
    fn add_total(&self, n: u64) {
        self.bar.inc_length(n);
    }

    /// One replication finished.
    fn done(&self, rep: &RepStats) {
        let events = self.events.fetch_add(rep.events, Ordering::Relaxed) + rep.events;
        let rate = events as f64 / self.started.elapsed().as_secs_f64().max(1e-9);
        self.bar.set_message(format!("{:.1} M events/s", rate / 1e6));
        self.bar.inc(1);
    }
}

/// A spinner for work with no known length (a layout search): the best found so far, and the time taken.
pub struct Spinner {
    bar: ProgressBar,
}

impl Spinner {
    /// A spinner labelled `what`; hidden with `quiet`.
    pub fn new(what: &str, quiet: bool) -> Spinner {
        let bar = if quiet { ProgressBar::hidden() } else { ProgressBar::new_spinner() };
        bar.set_style(
            ProgressStyle::with_template("{spinner} {prefix}: best {msg}, {elapsed} elapsed")
                .expect("valid progress template"),
        );
        bar.set_prefix(what.to_string());
        bar.enable_steady_tick(Duration::from_millis(120));
        Spinner { bar }
    }

    /// The best so far, as the user reads it.
    pub fn best(&self, shown: String) {
        self.bar.set_message(shown);
    }

    /// Remove the spinner.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}
