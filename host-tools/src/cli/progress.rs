//! The progress bar the command line draws for long library steps
//! (`station::lot::Progress`): on stderr, only when stdout is a terminal
//! and `--quiet` is not given.

use crate::station::lot::Progress;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::Mutex;

/// A terminal progress bar, or nothing when quiet or not on a terminal.
pub struct Bar {
    shown: bool,
    bar: Mutex<Option<ProgressBar>>,
}

impl Bar {
    /// A bar shown unless `quiet` or stdout is not a terminal.
    pub fn new(quiet: bool) -> Bar {
        Bar {
            shown: !quiet && std::io::stdout().is_terminal(),
            bar: Mutex::new(None),
        }
    }
}

impl Progress for Bar {
    fn begin(&self, len: usize, what: &str) {
        if !self.shown {
            return;
        }
        let bar = ProgressBar::with_draw_target(Some(len as u64), ProgressDrawTarget::stderr());
        if let Ok(style) = ProgressStyle::with_template("{msg} [{bar:40}] {pos}/{len} {eta}") {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_message(what.to_string());
        *self.bar.lock().unwrap_or_else(|e| e.into_inner()) = Some(bar);
    }

    fn advance(&self) {
        if let Some(bar) = self.bar.lock().unwrap_or_else(|e| e.into_inner()).as_ref() {
            bar.inc(1);
        }
    }

    fn end(&self) {
        if let Some(bar) = self.bar.lock().unwrap_or_else(|e| e.into_inner()).take() {
            bar.finish_and_clear();
        }
    }
}
