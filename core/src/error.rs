//! The core's errors and warnings, typed until they are shown: each names the file and the place in
//! it. [`Error`] is what the core's entry points return; [`InputError`] is an input that cannot be
//! read or used; [`Diagnostic`] is a warning about an input that is used all the same.

use std::fmt;
use std::path::{Path, PathBuf};

use crate::query::BuildError;

/// Everything the core's entry points can fail with. The command line maps every variant to exit
/// status 2 (SPEC §4); the window shows it in one line.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// An input file cannot be read or used.
    #[error(transparent)]
    Input(#[from] InputError),
    /// The level loaded, but an object could not be made into query shapes.
    #[error("{}: {cause}", level.display())]
    Build {
        /// The level file.
        level: PathBuf,
        /// The object and what went wrong.
        cause: BuildError,
    },
    /// The worker threads could not be started.
    #[error("cannot start worker threads: {0}")]
    Threads(#[from] rayon::ThreadPoolBuildError),
    /// An output would overwrite one of the run's inputs, or another output.
    #[error("{}: the {what} would overwrite {clash}; choose another path", output.display())]
    OutputClash {
        /// The output path as given.
        output: PathBuf,
        /// Which output (`--out`, `--junit`…).
        what: String,
        /// What it would overwrite, in words.
        clash: String,
    },
    /// A file could not be written.
    #[error("{}: cannot write the file: {source}", path.display())]
    Write {
        /// The file.
        path: PathBuf,
        /// Why not.
        source: std::io::Error,
    },
    /// The files given do not make up what the command needs (a shard missing from a merge).
    #[error("{0}")]
    Incomplete(String),
}

/// Where in an input file a problem lies.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Place {
    /// A line and a column of a text file, both 1-based.
    Text {
        /// Line number.
        line: usize,
        /// Column number, in characters.
        column: usize,
    },
    /// A named part of the file: a field, an object, a node, a primitive, a triangle.
    Part(String),
}

impl fmt::Display for Place {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Place::Text { line, column } => write!(f, "line {line}, column {column}"),
            Place::Part(part) => f.write_str(part),
        }
    }
}

/// An input that cannot be read or used, with the file and the place in it that is at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct InputError {
    /// The file at fault.
    pub path: PathBuf,
    /// Where in the file; `None` for the file as a whole.
    pub place: Option<Place>,
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

    /// An error at a named part of the file (`object "shed"`, `field "up"`).
    pub fn at(path: &Path, part: impl Into<String>, message: impl Into<String>) -> Self {
        Self {
            path: path.to_path_buf(),
            place: Some(Place::Part(part.into())),
            message: message.into(),
        }
    }

    /// An error at a line and column (both 1-based).
    pub fn at_line(path: &Path, line: usize, column: usize, message: impl Into<String>) -> Self {
        Self {
            path: path.to_path_buf(),
            place: Some(Place::Text { line, column }),
            message: message.into(),
        }
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

/// `path: place: message`, the one-line form every error and warning is shown in.
fn write_located(
    f: &mut fmt::Formatter<'_>,
    path: &Path,
    place: Option<&Place>,
    message: &dyn fmt::Display,
) -> fmt::Result {
    use crate::input::escape_controls;
    write!(f, "{}", escape_controls(&path.display().to_string()))?;
    if let Some(place) = place {
        write!(f, ": {}", escape_controls(&place.to_string()))?;
    }
    write!(f, ": {}", escape_controls(&message.to_string()))
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_located(f, &self.path, self.place.as_ref(), &self.message)
    }
}

impl std::error::Error for InputError {}

/// What a load warning is about: the input is usable, but something in it was skipped or repaired.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Warning {
    /// Triangles with (almost) no area were dropped from an object.
    DegenerateDropped {
        /// The object.
        object: String,
        /// How many.
        count: usize,
    },
    /// An object had no triangles left and was left out.
    EmptyObject {
        /// The object.
        object: String,
    },
    /// OBJ line and point elements were skipped.
    SkippedElements {
        /// How many.
        count: usize,
    },
    /// A glTF primitive that is not made of triangles was skipped.
    SkippedPrimitive {
        /// Node, mesh and primitive.
        part: String,
        /// Its mode (points, lines…).
        mode: String,
    },
    /// OBJ faces of fewer than three corners (edges that exporters write as faces) were skipped.
    ShortFaces {
        /// How many.
        count: usize,
    },
    /// A text file is not UTF-8; it was read with the bytes that are not replaced.
    NotUtf8,
    /// Triangles of a mesh are wound against their neighbours, so its inside is ambiguous.
    InconsistentWinding {
        /// The object.
        object: String,
        /// Shared edges that two neighbouring triangles run the same way.
        edges: usize,
    },
}

impl Warning {
    /// Where in the file the warning applies, when it does.
    pub fn place(&self) -> Option<Place> {
        match self {
            Warning::DegenerateDropped { object, .. }
            | Warning::EmptyObject { object }
            | Warning::InconsistentWinding { object, .. } => {
                Some(Place::Part(format!("object \"{object}\"")))
            }
            Warning::SkippedElements { .. } | Warning::ShortFaces { .. } | Warning::NotUtf8 => None,
            Warning::SkippedPrimitive { part, .. } => Some(Place::Part(part.clone())),
        }
    }
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::DegenerateDropped { count, .. } => {
                write!(
                    f,
                    "{count} degenerate triangle(s) with no area were dropped"
                )
            }
            Warning::EmptyObject { .. } => {
                f.write_str("the object has no triangles and was left out")
            }
            Warning::SkippedElements { count } => write!(
                f,
                "{count} line/point element(s) skipped (only faces are collision geometry)"
            ),
            Warning::SkippedPrimitive { mode, .. } => write!(
                f,
                "{mode} primitive skipped (only triangles are collision geometry)"
            ),
            Warning::ShortFaces { count } => write!(
                f,
                "{count} face(s) of fewer than three corners skipped (edges, not surfaces)"
            ),
            Warning::NotUtf8 => f.write_str(
                "the text is not UTF-8; bytes that are not were replaced (names may read oddly)",
            ),
            Warning::InconsistentWinding { edges, .. } => write!(
                f,
                "{edges} shared edge(s) join triangles wound opposite ways (front and back \
                 disagree; inside tests on this mesh are unreliable)"
            ),
        }
    }
}

/// A warning found while loading, with the file it is about.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    /// The file the warning is about.
    pub path: PathBuf,
    /// What was skipped or repaired.
    pub warning: Warning,
}

impl Diagnostic {
    /// A warning about `path`.
    pub fn new(path: &Path, warning: Warning) -> Self {
        Self {
            path: path.to_path_buf(),
            warning,
        }
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_located(f, &self.path, self.warning.place().as_ref(), &self.warning)
    }
}
