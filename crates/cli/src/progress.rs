//! Progress on standard error, for long computations (Tc searches, sweeps, ladders,
//! Monte Carlo): an overall bar, and above it one line per level or run,
//! `level `plaquette` — Tc search — 3.2 s`, that says which stage it is in and for how
//! long it has run. It is drawn only when standard error is a terminal and the
//! environment variable `CI` is not set; otherwise every method is a no-op, so scripts,
//! pipes and test logs stay clean.
//!
//! Library crates report progress through plain callbacks: [`Progress::observer`] turns
//! the bar into a `Fn(done, total)`, and [`StageLine::observer`] turns a line into a
//! `Fn(stage)` that a library calls with the name of each stage it enters.

use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

use indicatif::{MultiProgress, ProgressBar, ProgressDrawTarget, ProgressState, ProgressStyle};

/// Overall bar: label, elapsed time, bar, count, remaining time.
const BAR: &str = "{msg} [{elapsed_precise}] {wide_bar} {pos}/{len} (eta {eta})";
/// Overall bar counting levels, whose times differ too much for a remaining time.
const LEVELS: &str = "{msg} [{elapsed_precise}] {wide_bar} {pos}/{len}";
/// A line at work: spinner, what, stage, elapsed seconds.
const ACTIVE: &str = "{spinner} {prefix} — {msg} — {secs}";
/// A finished line.
const DONE: &str = "  {prefix} — {msg}";
/// How often a line redraws by itself, so its elapsed time moves while a stage runs.
const TICK: Duration = Duration::from_millis(200);
/// The stage of a line whose work has not started.
const WAITING: &str = "waiting";

/// Progress display: an overall bar and per-level lines, or nothing when progress should
/// not be shown. Not `Clone`: dropping it clears the display; share it by reference or
/// through [`Progress::observer`].
#[derive(Debug)]
pub struct Progress {
    shown: Option<Shown>,
}

/// The drawn parts.
#[derive(Debug)]
struct Shown {
    multi: MultiProgress,
    bar: ProgressBar,
}

impl Progress {
    /// A bar of `total` steps labelled `message`, drawn only on an interactive terminal
    /// outside CI (see [`Progress::enabled`]).
    pub fn new(total: u64, message: &str) -> Progress {
        if !Self::enabled() {
            return Progress::hidden();
        }
        Progress::drawn_to(total, message, BAR, ProgressDrawTarget::stderr())
    }

    /// A bar counting `total` levels (no remaining-time estimate: one level can take
    /// a thousand times longer than another), to go with one [`Progress::line`] each.
    pub fn levels(total: u64, message: &str) -> Progress {
        if !Self::enabled() {
            return Progress::hidden();
        }
        Progress::drawn_to(total, message, LEVELS, ProgressDrawTarget::stderr())
    }

    /// A bar in `template` drawn to `target`, whatever the terminal.
    fn drawn_to(total: u64, message: &str, template: &str, target: ProgressDrawTarget) -> Progress {
        let multi = MultiProgress::with_draw_target(target);
        let bar = multi.add(ProgressBar::new(total));
        if let Ok(style) = ProgressStyle::with_template(template) {
            bar.set_style(style);
        }
        bar.set_message(message.to_string());
        // Redraw now and then, so the elapsed time moves while a long level runs.
        bar.enable_steady_tick(Duration::from_secs(1));
        Progress {
            shown: Some(Shown { multi, bar }),
        }
    }

    /// A display that never draws.
    pub fn hidden() -> Progress {
        Progress { shown: None }
    }

    /// Whether progress is drawn: standard error is a terminal and `CI` is unset.
    pub fn enabled() -> bool {
        std::io::stderr().is_terminal() && std::env::var_os("CI").is_none()
    }

    /// Set the position to `done` of `total` steps.
    pub fn set(&self, done: u64, total: u64) {
        if let Some(s) = &self.shown {
            s.bar.set_length(total);
            s.bar.set_position(done);
        }
    }

    /// Advance by `steps`.
    pub fn inc(&self, steps: u64) {
        if let Some(s) = &self.shown {
            s.bar.inc(steps);
        }
    }

    /// Remove the bar and every line from the terminal.
    pub fn finish(&self) {
        if let Some(s) = &self.shown {
            s.bar.finish_and_clear();
            let _ = s.multi.clear();
        }
    }

    /// A `Fn(done, total)` callback for library observers, safe to call from several
    /// threads (rayon); it moves the bar.
    pub fn observer(&self) -> impl Fn(usize, usize) + Send + Sync + 'static {
        let bar = self.shown.as_ref().map(|s| s.bar.clone());
        move |done, total| {
            if let Some(bar) = &bar {
                bar.set_length(total as u64);
                bar.set_position(done as u64);
            }
        }
    }

    /// A new line above the bar for one level or run, labelled `label` (e.g.
    /// ``level `plaquette` ``), in the stage `waiting` until told otherwise.
    pub fn line(&self, label: &str) -> StageLine {
        let Some(s) = &self.shown else {
            return StageLine {
                line: None,
                started: AtomicBool::new(false),
            };
        };
        let line = s.multi.insert_before(&s.bar, ProgressBar::new_spinner());
        line.set_style(style(ACTIVE));
        line.set_prefix(label.to_string());
        line.set_message(WAITING);
        line.enable_steady_tick(TICK);
        StageLine {
            line: Some(line),
            started: AtomicBool::new(false),
        }
    }
}

