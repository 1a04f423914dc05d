//! A Markdown summary for a code-review comment: counts, then failing and changed probes in tables.

use crate::check::{Comparison, ResultsFile, Verdict};
use crate::probe::ProbeSet;

/// The Markdown summary of a run, with what changed since the baseline when one was given.
pub fn markdown_summary(
    results: &ResultsFile,
    set: &ProbeSet,
    changes: Option<&Comparison>,
) -> String {
    let s = &results.summary;
    let label = |id: &str| {
        set.probes
            .iter()
            .find(|p| p.id == id)
            .and_then(|p| p.label.clone())
    };
    let mut out = format!(
        "### Plumbline check: {} of {} probes pass\n\n",
        s.pass, s.probes
    );
    out.push_str(&format!(
        "{} pass · {} fail · {} error · {} unchecked — level `{}`\n",
        s.pass, s.fail, s.error, s.unchecked, results.level
    ));
    let bad: Vec<_> = results
        .results
        .iter()
        .filter(|r| matches!(r.verdict, Verdict::Fail | Verdict::Error))
        .collect();
    if !bad.is_empty() {
        out.push_str("\n#### Failing\n\n| Probe | Kind | Verdict | Reason |\n|---|---|---|---|\n");
        for r in bad {
            out.push_str(&format!(
                "| {} | {} | {} | {} |\n",
                probe_cell(&r.id, label(&r.id).as_deref()),
                r.kind,
                r.verdict.word(),
                cell(&r.reason)
            ));
        }
    }
    if let Some(c) = changes {
        out.push_str(&format!(
            "\n#### Changed since the baseline ({})\n\n",
            c.count()
        ));
        if c.level_differs {
            out.push_str("The baseline was computed on different level geometry.\n\n");
        }
        if c.is_empty() {
            out.push_str("Nothing changed.\n");
        } else {
            out.push_str("| Probe | What changed |\n|---|---|\n");
            for p in &c.changed {
                let what: Vec<String> = p.aspects.iter().map(|a| a.to_string()).collect();
                out.push_str(&format!(
                    "| {} | {} |\n",
                    probe_cell(&p.id, label(&p.id).as_deref()),
                    cell(&what.join("; "))
                ));
            }
            for id in &c.added {
                out.push_str(&format!(
                    "| {} | new probe |\n",
                    probe_cell(id, label(id).as_deref())
                ));
            }
            for id in &c.removed {
                out.push_str(&format!("| `{}` | removed |\n", cell(id)));
            }
        }
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
fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace(['\n', '\r'], " ")
}
