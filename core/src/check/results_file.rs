//! The results file (`*.results.json`, SPEC §3): written stable and byte-identical for the same
//! inputs, and read back for baselines and `diff`.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use serde::Deserialize;
use serde_json::Value;
use serde_json::value::RawValue;

use super::records::{ClearanceRecord, Hits, ProbeResult, Summary, Verdict, VolumeRecord};
use super::shard::Shard;
use crate::atomic::{AtomicFile, Spill};
use crate::error::{InputError, check_header};
use crate::input::text_digest;
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

    /// The file's text: stable JSON, no timestamps (the same layout [`ResultsWriter`] streams).
    pub fn to_json(&self) -> String {
        let mut out = head_text(&self.head(), &self.summary, self.results.len(), None);
        for (k, result) in self.results.iter().enumerate() {
            entry_text(result, k + 1 == self.results.len(), &mut out);
        }
        out.push_str(tail_text(self.results.len()));
        out
    }

    /// What the file says about the run, apart from its results.
    pub fn head(&self) -> ResultsHead {
        ResultsHead {
            probes: self.probes.clone(),
            level: self.level.clone(),
            level_digest: self.level_digest.clone(),
            probes_digest: self.probes_digest.clone(),
        }
    }
}

/// What a results file says about its run: the inputs as named, and their digests.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ResultsHead {
    /// The probe set, as named on the command line.
    pub probes: String,
    /// The level, as named on the command line or in the probe set.
    pub level: String,
    /// Digest of the level geometry as loaded.
    pub level_digest: String,
    /// Digest of the probe set's content.
    pub probes_digest: String,
}

/// What a shard's partial results file says beyond a results file's head: which shard it is, of how
/// many probes, and where in the whole set each of its results goes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PartHead {
    /// Which shard.
    pub shard: Shard,
    /// How many probes the whole set has.
    pub of_probes: usize,
    /// The position in the whole set of each result, in the order written (ascending).
    pub positions: Vec<usize>,
}

/// The file up to its first result: the head (and the shard's, for a partial file), the summary,
/// and the opening of the results array.
pub(super) fn head_text(
    head: &ResultsHead,
    summary: &Summary,
    count: usize,
    part: Option<&PartHead>,
) -> String {
    use crate::json_text::to_pretty;
    let mut value = serde_json::json!({
        "plumbline": if part.is_some() { PARTIAL_KIND } else { "results" }, "version": 1,
        "probes": head.probes, "level": head.level,
        "level_digest": head.level_digest, "probes_digest": head.probes_digest,
    });
    let map = value.as_object_mut().expect("an object");
    if let Some(part) = part {
        map.insert(
            "shard".into(),
            serde_json::json!({
                "index": part.shard.index, "count": part.shard.count, "of_probes": part.of_probes,
            }),
        );
        map.insert("positions".into(), serde_json::json!(part.positions));
    }
    map.insert("summary".into(), serde_json::json!(summary));
    map.insert("results".into(), serde_json::json!([]));
    let text = to_pretty(&value);
    // The text ends with `"results": []\n}\n`: open the array there instead.
    let mut out = text[..text.len() - "[]\n}\n".len()].to_string();
    out.push_str(if count == 0 { "[]" } else { "[\n" });
    out
}

/// One result as an element of the results array.
pub(super) fn entry_text(result: &ProbeResult, last: bool, out: &mut String) {
    out.push_str("    ");
    crate::json_text::write_pretty(&result.to_json(), 2, out);
    out.push_str(if last { "\n" } else { ",\n" });
}

/// `"plumbline"` of a shard's partial results file.
pub const PARTIAL_KIND: &str = "partial-results";

/// The end of the file after the last result.
pub(super) fn tail_text(count: usize) -> &'static str {
    if count == 0 { "\n}\n" } else { "  ]\n}\n" }
}

/// Writes a results file result by result, as a check answers its probes, so that a run of a
/// million probes never holds its whole results in memory: the results go to a scratch file beside
/// the output, and [`ResultsWriter::finish`] writes the head with the summary, then copies them in.
/// Byte for byte what [`ResultsFile::to_json`] gives for the same run.
pub struct ResultsWriter {
    path: PathBuf,
    body: Spill,
    written: usize,
    total: usize,
    entry: String,
}

impl ResultsWriter {
    /// Starts writing `path` for a run of `total` probes.
    pub fn create(path: &Path, total: usize) -> io::Result<ResultsWriter> {
        Ok(ResultsWriter {
            path: path.to_path_buf(),
            body: Spill::beside(path, "part")?,
            written: 0,
            total,
            entry: String::new(),
        })
    }

