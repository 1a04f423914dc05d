//! The results file (`*.results.json`, SPEC §3): written stable and byte-identical for the same
//! inputs, and read back for baselines and `diff`.

use std::path::Path;

use serde::Deserialize;
use serde_json::Value;
use serde_json::value::RawValue;
use sha2::{Digest, Sha256};

use super::records::{ClearanceRecord, Hits, ProbeResult, Summary, Verdict};
use crate::error::{InputError, check_header};
use crate::probe::{ProbeKind, ProbeSet, probe_set_to_json};

/// A results file: what was checked, on which geometry, and every probe's result.
#[derive(Debug, Clone, PartialEq)]
pub struct ResultsFile {
    /// Always `"results"`.
    pub plumbline: String,
    /// Format version, 1.
    pub version: u32,
    /// The probe set, as named on the command line.
    pub probes: String,
    /// The level, as named on the command line or in the probe set.
    pub level: String,
    /// Digest of the level geometry as loaded.
    pub level_digest: String,
    /// Digest of the probe set's content.
    pub probes_digest: String,
    /// Counts by verdict.
    pub summary: Summary,
    /// One result per probe, in probe-set order.
    pub results: Vec<ProbeResult>,
}

impl ResultsFile {
    /// Assembles a results file; `probes_digest` is [`text_digest`] of the probe-set file's bytes.
    pub fn new(
        probes: String,
        level: String,
        level_digest: String,
        probes_digest: String,
        results: Vec<ProbeResult>,
    ) -> Self {
        ResultsFile {
            plumbline: "results".into(),
            version: 1,
            probes,
            level,
            level_digest,
            probes_digest,
            summary: Summary::of(&results),
            results,
        }
    }

    /// The file's text: stable JSON, no timestamps. Written result by result, so no value tree of
    /// the whole run is ever built.
    pub fn to_json(&self) -> String {
        use crate::json_text::{to_pretty, write_pretty};
        let head = serde_json::json!({
            "plumbline": self.plumbline, "version": self.version, "probes": self.probes, "level": self.level,
            "level_digest": self.level_digest, "probes_digest": self.probes_digest, "summary": self.summary,
            "results": [],
        });
        let head = to_pretty(&head);
        // The head ends with `"results": []\n}\n`; open the array there and write each result into it.
        let mut out = head[..head.len() - "[]\n}\n".len()].to_string();
        if self.results.is_empty() {
            out.push_str("[]\n}\n");
            return out;
        }
        out.push_str("[\n");
        for (k, result) in self.results.iter().enumerate() {
            out.push_str("    ");
            write_pretty(&result.to_json(), 2, &mut out);
            out.push_str(if k + 1 < self.results.len() {
                ",\n"
            } else {
                "\n"
            });
        }
        out.push_str("  ]\n}\n");
        out
    }
}

/// `sha256:<hex>` of a file's bytes: the `probes_digest` of a probe-set file as read.
pub fn text_digest(bytes: &[u8]) -> String {
    let hash = Sha256::digest(bytes);
    format!(
        "sha256:{}",
        hash.iter().map(|b| format!("{b:02x}")).collect::<String>()
    )
}

/// The digest of a probe set as this program saves it (equal to [`text_digest`] of the saved file).
pub fn probes_digest(set: &ProbeSet) -> String {
    text_digest(probe_set_to_json(set).as_bytes())
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawResults<'a> {
    plumbline: String,
    version: u32,
    probes: String,
    level: String,
    level_digest: String,
    probes_digest: String,
    summary: Summary,
    #[serde(borrow)]
    results: Vec<&'a RawValue>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawResult {
    id: String,
    kind: ProbeKind,
    verdict: Verdict,
    reason: String,
    hits: Vec<Value>,
    clearance: Option<ClearanceRecord>,
}

/// Reads a results file written by this program.
pub fn load_results(path: &Path) -> Result<ResultsFile, InputError> {
    let bytes = crate::input::read_input(path)?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
    let raw: RawResults = serde_json::from_str(text).map_err(|e| InputError::json(path, &e))?;
    check_header(
        path,
        &raw.plumbline,
        raw.version,
        "results",
        "a results file",
    )?;
    let mut results = Vec::with_capacity(raw.results.len());
    for item in &raw.results {
        let r: RawResult = serde_json::from_str(item.get())
            .map_err(|e| InputError::json_in(path, text, item.get(), &e))?;
        let hits = parse_hits(r.kind, r.hits).map_err(|m| {
            InputError::at_fragment(path, text, item.get(), format!("result \"{}\": {m}", r.id))
        })?;
        results.push(ProbeResult {
            id: r.id,
            kind: r.kind,
            verdict: r.verdict,
            reason: r.reason,
            hits,
            clearance: r.clearance,
        });
    }
    Ok(ResultsFile {
        plumbline: raw.plumbline,
        version: raw.version,
        probes: raw.probes,
        level: raw.level,
        level_digest: raw.level_digest,
        probes_digest: raw.probes_digest,
        summary: raw.summary,
        results,
    })
}

fn parse_hits(kind: ProbeKind, hits: Vec<Value>) -> Result<Hits, String> {
    let value = Value::Array(hits);
    let err = |e: serde_json::Error| format!("hits: {e}");
    Ok(match kind {
        ProbeKind::Ray => Hits::Ray(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Sweep => Hits::Sweep(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Closest => Hits::Closest(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Overlap => Hits::Overlap(serde_json::from_value(value).map_err(err)?),
    })
}
