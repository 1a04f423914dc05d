//! The one error type for input the program cannot use: it names the file and the place in it.

use std::fmt;
use std::path::{Path, PathBuf};

/// An input that cannot be read or used, with the file and the place in it that is at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct InputError {
    /// The file at fault.
    pub path: PathBuf,
    /// Where in the file: `line 3, column 7`, `object "shed", triangle 12`; `None` for the file as a whole.
    pub place: Option<String>,
    /// What is wrong, in one sentence.
    pub message: String,
}

impl InputError {
    /// An error about the whole file.
    pub fn file(path: &Path, message: impl Into<String>) -> Self {
        Self {
            path: path.to_path_buf(),
            place: None,
            message: message.into(),
        }
    }

    /// An error at a place in the file.
    pub fn at(path: &Path, place: impl Into<String>, message: impl Into<String>) -> Self {
        Self {
            path: path.to_path_buf(),
            place: Some(place.into()),
            message: message.into(),
        }
    }

    /// An error at a line and column (both 1-based).
    pub fn at_line(path: &Path, line: usize, column: usize, message: impl Into<String>) -> Self {
        Self::at(path, format!("line {line}, column {column}"), message)
    }

    /// A JSON syntax or schema error from serde_json, with its line and column.
    pub fn json(path: &Path, err: &serde_json::Error) -> Self {
        // serde_json appends " at line L column C" to its message; keep the message without it.
        let text = err.to_string();
        let message = match text.rfind(" at line ") {
            Some(cut) => text[..cut].to_string(),
            None => text,
        };
        if err.line() == 0 {
            Self::file(path, message)
        } else {
            Self::at_line(path, err.line(), err.column(), message)
        }
    }
}

impl InputError {
    /// An error about `fragment`, a slice of the file's `text`, placed at the line and column where
    /// the fragment starts.
    pub fn at_fragment(
        path: &Path,
        text: &str,
        fragment: &str,
        message: impl Into<String>,
    ) -> Self {
        let (line, column) = position_of(text, fragment);
        Self::at_line(path, line, column, message)
    }

    /// A serde_json error from parsing `fragment` (a slice of the file's `text`) on its own, placed at
    /// its line and column in the whole file.
    pub fn json_in(path: &Path, text: &str, fragment: &str, err: &serde_json::Error) -> Self {
        let (line, column) = position_of(text, fragment);
        let relative = Self::json(path, err);
        if err.line() == 0 {
            return Self::at_line(path, line, column, relative.message);
        }
        let abs_line = line + err.line() - 1;
        let abs_column = if err.line() == 1 {
            column + err.column() - 1
        } else {
            err.column()
        };
        Self::at_line(path, abs_line, abs_column, relative.message)
    }
}

/// Checks the `"plumbline"` and `"version"` fields every file of ours starts with: the file must be
/// of kind `expected` (described to users as `what`, e.g. "a probe set") and of version 1.
pub fn check_header(
    path: &Path,
    kind: &str,
    version: u32,
    expected: &str,
    what: &str,
) -> Result<(), InputError> {
    if kind != expected {
        return Err(InputError::at(
            path,
            "field \"plumbline\"",
            format!("this is a \"{kind}\" file, not {what} (\"plumbline\": \"{expected}\")"),
        ));
    }
    if version != 1 {
        return Err(InputError::at(
            path,
            "field \"version\"",
            format!("format version {version} is not known to this program (it reads version 1)"),
        ));
    }
    Ok(())
}

/// The 1-based line and column where `fragment` (a slice of `text`) starts.
fn position_of(text: &str, fragment: &str) -> (usize, usize) {
    let offset = (fragment.as_ptr() as usize)
        .saturating_sub(text.as_ptr() as usize)
        .min(text.len());
    let before = &text[..offset];
    let line = before.matches('\n').count() + 1;
    let column = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, column)
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if let Some(place) = &self.place {
            write!(f, ": {place}")?;
        }
        write!(f, ": {}", self.message)
    }
}

impl std::error::Error for InputError {}

/// A warning found while loading: the input is usable, but something in it was skipped or repaired.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    /// The file the warning is about.
    pub path: PathBuf,
    /// Where in the file, when it applies.
    pub place: Option<String>,
    /// What was skipped or repaired.
    pub message: String,
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if let Some(place) = &self.place {
            write!(f, ": {place}")?;
        }
        write!(f, ": {}", self.message)
    }
}
