//! `check --pictures DIR`: a picture of each failing, erring or changed probe (or of every probe),
//! with a before picture beside it for a probe that changed since the baseline, for the reports.

use std::collections::HashMap;
use std::collections::HashSet;
use std::path::{Path, PathBuf};

use plumbline::pictures::PictureMaker;
use plumbline_core::check::{ProbeResult, ResultsFile, Verdict};
use plumbline_core::error::Error;
use plumbline_core::input::relative_path;
use plumbline_core::level::Level;
use plumbline_core::probe::Probe;

/// One picture drawn and written.
pub struct Drawn {
    /// What it shows, in words.
    pub caption: String,
    /// Where it was written.
    pub path: PathBuf,
    /// Its PNG bytes.
    pub png: Vec<u8>,
}

/// Draws and writes the pictures of a run.
pub struct Pictures<'a> {
    dir: PathBuf,
    maker: PictureMaker,
    every_probe: bool,
    before: HashMap<&'a str, &'a ProbeResult>,
    /// File names already given, so two ids that read alike on disk do not share a picture.
    stems: HashSet<String>,
}

impl<'a> Pictures<'a> {
    /// Pictures into `dir` (made if missing) of probes on `level`; `baseline` gives the before
    /// pictures of changed probes.
    pub fn new(
        dir: &Path,
        level: &Level,
        every_probe: bool,
        baseline: Option<&'a ResultsFile>,
    ) -> Result<Pictures<'a>, Error> {
        let failed = |source| Error::Write {
            path: dir.to_path_buf(),
            source,
        };
        std::fs::create_dir_all(dir).map_err(failed)?;
        let maker = PictureMaker::new(level).map_err(|m| failed(std::io::Error::other(m)))?;
        let before = baseline
            .iter()
            .flat_map(|b| &b.results)
            .map(|r| (&*r.id, r))
            .collect();
        Ok(Pictures {
            dir: dir.to_path_buf(),
            maker,
            every_probe,
            before,
            stems: HashSet::new(),
        })
    }

    /// Draws the pictures `probe` gets (none when it passes unchanged and not every probe is
    /// drawn): the answer now, and for a changed probe the baseline's answer first.
    pub fn draw(
        &mut self,
        probe: &Probe,
        result: &ProbeResult,
        changed: bool,
    ) -> Result<Vec<Drawn>, Error> {
        let wanted =
            self.every_probe || changed || matches!(result.verdict, Verdict::Fail | Verdict::Error);
        if !wanted {
            return Ok(Vec::new());
        }
        // Rule probes are named `<rule>/<object>`: a file name holds no `/`.
        let plain = result.id.replace('/', "~");
        let mut stem = plain.clone();
        for n in 2.. {
            if self.stems.insert(stem.clone()) {
                break;
            }
            stem = format!("{plain}~{n}");
        }
        let mut shots = Vec::new();
        if changed && let Some(before) = self.before.get(&*result.id) {
            shots.push((
                format!("{} — before", result.id),
                before,
                format!("{stem}.before.png"),
            ));
        }
        let now = if changed {
            format!("{} — now", result.id)
        } else {
            result.id.to_string()
        };
        shots.push((now, &result, format!("{stem}.png")));
        shots
            .into_iter()
            .map(|(caption, shown, name)| {
                let title = format!("{caption}  ({} probe)", result.kind);
                let path = self.dir.join(name);
                let failed = |source| Error::Write {
                    path: path.clone(),
                    source,
                };
                let picture = self
                    .maker
                    .picture(probe, shown, &title)
                    .map_err(|m| failed(std::io::Error::other(m)))?;
                let png = picture.to_png();
                plumbline_core::atomic::write_atomic(&path, &png).map_err(failed)?;
                Ok(Drawn { caption, path, png })
            })
            .collect()
    }
}

/// A Markdown link target from a file in the folder `from_dir` to `to`: relative, with the
/// characters a link target cannot hold as they are (spaces and brackets, common in object names
/// that rules put into probe ids) percent-encoded (RFC 3986, §2.1).
pub fn relative_link(from_dir: &Path, to: &Path) -> String {
    relative_path(from_dir, to)
        .replace('%', "%25")
        .replace(' ', "%20")
        .replace('(', "%28")
        .replace(')', "%29")
        .replace('<', "%3C")
        .replace('>', "%3E")
}

#[cfg(test)]
mod tests {
    use super::relative_link;
    use std::path::Path;

    #[test]
    fn links_are_relative_and_hold_names_with_spaces_and_brackets() {
        let root = std::path::absolute(Path::new("/reports")).unwrap();
        assert_eq!(
            relative_link(&root, &root.join("pictures/props-rest~Crate (old) 2.png")),
            "pictures/props-rest~Crate%20%28old%29%202.png"
        );
        assert_eq!(
            relative_link(&root.join("md"), &root.join("pictures/a.png")),
            "../pictures/a.png"
        );
    }
}
