//! Progress reporting for long observation steps: an indicatif bar on stderr when it is a
//! terminal, nothing otherwise (and nothing in tests or under `--quiet`).

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// A progress handle shared by worker threads (`Sync`).
#[derive(Debug, Clone)]
pub struct Progress {
    bar: Option<ProgressBar>,
}

impl Progress {
    /// No output at all.
    pub fn hidden() -> Progress {
        Progress { bar: None }
    }

    /// A bar of `total` steps with a label, drawn only when stderr is a terminal and not quiet.
    pub fn new(total: u64, label: &str, quiet: bool) -> Progress {
        if quiet || !std::io::stderr().is_terminal() {
            return Progress::hidden();
        }
        let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr());
        if let Ok(style) =
            ProgressStyle::with_template("{msg:>24} [{bar:40}] {pos}/{len} ({eta} left)")
        {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_message(label.to_string());
        Progress { bar: Some(bar) }
    }

    /// Starts a new stage with its own length and label on the same handle.
    pub fn stage(&self, total: u64, label: &str) {
        if let Some(bar) = &self.bar {
            bar.reset();
            bar.set_length(total);
            bar.set_message(label.to_string());
        }
    }

    pub fn inc(&self, n: u64) {
        if let Some(bar) = &self.bar {
            bar.inc(n);
        }
    }

    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }
}
