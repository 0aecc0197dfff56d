//! Progress display for long steps: an indicatif bar on stderr when it is a terminal, nothing
//! otherwise or with `--quiet`.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// A stage counter ("[3/7] fitting halyard …").
pub struct Progress {
    bar: ProgressBar,
}

impl Progress {
    /// A bar over `stages` stages; hidden when `quiet` or stderr is not a terminal.
    pub fn new(quiet: bool, stages: u64) -> Progress {
        let bar = ProgressBar::new(stages);
        if quiet || !std::io::stderr().is_terminal() {
            bar.set_draw_target(ProgressDrawTarget::hidden());
        } else {
            bar.set_style(
                ProgressStyle::with_template("[{pos}/{len}] {elapsed_precise} {bar:30} {msg}")
                    .unwrap_or_else(|_| ProgressStyle::default_bar()),
            );
        }
        Progress { bar }
    }

    /// Starts the next stage (the previous one counts as done).
    pub fn stage(&self, message: &str) {
        if !self.bar.message().is_empty() {
            self.bar.inc(1);
        }
        self.bar.set_message(message.to_string());
    }

    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}
