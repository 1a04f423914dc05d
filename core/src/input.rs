//! Reading input files for the user under one stated policy. Every file the program reads comes
//! through [`read_input`]; every path named inside a file (a level file's meshes, a glTF file's
//! buffers, a probe set's level) is resolved by [`resolve_named`].
//!
//! The resource policy (README, "Limits"): only regular files are read (never a device, a FIFO or a
//! folder, which could block or stream for ever), and at most [`MAX_FILE_BYTES`] of them; names are
//! at most [`MAX_NAME_CHARS`] characters; a probe set holds at most [`MAX_PROBES`] probes; a level
//! holds at most [`MAX_TRIANGLES`] triangles. Each is checked before the memory it implies is taken.
//!
//! The path policy: a path named inside a file is relative to that file's folder and may not leave
//! it (no absolute paths, no `..` above the folder), unless the user allows it with
//! [`PathPolicy::anywhere`] (`--allow-outside-paths` on the command line). The check is on the path
//! as written; special files are refused wherever they are.

use std::io::Read;
use std::path::{Component, Path, PathBuf};

use sha2::{Digest, Sha256};

use crate::error::{Error, InputError};

/// The largest input file read: 2 GiB (a 1M-triangle level is about 40 MB as GLB). Ours.
pub const MAX_FILE_BYTES: u64 = 2 << 30;

/// The longest object name, probe id, tag or material name, in characters. Ours: far beyond any real
/// name, short enough to print in a line.
pub const MAX_NAME_CHARS: usize = 1024;

/// The most probes in a probe set (after rules are expanded). Ours.
pub const MAX_PROBES: usize = 10_000_000;

/// The most triangles in a level: 20 million, about 4.5 GB once built for queries (README). Ours.
pub const MAX_TRIANGLES: usize = 20_000_000;

/// Where paths named inside files may lead.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct PathPolicy {
    /// Allow absolute paths and `..` above the naming file's folder.
    pub anywhere: bool,
}

/// Reads a whole input file: it must be a regular file of at most [`MAX_FILE_BYTES`], and not empty.
pub fn read_input(path: &Path) -> Result<Vec<u8>, InputError> {
    let cannot = |e: std::io::Error| InputError::file(path, format!("cannot read the file: {e}"));
    // Looked at before opening: opening a FIFO blocks until something writes to it.
    let metadata = std::fs::metadata(path).map_err(cannot)?;
    if !metadata.is_file() {
        return Err(InputError::file(
            path,
            "not a regular file (a folder, device or pipe is never read)",
        ));
    }
    if metadata.len() > MAX_FILE_BYTES {
        return Err(too_large(path));
    }
    let file = std::fs::File::open(path).map_err(cannot)?;
    let mut bytes = Vec::with_capacity(metadata.len() as usize);
    // A file that grows while it is read is still cut at the limit.
    file.take(MAX_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(cannot)?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err(too_large(path));
    }
    if bytes.iter().all(u8::is_ascii_whitespace) {
        return Err(InputError::file(path, "the file is empty"));
    }
    Ok(bytes)
}

/// `sha256:<hex>` of a file's bytes: the `probes_digest` of a probe-set file as read.
pub fn text_digest(bytes: &[u8]) -> String {
    let hash = Sha256::digest(bytes);
    format!(
        "sha256:{}",
        hash.iter().map(|b| format!("{b:02x}")).collect::<String>()
    )
}

fn too_large(path: &Path) -> InputError {
    InputError::file(
        path,
        format!(
            "the file is larger than the {} GiB this program reads",
            MAX_FILE_BYTES >> 30
        ),
    )
}

/// The file that `named` (a path written inside `referrer`) stands for: relative to the referrer's
/// folder. Unless the policy allows it, the path must be relative and stay inside that folder. The
/// error is one sentence about the path, for the caller to place.
pub fn resolve_named(referrer: &Path, named: &str, policy: PathPolicy) -> Result<PathBuf, String> {
    if named.is_empty() {
        return Err("the path is empty".into());
    }
    let written = Path::new(named);
    if !policy.anywhere && leaves_folder(written) {
        return Err(format!(
            "\"{}\" leads outside the folder of {} (allow it with --allow-outside-paths)",
            one_line(named),
            referrer.file_name().map_or_else(
                || referrer.display().to_string(),
                |n| n.to_string_lossy().into()
            ),
        ));
    }
    Ok(referrer.parent().unwrap_or(Path::new("")).join(written))
}

/// True when a path as written is absolute or climbs above its starting folder with `..`.
fn leaves_folder(path: &Path) -> bool {
    let mut depth = 0usize;
    for component in path.components() {
        match component {
            Component::Prefix(_) | Component::RootDir => return true,
            Component::ParentDir => {
                if depth == 0 {
                    return true;
                }
                depth -= 1;
            }
            Component::Normal(_) => depth += 1,
            Component::CurDir => {}
        }
    }
    false
}

