//! The command line's subcommands, each a thin shell over the library.

mod check;
mod diff;
mod info;
mod lint;
mod merge;
mod pictures;
mod schema;
mod terminal;
mod timings;
mod watch;
mod window;

pub use check::{CheckOptions, check};
pub use diff::diff;
pub use info::info;
pub use lint::{LintArgs, lint};
pub use merge::{MergeOptions, merge};
pub use schema::schema;
pub use watch::watch;
pub use window::WindowArgs;

use plumbline_core::check::Comparison;
use terminal::{Style, Tone, write_stdout};

/// Exit status when an expectation fails, a probe errs, or (`diff`) something changed.
pub const EXIT_FAILED: u8 = 1;
/// Exit status for bad usage or input that cannot be read.
pub const EXIT_BAD_INPUT: u8 = 2;

/// Parses a distance tolerance in metres (zero or more).
pub fn parse_tolerance(text: &str) -> Result<f64, String> {
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() && v >= 0.0 => Ok(v),
        _ => Err(format!(
            "\"{text}\" is not a distance in metres (zero or more)"
        )),
    }
}

/// Prints what changed between two runs.
fn print_comparison(c: &Comparison, style: Style) {
    let mut out = String::new();
    if c.level_differs {
        out.push_str(&style.paint(
            Tone::Note,
            "warning: the baseline was computed on different level geometry (level digests differ)\n",
        ));
    }
    if c.is_empty() {
        out.push_str(&style.paint(Tone::Good, "No changes since the baseline.\n"));
        write_stdout(&out);
        return;
    }
    out.push_str(&style.paint(
        Tone::Note,
        &format!("Changed since the baseline ({}):\n", c.count()),
    ));
    let width = terminal::column_width(
        c.changed
            .iter()
            .map(|p| p.id.chars().count())
            .chain(
                c.added
                    .iter()
                    .chain(&c.removed)
                    .map(|id| id.chars().count()),
            )
            .max()
            .unwrap_or(0),
    );
    for p in &c.changed {
        let what: Vec<String> = p.aspects.iter().map(|a| a.to_string()).collect();
        out.push_str(&format!("  {:<width$}  {}\n", p.id, what.join("; ")));
    }
    for id in &c.added {
        out.push_str(&format!("  {id:<width$}  new probe\n"));
    }
    for id in &c.removed {
        out.push_str(&format!("  {id:<width$}  removed\n"));
    }
    write_stdout(&out);
}
