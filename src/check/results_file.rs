//! The results file (`*.results.json`, SPEC §3): written stable and byte-identical for the same
//! inputs, and read back for baselines and `diff`.

use std::path::Path;

use serde::{Deserialize, Serialize};
use serde_json::Value;
use serde_json::value::RawValue;
use sha2::{Digest, Sha256};

use super::records::{
    ClearanceRecord, ClosestRecord, Hits, OverlapRecord, ProbeResult, RayHitRecord, Summary,
    SweepHitRecord, Verdict,
};
use crate::error::InputError;
use crate::probe::{ProbeSet, write_probe_set_compact};

/// A results file: what was checked, on which geometry, and every probe's result.
#[derive(Debug, Clone, PartialEq, Serialize)]
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
    /// Assembles a results file.
    pub fn new(
        probes: String,
        level: String,
        level_digest: String,
        set: &ProbeSet,
        results: Vec<ProbeResult>,
    ) -> Self {
        ResultsFile {
            plumbline: "results".into(),
            version: 1,
            probes,
            level,
            level_digest,
            probes_digest: probes_digest(set),
            summary: Summary::of(&results),
            results,
        }
    }

    /// The file's text: stable JSON, no timestamps.
    pub fn to_json(&self) -> String {
        crate::json_text::to_pretty(&serde_json::to_value(self).expect("results serialise"))
    }
}

/// A digest of a probe set's content (its compact canonical JSON).
pub fn probes_digest(set: &ProbeSet) -> String {
    let mut hasher = Sha256::new();
    write_probe_set_compact(set, &mut hasher).expect("hashing cannot fail");
    let bytes = hasher.finalize();
    format!(
        "sha256:{}",
        bytes.iter().map(|b| format!("{b:02x}")).collect::<String>()
    )
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
    kind: String,
    verdict: Verdict,
    reason: String,
    hits: Vec<Value>,
    clearance: Option<ClearanceRecord>,
}

/// Reads a results file written by this program.
pub fn load_results(path: &Path) -> Result<ResultsFile, InputError> {
    let bytes = crate::level::read_input(path)?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
    let raw: RawResults = serde_json::from_str(text).map_err(|e| InputError::json(path, &e))?;
    if raw.plumbline != "results" || raw.version != 1 {
        return Err(InputError::at(
            path,
            "field \"plumbline\"",
            "not a version 1 results file (\"plumbline\": \"results\")",
        ));
    }
    let mut results = Vec::with_capacity(raw.results.len());
    for item in &raw.results {
        let r: RawResult = serde_json::from_str(item.get())
            .map_err(|e| InputError::json_in(path, text, item.get(), &e))?;
        let hits = parse_hits(&r.kind, r.hits).map_err(|m| {
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

fn parse_hits(kind: &str, hits: Vec<Value>) -> Result<Hits, String> {
    let value = Value::Array(hits);
    let err = |e: serde_json::Error| format!("hits: {e}");
    Ok(match kind {
        "ray" => Hits::Ray(serde_json::from_value::<Vec<RayHitRecord>>(value).map_err(err)?),
        "sweep" => Hits::Sweep(serde_json::from_value::<Vec<SweepHitRecord>>(value).map_err(err)?),
        "closest" => {
            Hits::Closest(serde_json::from_value::<Vec<ClosestRecord>>(value).map_err(err)?)
        }
        "overlap" => {
            Hits::Overlap(serde_json::from_value::<Vec<OverlapRecord>>(value).map_err(err)?)
        }
        other => return Err(format!("unknown kind \"{other}\"")),
    })
}