/// `to` named from the folder `from_dir` with forward slashes (`parts/yard.glb`,
/// `../yard.level.json`), as files name each other; absolute when the two share nothing but the
/// root. An empty `from_dir` is the current folder.
pub fn relative_path(from_dir: &Path, to: &Path) -> String {
    let absolute = |p: &Path| {
        let p = if p.as_os_str().is_empty() {
            Path::new(".")
        } else {
            p
        };
        std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf())
    };
    let (from, to) = (absolute(from_dir), absolute(to));
    let from_parts: Vec<Component> = from.components().collect();
    let to_parts: Vec<Component> = to.components().collect();
    let shared = from_parts
        .iter()
        .zip(&to_parts)
        .take_while(|(a, b)| a == b)
        .count();
    if shared <= 1 {
        return to.to_string_lossy().into_owned();
    }
    let mut relative: Vec<String> = vec!["..".into(); from_parts.len() - shared];
    relative.extend(
        to_parts[shared..]
            .iter()
            .map(|c| c.as_os_str().to_string_lossy().into_owned()),
    );
    relative.join("/")
}

/// Refuses outputs that are one of the run's inputs (`check P --out P` would replace the probe set
/// with its results) or that two outputs share (one would silently win). `outputs` are (what, path)
/// pairs, e.g. `("results file (--out)", path)`; paths are compared after resolving links.
pub fn check_outputs(inputs: &[PathBuf], outputs: &[(&str, &Path)]) -> Result<(), Error> {
    let inputs: Vec<PathBuf> = inputs.iter().map(|p| resolved(p)).collect();
    for (k, (what, output)) in outputs.iter().enumerate() {
        let at = resolved(output);
        let clash = if inputs.contains(&at) {
            Some("one of this run's inputs".to_string())
        } else {
            outputs[..k]
                .iter()
                .find(|(_, other)| resolved(other) == at)
                .map(|(other, _)| format!("the {other}"))
        };
        if let Some(clash) = clash {
            return Err(Error::OutputClash {
                output: output.to_path_buf(),
                what: what.to_string(),
                clash,
            });
        }
    }
    Ok(())
}

/// A path with its links and `..` resolved as far as it exists (an output need not exist yet: then
/// its folder is resolved and its name kept).
fn resolved(path: &Path) -> PathBuf {
    if let Ok(p) = std::fs::canonicalize(path) {
        return p;
    }
    let absolute = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    match (absolute.parent(), absolute.file_name()) {
        (Some(folder), Some(name)) => std::fs::canonicalize(folder)
            .map(|f| f.join(name))
            .unwrap_or(absolute),
        _ => absolute,
    }
}

/// Checks a name (object, probe id, tag, material) against [`MAX_NAME_CHARS`]; the error says what
/// the name is for (formatted only when the name is too long).
pub fn check_name(what: impl std::fmt::Display, name: &str) -> Result<(), String> {
    let chars = name.chars().count();
    if chars > MAX_NAME_CHARS {
        Err(format!(
            "{what} is {chars} characters long; at most {MAX_NAME_CHARS} are allowed"
        ))
    } else {
        Ok(())
    }
}

/// A number as a message shows it: plainly, or in scientific notation when it is very large or very
/// small (never a 300-digit figure).
pub fn number(value: f64) -> String {
    let magnitude = value.abs();
    if value.is_finite() && value != 0.0 && !(1e-4..1e7).contains(&magnitude) {
        format!("{value:e}")
    } else {
        format!("{value}")
    }
}

/// Text with its control characters (a newline, a tab) escaped, so a message stays on one line.
pub fn escape_controls(text: &str) -> std::borrow::Cow<'_, str> {
    if !text.chars().any(char::is_control) {
        return std::borrow::Cow::Borrowed(text);
    }
    std::borrow::Cow::Owned(
        text.chars()
            .flat_map(|c| {
                let escaped: Vec<char> = if c.is_control() {
                    c.escape_default().collect()
                } else {
                    vec![c]
                };
                escaped
            })
            .collect(),
    )
}

/// Text shown inside a one-line message: control characters (a newline in a key, say) escaped, and
/// anything past 120 characters cut with an ellipsis.
pub fn one_line(text: &str) -> String {
    const SHOWN: usize = 120;
    let mut out = String::new();
    for (k, c) in text.chars().enumerate() {
        if k == SHOWN {
            out.push('…');
            break;
        }
        if c.is_control() {
            out.extend(c.escape_default());
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_that_leave_the_folder_are_refused_unless_allowed() {
        let referrer = Path::new("levels/yard.level.json");
        let strict = PathPolicy::default();
        assert_eq!(
            resolve_named(referrer, "parts/shed.obj", strict).unwrap(),
            Path::new("levels/parts/shed.obj")
        );
        assert!(resolve_named(referrer, "parts/../shed.obj", strict).is_ok());
        for outside in ["../shed.obj", "parts/../../shed.obj", "/dev/zero"] {
            let e = resolve_named(referrer, outside, strict).unwrap_err();
            assert!(e.contains("outside the folder of yard.level.json"), "{e}");
            assert!(resolve_named(referrer, outside, PathPolicy { anywhere: true }).is_ok());
        }
        assert!(resolve_named(referrer, "", strict).is_err());
    }

    #[test]
    fn special_files_are_never_read() {
        for special in ["/dev/zero", "/dev/urandom", "/"] {
            let e = read_input(Path::new(special)).unwrap_err();
            assert!(e.message.contains("not a regular file"), "{special}: {e}");
        }
    }

    #[test]
    fn messages_stay_on_one_line() {
        assert_eq!(one_line("a\nb"), "a\\nb");
        assert_eq!(one_line(&"x".repeat(500)).chars().count(), 121);
    }
}