/// The style of a line, with `{secs}`: the line's elapsed time in seconds.
fn style(template: &str) -> ProgressStyle {
    ProgressStyle::with_template(template)
        .unwrap_or_else(|_| ProgressStyle::default_spinner())
        .with_key(
            "secs",
            |state: &ProgressState, w: &mut dyn std::fmt::Write| {
                let _ = write!(w, "{}", seconds(state.elapsed()));
            },
        )
}

/// An elapsed time as shown on a line: `0.4 s`, `12.3 s`, `2 min 05 s`.
pub fn seconds(elapsed: Duration) -> String {
    let s = elapsed.as_secs_f64();
    if s < 120.0 {
        format!("{s:.1} s")
    } else {
        let whole = elapsed.as_secs();
        format!("{} min {:02} s", whole / 60, whole % 60)
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        // Clear what is left on screen, e.g. when a command stops with an error.
        if let Some(s) = &self.shown {
            if !s.bar.is_finished() {
                s.bar.finish_and_clear();
                let _ = s.multi.clear();
            }
        }
    }
}

/// One level's or run's line: `label — stage — elapsed`, or nothing when progress is
/// hidden. Made by [`Progress::line`].
#[derive(Debug)]
pub struct StageLine {
    line: Option<ProgressBar>,
    /// Whether the work has entered a first stage (the clock starts then, not while the
    /// line waits its turn).
    started: AtomicBool,
}

impl StageLine {
    /// Show that the work waits its turn (e.g. between building a level and searching
    /// it); the next [`StageLine::stage`] restarts the line's clock.
    pub fn wait(&self) {
        if let Some(line) = &self.line {
            self.started.store(false, Ordering::Relaxed);
            line.set_message(WAITING);
        }
    }

    /// Show that the work entered `stage` (e.g. `building clusters`, `Tc search`); the
    /// first stage after creation or [`StageLine::wait`] starts the line's clock.
    pub fn stage(&self, stage: &str) {
        if let Some(line) = &self.line {
            if !self.started.swap(true, Ordering::Relaxed) {
                line.reset_elapsed();
            }
            line.set_message(stage.to_string());
        }
    }

    /// A `Fn(stage)` callback for a library that names the stages it enters (e.g.
    /// `paramagnet`, `Tc bracket`, `root`), safe to call from several threads.
    pub fn observer(&self) -> impl Fn(&str) + Send + Sync + 'static {
        let line = self.line.clone();
        move |stage: &str| {
            if let Some(line) = &line {
                line.set_message(stage.to_string());
            }
        }
    }

    /// Mark the work done: the line stops and shows `done in <elapsed>` until the whole
    /// display is cleared.
    pub fn finish(&self) {
        self.finish_with("done");
    }

    /// Mark the work ended with `outcome` (e.g. `no transition`): shown with the elapsed
    /// time, as [`StageLine::finish`].
    pub fn finish_with(&self, outcome: &str) {
        if let Some(line) = &self.line {
            let took = seconds(line.elapsed());
            line.set_style(style(DONE));
            line.finish_with_message(format!("{outcome} in {took}"));
        }
    }
}

#[cfg(test)]
mod tests {
    use std::io;
    use std::sync::{Arc, Mutex};

    use indicatif::TermLike;

    use super::*;

    #[test]
    fn hidden_display_accepts_every_call() {
        let p = Progress::hidden();
        p.set(1, 10);
        p.inc(2);
        let obs = p.observer();
        obs(5, 10);
        let line = p.line("level `pair`");
        line.stage("Tc search");
        line.wait();
        (line.observer())("root");
        line.finish();
        p.finish();
    }

    /// A terminal that records what is written to it.
    #[derive(Debug, Clone, Default)]
    struct Recorder(Arc<Mutex<String>>);

    impl Recorder {
        fn text(&self) -> String {
            self.0.lock().map(|t| t.clone()).unwrap_or_default()
        }
    }

    impl TermLike for Recorder {
        fn width(&self) -> u16 {
            100
        }
        fn move_cursor_up(&self, _: usize) -> io::Result<()> {
            Ok(())
        }
        fn move_cursor_down(&self, _: usize) -> io::Result<()> {
            Ok(())
        }
        fn move_cursor_right(&self, _: usize) -> io::Result<()> {
            Ok(())
        }
        fn move_cursor_left(&self, _: usize) -> io::Result<()> {
            Ok(())
        }
        fn write_line(&self, s: &str) -> io::Result<()> {
            self.write_str(&format!("{s}\n"))
        }
        fn write_str(&self, s: &str) -> io::Result<()> {
            if let Ok(mut t) = self.0.lock() {
                t.push_str(s);
            }
            Ok(())
        }
        fn clear_line(&self) -> io::Result<()> {
            Ok(())
        }
        fn flush(&self) -> io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn a_line_shows_the_level_its_stage_and_the_elapsed_time() {
        let term = Recorder::default();
        let p = Progress::drawn_to(
            2,
            "tc",
            LEVELS,
            ProgressDrawTarget::term_like(Box::new(term.clone())),
        );
        let line = p.line("level `plaquette`");
        let observe = line.observer();
        observe("Tc bracket");
        // The line redraws itself every TICK; give it a few.
        std::thread::sleep(4 * TICK);
        line.finish();
        p.inc(1);
        let text = term.text();
        assert!(
            text.contains("level `plaquette` — Tc bracket — ") && text.contains(" s"),
            "{text}"
        );
        assert!(text.contains("level `plaquette` — done in "), "{text}");
        p.finish();
    }

    #[test]
    fn elapsed_times_read_as_seconds_then_minutes() {
        assert_eq!(seconds(Duration::from_millis(420)), "0.4 s");
        assert_eq!(seconds(Duration::from_secs(125)), "2 min 05 s");
    }
}
