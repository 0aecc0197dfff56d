//! Terminal progress bars: the command line's implementation of the library's
//! [`kugel::progress::Progress`]. Drawn on standard error only when it is a terminal and the
//! user did not ask for `--quiet`; otherwise every call is a no-op.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// One bar, reused across the stages of a command or run.
#[derive(Debug, Clone)]
pub struct TerminalProgress {
    bar: Option<ProgressBar>,
}

impl TerminalProgress {
    /// A bar that draws when standard error is a terminal and `quiet` is false.
    pub fn new(quiet: bool) -> TerminalProgress {
        if quiet || !std::io::stderr().is_terminal() {
            return TerminalProgress { bar: None };
        }
        let bar = ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::stderr());
        if let Ok(style) = ProgressStyle::with_template(
            "{prefix:>20} [{bar:36}] {pos}/{len} {elapsed_precise} (eta {eta}) {msg}",
        ) {
            bar.set_style(style.progress_chars("=> "));
        }
        TerminalProgress { bar: Some(bar) }
    }

    /// The command is over (successfully or not): clear the bar.
    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }
}

impl kugel::progress::Progress for TerminalProgress {
    fn stage(&self, label: &str, total: u64) {
        if let Some(bar) = &self.bar {
            bar.reset();
            bar.set_length(total);
            bar.set_prefix(label.to_string());
            bar.set_message(String::new());
        }
    }

    fn note(&self, message: &str) {
        if let Some(bar) = &self.bar {
            bar.set_message(message.to_string());
        }
    }

    fn advance(&self, units: u64) {
        if let Some(bar) = &self.bar {
            bar.inc(units);
        }
    }
}