    /// Adds the next result, in probe order.
    pub fn push(&mut self, result: &ProbeResult) -> io::Result<()> {
        self.written += 1;
        self.entry.clear();
        entry_text(result, self.written == self.total, &mut self.entry);
        self.body.write_all(self.entry.as_bytes())
    }

    /// Writes the file atomically: head and summary, then every result pushed.
    pub fn finish(self, head: &ResultsHead, summary: &Summary) -> io::Result<()> {
        self.finish_as(head, summary, None)
    }

    /// Writes a shard's partial results file atomically: as [`ResultsWriter::finish`], with the
    /// shard's head (`plumbline merge` joins the parts).
    pub fn finish_part(
        self,
        head: &ResultsHead,
        summary: &Summary,
        part: &PartHead,
    ) -> io::Result<()> {
        self.finish_as(head, summary, Some(part))
    }

    fn finish_as(
        self,
        head: &ResultsHead,
        summary: &Summary,
        part: Option<&PartHead>,
    ) -> io::Result<()> {
        if self.written != self.total {
            return Err(io::Error::other(format!(
                "{} of {} results were written",
                self.written, self.total
            )));
        }
        let mut file = AtomicFile::create(&self.path)?;
        file.write_all(head_text(head, summary, self.total, part).as_bytes())?;
        self.body.copy_into(&mut file)?;
        file.write_all(tail_text(self.total).as_bytes())?;
        file.commit()
    }
}

/// The digest of a probe set as this program saves it (equal to [`text_digest`] of the saved file).
pub fn probes_digest(set: &ProbeSet) -> String {
    text_digest(probe_set_to_json(set).as_bytes())
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawResults<'a> {
    /// The JSON Schema the file names; not used.
    #[serde(rename = "$schema")]
    _schema: Option<String>,
    plumbline: String,
    version: u32,
    probes: String,
    level: String,
    level_digest: String,
    probes_digest: String,
    #[serde(deserialize_with = "crate::json_object::object")]
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
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    clearance: Option<ClearanceRecord>,
    #[serde(default, deserialize_with = "crate::json_object::objects")]
    volumes: Vec<VolumeRecord>,
}

/// Reads a results file written by this program.
pub fn load_results(path: &Path) -> Result<ResultsFile, InputError> {
    let bytes = crate::input::read_input(path)?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
    parse_results(path, text)
}

/// Parses the text of a results file; `path` is named in errors.
pub fn parse_results(path: &Path, text: &str) -> Result<ResultsFile, InputError> {
    let raw: RawResults =
        crate::json_object::from_object_str(text).map_err(|e| InputError::json(path, &e))?;
    check_header(
        path,
        &raw.plumbline,
        raw.version,
        "results",
        "a results file",
    )?;
    let results = raw
        .results
        .iter()
        .map(|item| parse_entry(path, text, item))
        .collect::<Result<Vec<_>, _>>()?;
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

/// Parses one element of a results array; `text` is the whole file's, for the line and column.
pub(super) fn parse_entry(
    path: &Path,
    text: &str,
    item: &RawValue,
) -> Result<ProbeResult, InputError> {
    let r: RawResult = crate::json_object::from_object_str(item.get())
        .map_err(|e| InputError::json_in(path, text, item.get(), &e))?;
    let hits = parse_hits(r.kind, r.hits).map_err(|m| {
        InputError::at_fragment(path, text, item.get(), format!("result \"{}\": {m}", r.id))
    })?;
    Ok(ProbeResult {
        id: r.id,
        kind: r.kind,
        verdict: r.verdict,
        reason: r.reason,
        hits,
        clearance: r.clearance,
        volumes: r.volumes,
    })
}

fn parse_hits(kind: ProbeKind, hits: Vec<Value>) -> Result<Hits, String> {
    if let Some(k) = hits.iter().position(|h| !h.is_object()) {
        return Err(format!("hits[{k}] must be an object"));
    }
    let value = Value::Array(hits);
    let err = |e: serde_json::Error| format!("hits: {e}");
    Ok(match kind {
        ProbeKind::Ray => Hits::Ray(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Sweep => Hits::Sweep(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Closest => Hits::Closest(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Overlap => Hits::Overlap(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Rest => Hits::Rest(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Sightlines => Hits::Sightlines(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Coverage => Hits::Coverage(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Jump => Hits::Jump(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Walk => Hits::Walk(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Reach => Hits::Reach(serde_json::from_value(value).map_err(err)?),
        ProbeKind::Settle => Hits::Settle(serde_json::from_value(value).map_err(err)?),
    })
}
