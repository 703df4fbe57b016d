//! A progress bar on standard error, for long computations (sweeps, ladders, Monte
//! Carlo). It is drawn only when standard error is a terminal and the environment
//! variable `CI` is not set; otherwise every method is a no-op, so scripts, pipes and
//! test logs stay clean. Library crates report progress through plain callbacks; the
//! adapter [`Progress::observer`] turns this bar into one.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressStyle};

/// A progress bar, or nothing when progress should not be shown. Not `Clone`: dropping
/// it clears the bar; share it by reference or through [`Progress::observer`].
#[derive(Debug)]
pub struct Progress {
    bar: Option<ProgressBar>,
}

impl Progress {
    /// A bar of `total` steps labelled `message`, drawn only on an interactive terminal
    /// outside CI (see [`Progress::enabled`]).
    pub fn new(total: u64, message: &str) -> Progress {
        if !Self::enabled() {
            return Progress::hidden();
        }
        let bar = ProgressBar::new(total);
        if let Ok(style) = ProgressStyle::with_template(
            "{msg} [{elapsed_precise}] {wide_bar} {pos}/{len} (eta {eta})",
        ) {
            bar.set_style(style);
        }
        bar.set_message(message.to_string());
        Progress { bar: Some(bar) }
    }

    /// A bar that never draws.
    pub fn hidden() -> Progress {
        Progress { bar: None }
    }

    /// Whether bars are drawn: standard error is a terminal and `CI` is unset.
    pub fn enabled() -> bool {
        std::io::stderr().is_terminal() && std::env::var_os("CI").is_none()
    }

    /// Set the position to `done` of `total` steps.
    pub fn set(&self, done: u64, total: u64) {
        if let Some(bar) = &self.bar {
            bar.set_length(total);
            bar.set_position(done);
        }
    }

    /// Advance by `steps`.
    pub fn inc(&self, steps: u64) {
        if let Some(bar) = &self.bar {
            bar.inc(steps);
        }
    }

    /// Remove the bar from the terminal.
    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }

    /// A `Fn(done, total)` callback for library observers, safe to call from several
    /// threads (rayon); it moves this bar.
    pub fn observer(&self) -> impl Fn(usize, usize) + Send + Sync + 'static {
        let bar = self.bar.clone();
        move |done, total| {
            if let Some(bar) = &bar {
                bar.set_length(total as u64);
                bar.set_position(done as u64);
            }
        }
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        // Clear a bar left on screen, e.g. when a command stops with an error.
        if let Some(bar) = &self.bar {
            if !bar.is_finished() {
                bar.finish_and_clear();
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hidden_bar_accepts_every_call() {
        let p = Progress::hidden();
        p.set(1, 10);
        p.inc(2);
        let obs = p.observer();
        obs(5, 10);
        p.finish();
    }
}
