//! Progress bars on stderr for the command line (indicatif). Hidden with `--quiet`
//! and when stderr is not a terminal (indicatif draws nothing there).

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::sync::Mutex;
use std::time::Duration;

use crate::progress::Progress;

/// A [`Progress`] that draws one bar per stage on stderr.
pub struct Bars {
    quiet: bool,
    current: Mutex<Option<ProgressBar>>,
}

impl Bars {
    /// Bars on stderr, or nothing when `quiet`.
    pub fn new(quiet: bool) -> Self {
        Bars {
            quiet,
            current: Mutex::new(None),
        }
    }
}

impl Progress for Bars {
    fn begin(&self, stage: &str, total: u64) {
        if self.quiet {
            return;
        }
        let bar = if total > 0 {
            ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr())
        } else {
            ProgressBar::with_draw_target(None, ProgressDrawTarget::stderr())
        };
        let style = if total > 0 {
            ProgressStyle::with_template("{msg:>26} [{bar:30}] {pos}/{len} ({elapsed})")
        } else {
            ProgressStyle::with_template("{msg:>26} {spinner} ({elapsed})")
        };
        if let Ok(style) = style {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_message(stage.to_string());
        bar.enable_steady_tick(Duration::from_millis(200));
        if let Ok(mut slot) = self.current.lock() {
            if let Some(old) = slot.replace(bar) {
                old.finish_and_clear();
            }
        }
    }

    fn advance(&self, done: u64) {
        if let Ok(slot) = self.current.lock() {
            if let Some(bar) = slot.as_ref() {
                bar.set_position(done);
            }
        }
    }

    fn end(&self) {
        if let Ok(mut slot) = self.current.lock() {
            if let Some(bar) = slot.take() {
                bar.finish_and_clear();
            }
        }
    }
}
