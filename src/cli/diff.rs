//! `plumbline diff OLD NEW`: what changed between two results files.

use std::path::Path;
use std::process::ExitCode;

use plumbline_core::check::{compare, load_results};

use super::terminal::Style;
use super::{EXIT_FAILED, print_comparison};

/// Prints the changes; exit 0 when there are none, 1 when there are.
pub fn diff(old: &Path, new: &Path, tolerance: f64) -> Result<ExitCode, String> {
    let old_results = load_results(old).map_err(|e| e.to_string())?;
    let new_results = load_results(new).map_err(|e| e.to_string())?;
    let comparison = compare(&old_results, &new_results, tolerance);
    let style = Style::detect();
    print_comparison(&comparison, style);
    if comparison.is_empty() {
        Ok(ExitCode::SUCCESS)
    } else {
        Ok(ExitCode::from(EXIT_FAILED))
    }
}
