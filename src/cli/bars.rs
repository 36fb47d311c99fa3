//! Progress bars on the terminal: the [`Meter`] the command line gives the library's stages.
//!
//! A bar with its rate and time left is drawn on stderr only when stderr is a terminal and the
//! run is not `--quiet`; otherwise the stage gets [`Progress::none`], so pipes, logs and tests
//! see nothing.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use pavestrat::progress::{Meter, Progress};
use std::io::IsTerminal;
use std::time::Duration;

/// Whether bars may be drawn: set once by the command line.
#[derive(Debug, Clone, Copy, Default)]
pub struct Display {
    pub enabled: bool,
}

impl Display {
    /// Bars are drawn when not quiet and stderr is a terminal.
    pub fn for_terminal(quiet: bool) -> Display {
        Display {
            enabled: !quiet && std::io::stderr().is_terminal(),
        }
    }

    /// No bars at all.
    #[cfg(test)]
    pub fn hidden() -> Display {
        Display { enabled: false }
    }

    /// A bar over `len` units of `unit` (e.g. "sections"), labelled `stage`.
    pub fn bar(&self, stage: &str, len: u64, unit: &str) -> Progress {
        if !self.enabled {
            return Progress::none();
        }
        let bar = ProgressBar::with_draw_target(Some(len), ProgressDrawTarget::stderr());
        let template = format!(
            "{{prefix:>12}} [{{bar:32}}] {{human_pos}}/{{human_len}} {unit} · {{per_sec}} · {{eta}} left"
        );
        if let Ok(style) = ProgressStyle::with_template(&template) {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_prefix(stage.to_owned());
        bar.enable_steady_tick(Duration::from_millis(200));
        Progress::to(Bar(bar))
    }

    /// A bar that fills with time towards a limit (for searches that stop at a time limit).
    pub fn clock(&self, stage: &str, seconds: f64) -> Progress {
        if !self.enabled {
            return Progress::none();
        }
        let len = (seconds * 10.0).ceil().max(1.0) as u64;
        let bar = ProgressBar::with_draw_target(Some(len), ProgressDrawTarget::stderr());
        if let Ok(style) =
            ProgressStyle::with_template("{prefix:>12} [{bar:32}] {elapsed} of the time limit")
        {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_prefix(stage.to_owned());
        Progress::to(Bar(bar))
    }
}

/// A terminal bar as a stage's meter.
struct Bar(ProgressBar);

impl Meter for Bar {
    fn inc(&self, n: u64) {
        self.0.inc(n);
    }

    fn set(&self, pos: u64) {
        self.0.set_position(pos);
    }

    fn finish(&self) {
        self.0.finish_and_clear();
    }
}

/// Run `f` while a thread moves a clock bar (see [`Display::clock`]) with the time elapsed.
pub fn ticking<T>(clock: &Progress, f: impl FnOnce() -> T) -> T {
    if !clock.is_shown() {
        return f();
    }
    let done = std::sync::atomic::AtomicBool::new(false);
    let start = std::time::Instant::now();
    let out = std::thread::scope(|s| {
        s.spawn(|| {
            while !done.load(std::sync::atomic::Ordering::Relaxed) {
                clock.set((start.elapsed().as_secs_f64() * 10.0) as u64);
                std::thread::sleep(Duration::from_millis(100));
            }
        });
        let out = f();
        done.store(true, std::sync::atomic::Ordering::Relaxed);
        out
    });
    clock.finish();
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hidden_progress_draws_nothing_and_accepts_every_call() {
        let p = Display::hidden().bar("simulate", 10, "sections");
        assert!(!p.is_shown());
        p.inc(3);
        p.set(5);
        p.finish();
        assert!(!Display::hidden().clock("select", 2.0).is_shown());
    }
}
