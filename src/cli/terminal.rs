//! Terminal output: colour only on a terminal and never when `NO_COLOR` is set; a progress bar on
//! stderr for runs longer than about a second.

use std::io::{IsTerminal, Write};
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// How stdout is styled.
#[derive(Clone, Copy)]
pub struct Style {
    colour: bool,
}

impl Style {
    /// Colour when stdout is a terminal and `NO_COLOR` is unset or empty.
    pub fn detect() -> Style {
        let no_color = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
        Style {
            colour: std::io::stdout().is_terminal() && !no_color,
        }
    }

    /// `text` in a colour when colour is on: `Good`, `Bad`, `Note`, `Dim`.
    pub fn paint(&self, tone: Tone, text: &str) -> String {
        let mut out = String::new();
        self.paint_onto(tone, text, &mut out);
        out
    }

    /// [`Style::paint`] written at the end of `out` (a check writes one for every failing probe).
    pub fn paint_onto(&self, tone: Tone, text: &str, out: &mut String) {
        if !self.colour {
            out.push_str(text);
            return;
        }
        let code = match tone {
            Tone::Good => "36",
            Tone::Bad => "1;31",
            Tone::Note => "33",
            Tone::Dim => "2",
        };
        out.extend(["\x1b[", code, "m", text, "\x1b[0m"]);
    }
}

/// The tones the summary uses.
#[derive(Clone, Copy)]
pub enum Tone {
    /// Holds.
    Good,
    /// Fails or errs.
    Bad,
    /// Changed, or a warning.
    Note,
    /// Secondary text.
    Dim,
}

/// The widest a table's name column is padded to, in characters: longer names (ids may be up to a
/// thousand characters) push their own line's text along instead of every line's. Ours.
const MAX_COLUMN: usize = 40;

/// The width to pad a name column to, for names up to `longest` characters.
pub fn column_width(longest: usize) -> usize {
    longest.min(MAX_COLUMN)
}

/// Lines for stdout written as a run goes, a batch at a time, around the progress bar.
pub struct Lines<'a> {
    progress: &'a Progress,
    pending: String,
}

impl<'a> Lines<'a> {
    /// Lines that keep clear of `progress`.
    pub fn new(progress: &'a Progress) -> Lines<'a> {
        Lines {
            progress,
            pending: String::new(),
        }
    }

    /// Adds the line (ending in a newline) that `write` writes at the end of the batch; written
    /// once a batch has gathered.
    pub fn push_with(&mut self, write: impl FnOnce(&mut String)) {
        write(&mut self.pending);
        if self.pending.len() >= 1 << 16 {
            self.flush();
        }
    }

    fn flush(&mut self) {
        let text = &self.pending;
        self.progress.bar.suspend(|| write_stdout(text));
        // Kept, with its room, for the next lines.
        self.pending.clear();
    }

    /// Writes what is left.
    pub fn finish(mut self) {
        self.flush();
    }
}

/// Writes to stdout; a closed pipe (`plumbline check … | head`) is not an error.
pub fn write_stdout(text: &str) {
    let _ = std::io::stdout().lock().write_all(text.as_bytes());
}

/// A progress bar over `total` probes that appears on a terminal's stderr once a run has taken a second.
pub struct Progress {
    bar: ProgressBar,
    started: Instant,
    on_terminal: bool,
}

impl Progress {
    /// A hidden bar; it shows itself after a second when stderr is a terminal.
    pub fn new(total: usize) -> Progress {
        let bar = ProgressBar::with_draw_target(Some(total as u64), ProgressDrawTarget::hidden());
        bar.set_style(
            ProgressStyle::with_template(
                "{bar:40} {pos}/{len} probes  {elapsed} elapsed, about {eta} left",
            )
            .expect("the template is valid"),
        );
        Progress {
            bar,
            started: Instant::now(),
            on_terminal: std::io::stderr().is_terminal(),
        }
    }

    /// What answering tells how many probes are finished: nothing off a terminal, where the bar
    /// never shows (so the answers are not even counted).
    pub fn watcher(&self) -> Option<impl Fn(usize) + Sync + '_> {
        self.on_terminal.then_some(|done| self.update(done))
    }

    /// Records that `done` probes are finished.
    fn update(&self, done: usize) {
        if self.bar.is_hidden() && self.started.elapsed() > Duration::from_secs(1) {
            self.bar.set_draw_target(ProgressDrawTarget::stderr());
        }
        self.bar.set_position(done as u64);
    }

    /// Removes the bar.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}
