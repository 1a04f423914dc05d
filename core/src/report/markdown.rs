//! A Markdown summary for a code-review comment: counts, then failing and changed probes in tables.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use crate::atomic::{AtomicFile, Spill};
use crate::check::{Comparison, Hits, PairRecord, ProbeResult, Summary, Verdict};

/// Writes the Markdown summary probe by probe: failing rows go to a scratch file, and
/// [`MarkdownWriter::finish`] writes the counts, the failing table and what changed since the
/// baseline.
pub struct MarkdownWriter {
    path: PathBuf,
    failing: Spill,
    any_failing: bool,
    matrices: Spill,
    any_matrix: bool,
    pictures: Spill,
    any_picture: bool,
}

/// Sightline matrices of at most this many spots are drawn as tables; larger ones list their
/// blocked pairs. Ours: what fits a review comment.
const MAX_TABLE_SPOTS: usize = 16;

impl MarkdownWriter {
    /// Starts the summary at `path`.
    pub fn create(path: &Path) -> io::Result<MarkdownWriter> {
        Ok(MarkdownWriter {
            path: path.to_path_buf(),
            failing: Spill::beside(path, "failing")?,
            any_failing: false,
            matrices: Spill::beside(path, "matrices")?,
            any_matrix: false,
            pictures: Spill::beside(path, "pictures")?,
            any_picture: false,
        })
    }

    /// Adds the next result with its probe's label (a table row when it fails or errs; a sightline
    /// matrix as a table).
    pub fn push(&mut self, label: Option<&str>, r: &ProbeResult) -> io::Result<()> {
        if let Hits::Sightlines(pairs) = &r.hits {
            self.any_matrix = true;
            let table = sightline_table(&r.id, label, pairs);
            self.matrices.write_all(table.as_bytes())?;
        }
        if !matches!(r.verdict, Verdict::Fail | Verdict::Error) {
            return Ok(());
        }
        self.any_failing = true;
        writeln!(
            self.failing,
            "| {} | {} | {} | {} |",
            probe_cell(&r.id, label),
            r.kind,
            r.verdict.word(),
            cell(&r.reason)
        )
    }

    /// Adds a probe's pictures (`link`s relative to the summary's folder, each with its alt text),
    /// shown in a section of their own after the tables.
    pub fn picture(&mut self, id: &str, pictures: &[(String, String)]) -> io::Result<()> {
        self.any_picture = true;
        let images: Vec<String> = pictures
            .iter()
            .map(|(alt, link)| format!("![{}]({})", alt.replace(['[', ']'], ""), link))
            .collect();
        writeln!(
            self.pictures,
            "**`{}`**\n\n{}\n",
            cell(id),
            images.join(" ")
        )
    }

    /// Writes the summary atomically. `labels` names the probes listed in `changes`.
    pub fn finish(
        self,
        summary: &Summary,
        level: &str,
        changes: Option<&Comparison>,
        labels: &dyn Fn(&str) -> Option<String>,
    ) -> io::Result<()> {
        let s = summary;
        let mut file = AtomicFile::create(&self.path)?;
        write!(
            file,
            "### Plumbline check: {} of {} probes pass\n\n{} pass · {} fail · {} error · {} \
             unchecked — level `{}`\n",
            s.pass, s.probes, s.pass, s.fail, s.error, s.unchecked, level
        )?;
        if self.any_failing {
            file.write_all(
                b"\n#### Failing\n\n| Probe | Kind | Verdict | Reason |\n|---|---|---|---|\n",
            )?;
            self.failing.copy_into(&mut file)?;
        }
        if let Some(c) = changes {
            file.write_all(changes_text(c, labels).as_bytes())?;
        }
        if self.any_matrix {
            self.matrices.copy_into(&mut file)?;
        }
        if self.any_picture {
            file.write_all(b"\n#### Pictures\n\n")?;
            self.pictures.copy_into(&mut file)?;
        }
        file.commit()
    }
}

/// The section on what changed since the baseline.
fn changes_text(c: &Comparison, labels: &dyn Fn(&str) -> Option<String>) -> String {
    let mut out = format!("\n#### Changed since the baseline ({})\n\n", c.count());
    if c.level_differs {
        out.push_str("The baseline was computed on different level geometry.\n\n");
    }
    if c.is_empty() {
        out.push_str("Nothing changed.\n");
        return out;
    }
    out.push_str("| Probe | What changed |\n|---|---|\n");
    for p in &c.changed {
        let what: Vec<String> = p.aspects.iter().map(|a| a.to_string()).collect();
        out.push_str(&format!(
            "| {} | {} |\n",
            probe_cell(&p.id, labels(&p.id).as_deref()),
            cell(&what.join("; "))
        ));
    }
    for id in &c.added {
        out.push_str(&format!(
            "| {} | new probe |\n",
            probe_cell(id, labels(id).as_deref())
        ));
    }
    for id in &c.removed {
        out.push_str(&format!("| `{}` | removed |\n", cell(id)));
    }
    out
}

fn probe_cell(id: &str, label: Option<&str>) -> String {
    match label {
        Some(l) => format!("`{}` {}", cell(id), cell(l)),
        None => format!("`{}`", cell(id)),
    }
}

/// Text safe inside a table cell: pipes escaped, line breaks folded.
pub(super) fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace(['\n', '\r'], " ")
}

/// A sightline matrix: a row and a column per spot, each cell "sees" or what blocks the pair (a
/// list of blocked pairs for large matrices).
fn sightline_table(id: &str, label: Option<&str>, pairs: &[PairRecord]) -> String {
    let mut spots: Vec<&str> = Vec::new();
    for p in pairs {
        for name in [&*p.a, &*p.b] {
            if !spots.contains(&name) {
                spots.push(name);
            }
        }
    }
    let mut out = format!("\n#### Sightlines: {}\n\n", probe_cell(id, label));
    if spots.len() > MAX_TABLE_SPOTS {
        let blocked: Vec<&PairRecord> = pairs.iter().filter(|p| !p.sees).collect();
        out.push_str(&format!(
            "{} spots; {} of {} pairs blocked:\n\n| Pair | Blocked by |\n|---|---|\n",
            spots.len(),
            blocked.len(),
            pairs.len()
        ));
        for p in blocked {
            out.push_str(&format!(
                "| {} – {} | {} |\n",
                cell(&p.a),
                cell(&p.b),
                cell(p.object.as_deref().unwrap_or("?"))
            ));
        }
        return out;
    }
    let cell_of = |a: &str, b: &str| -> String {
        if a == b {
            return "·".into();
        }
        match pairs
            .iter()
            .find(|p| (&*p.a, &*p.b) == (a, b) || (&*p.a, &*p.b) == (b, a))
        {
            Some(p) if p.sees => "sees".into(),
            Some(p) => format!("✗ {}", cell(p.object.as_deref().unwrap_or("?"))),
            None => String::new(),
        }
    };
    out.push_str("| |");
    for s in &spots {
        out.push_str(&format!(" {} |", cell(s)));
    }
    out.push_str("\n|---|");
    out.push_str(&"---|".repeat(spots.len()));
    out.push('\n');
    for a in &spots {
        out.push_str(&format!("| **{}** |", cell(a)));
        for b in &spots {
            out.push_str(&format!(" {} |", cell_of(a, b)));
        }
        out.push('\n');
    }
    out
}
