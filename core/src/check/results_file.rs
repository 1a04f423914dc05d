//! The results file (`*.results.json`, SPEC §3): written stable and byte-identical for the same
//! inputs, and read back for baselines and `diff`.

use std::io::{self, Write};
use std::path::Path;

use serde::Deserialize;
use serde_json::Value;
use serde_json::value::RawValue;

use super::records::{ClearanceRecord, Hits, ProbeResult, Summary, Verdict, VolumeRecord};
use super::shard::Shard;
use crate::atomic::AtomicFile;
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
        let (mut out, _) = head_text(&self.head(), &self.summary, self.results.len(), None);
        for (index, result) in self.results.iter().enumerate() {
            entry_text(result, index, &mut out);
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
/// and the opening of the results array; and where the summary's text starts in it.
pub(super) fn head_text(
    head: &ResultsHead,
    summary: &Summary,
    count: usize,
    part: Option<&PartHead>,
) -> (String, usize) {
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
    map.insert("summary".into(), serde_json::Value::Null);
    map.insert("results".into(), serde_json::json!([]));
    // Too long for one line whatever the head holds, so it ends with `"summary": null,`, then
    // `"results": []` and the closing brace, each on its own line: the summary's own text and the
    // results array's opening are put there instead.
    let text = to_pretty(&value);
    let key = "\n  \"summary\": ";
    let at = text
        .rfind(key)
        .expect("a results head is laid out a member to a line");
    let mut out = text[..at + key.len()].to_string();
    let summary_at = out.len();
    out.push_str(&summary_text(summary));
    out.push_str(",\n  \"results\": ");
    out.push_str(if count == 0 { "[]" } else { "[\n" });
    (out, summary_at)
}

/// The summary as a results file writes it: each verdict's count right-aligned to the width of the
/// number of probes, so that the text's length is known before any probe is answered (a streamed
/// file is written in place and its summary filled in last).
pub(super) fn summary_text(summary: &Summary) -> String {
    let width = summary.probes.to_string().len();
    format!(
        "{{\"probes\": {}, \"pass\": {:>width$}, \"fail\": {:>width$}, \"unchecked\": {:>width$}, \
         \"error\": {:>width$}}}",
        summary.probes, summary.pass, summary.fail, summary.unchecked, summary.error
    )
}

/// One result as the element at `index` of the results array, with what comes before it.
fn entry_text(result: &ProbeResult, index: usize, out: &mut String) {
    out.push_str(before_entry(index));
    out.push_str("    ");
    crate::json_text::write_layout(result, 2, out);
}

/// Room for a result in a results file: a little over the 352 bytes one takes on average in a set
/// of 200,000 rays of which half hit (70 MB), so that a block's text is seldom copied as it grows.
/// Ours.
const TYPICAL_ENTRY_BYTES: usize = 384;

/// What comes before the element at `index` of the results array: a comma and a line break, but
/// for the first.
pub(super) fn before_entry(index: usize) -> &'static str {
    if index == 0 { "" } else { ",\n" }
}

/// Results as the elements of the results array from `first` on, laid out as a results file
/// writes them: what a check's threads lay out in parallel for [`ResultsWriter::push_laid_out`].
pub fn entries_text<'r, R>(results: R, first: usize) -> String
where
    R: IntoIterator<Item = &'r ProbeResult>,
    R::IntoIter: ExactSizeIterator,
{
    let results = results.into_iter();
    let mut out = String::with_capacity(results.len() * TYPICAL_ENTRY_BYTES);
    for (k, result) in results.enumerate() {
        entry_text(result, first + k, &mut out);
    }
    out
}

/// `"plumbline"` of a shard's partial results file.
pub const PARTIAL_KIND: &str = "partial-results";

/// The end of the file after the last result.
pub(super) fn tail_text(count: usize) -> &'static str {
    if count == 0 { "\n}\n" } else { "\n  ]\n}\n" }
}

/// Writes a results file a block of results at a time (laid out by [`entries_text`] on the threads
/// that answered them), as a check answers its probes, so that a run of a million probes never
/// holds its whole results in memory: the file is written in place (a
/// temporary file renamed at the end, like every file this program writes) with a summary of zeros
/// of the final summary's length, which [`ResultsWriter::finish`] fills in. Byte for byte what
/// [`ResultsFile::to_json`] gives for the same run.
pub struct ResultsWriter {
    file: AtomicFile,
    /// Where the summary's text starts (its length is that of a summary of `total` probes).
    summary_at: usize,
    written: usize,
    total: usize,
    /// Bytes written since the system was last asked to start writing them to disk.
    unsent: usize,
}

/// A summary of `total` probes and no verdicts yet: what a streamed file's head holds until the
/// end (its text has the final summary's length).
fn no_verdicts(total: usize) -> Summary {
    Summary {
        probes: total,
        ..Summary::default()
    }
}

/// How many bytes of results are written between requests to start writing them to disk, so that
/// the final flush of a large file has little left to wait for.
const WRITEBACK_BYTES: usize = 8 << 20;

impl ResultsWriter {
    /// Starts writing `path` for a run of `total` probes, with this head (and the shard's, for a
    /// shard's partial results file, which `plumbline merge` joins).
    pub fn create(
        path: &Path,
        total: usize,
        head: &ResultsHead,
        part: Option<&PartHead>,
    ) -> io::Result<ResultsWriter> {
        let (text, summary_at) = head_text(head, &no_verdicts(total), total, part);
        let mut file = AtomicFile::create(path)?;
        file.write_all(text.as_bytes())?;
        Ok(ResultsWriter {
            file,
            summary_at,
            written: 0,
            total,
            unsent: 0,
        })
    }

    /// Adds the next `count` results, in probe order, laid out by [`entries_text`] (numbered from
    /// the results written before them), as the threads that answered them lay them out.
    pub fn push_laid_out(&mut self, text: &str, count: usize) -> io::Result<()> {
        if self.written + count > self.total {
            return Err(io::Error::other(format!(
                "more than the {} results the file was started for",
                self.total
            )));
        }
        self.written += count;
        self.write(text)
    }

    /// Writes `text`, and asks the system to start writing to disk every [`WRITEBACK_BYTES`].
    fn write(&mut self, text: &str) -> io::Result<()> {
        self.file.write_all(text.as_bytes())?;
        self.unsent += text.len();
        if self.unsent >= WRITEBACK_BYTES {
            self.file.start_writeback()?;
            self.unsent = 0;
        }
        Ok(())
    }

    /// Fills in the summary and puts the file in place, atomically.
    pub fn finish(mut self, summary: &Summary) -> io::Result<()> {
        if self.written != self.total {
            return Err(io::Error::other(format!(
                "{} of {} results were written",
                self.written, self.total
            )));
        }
        let text = summary_text(summary);
        if summary.probes != self.total
            || text.len() != summary_text(&no_verdicts(self.total)).len()
        {
            return Err(io::Error::other(format!(
                "the summary counts {} probes, the file holds {}",
                summary.probes, self.total
            )));
        }
        self.write(tail_text(self.total))?;
        self.file
            .write_at(self.summary_at as u64, text.as_bytes())?;
        self.file.commit()
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
        id: r.id.into(),
        kind: r.kind,
        verdict: r.verdict,
        reason: r.reason.into(),
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

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn demo_baseline() -> (std::path::PathBuf, ResultsFile) {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../scenes")
            .join(crate::demo::files::BASELINE);
        let file = load_results(&path).expect("the demo's baseline");
        (path, file)
    }

    /// A writer of `file`'s head at `out` with every one of its results pushed, not finished.
    fn pushed(file: &ResultsFile, out: &Path) -> ResultsWriter {
        let mut writer =
            ResultsWriter::create(out, file.results.len(), &file.head(), None).unwrap();
        let text = entries_text(&file.results, 0);
        writer.push_laid_out(&text, file.results.len()).unwrap();
        writer
    }

    #[test]
    fn a_streamed_file_is_the_files_text_byte_for_byte() {
        // The demo's baseline (67 probes: counts of one and two digits, so the summary is padded).
        let (path, file) = demo_baseline();
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("streamed.results.json");
        pushed(&file, &out).finish(&file.summary).unwrap();
        let streamed = std::fs::read_to_string(&out).unwrap();
        assert_eq!(streamed, file.to_json());
        assert_eq!(streamed, std::fs::read_to_string(&path).unwrap());
        let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(names.len(), 1, "only the results file is left");
    }

    #[test]
    fn results_laid_out_in_blocks_are_the_files_text_byte_for_byte() {
        // The demo's baseline in blocks of every size from one result to all of them: what a
        // check's threads lay out is what the file holds.
        let (_, file) = demo_baseline();
        let dir = tempfile::tempdir().unwrap();
        let count = file.results.len();
        for size in 1..=count {
            let out = dir.path().join(format!("blocks-{size}.results.json"));
            let mut writer = ResultsWriter::create(&out, count, &file.head(), None).unwrap();
            for (k, block) in file.results.chunks(size).enumerate() {
                let text = entries_text(block, k * size);
                writer.push_laid_out(&text, block.len()).unwrap();
            }
            writer.finish(&file.summary).unwrap();
            assert_eq!(
                std::fs::read_to_string(&out).unwrap(),
                file.to_json(),
                "{size}"
            );
        }
    }

    #[test]
    fn more_results_than_the_file_was_started_for_are_refused() {
        let (_, file) = demo_baseline();
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("over.results.json");
        let mut writer = pushed(&file, &out);
        let text = entries_text(&file.results[..1], file.results.len());
        assert!(writer.push_laid_out(&text, 1).is_err());
    }

    #[test]
    fn a_summary_that_does_not_fit_the_file_writes_nothing() {
        let (_, file) = demo_baseline();
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("wrong.results.json");
        let mut wrong = file.summary;
        wrong.probes = 1000;
        assert!(pushed(&file, &out).finish(&wrong).is_err());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    }

    #[test]
    fn the_shortest_head_is_still_laid_out_a_member_to_a_line() {
        // Empty names and digests: the summary is still found, and the file reads back.
        let head = ResultsHead {
            probes: String::new(),
            level: String::new(),
            level_digest: String::new(),
            probes_digest: String::new(),
        };
        let summary = no_verdicts(0);
        let (mut text, at) = head_text(&head, &summary, 0, None);
        assert!(text[at..].starts_with(&summary_text(&summary)), "{text}");
        text.push_str(tail_text(0));
        let back = parse_results(Path::new("r.json"), &text).unwrap();
        assert_eq!((back.summary, back.results.len()), (summary, 0));
    }

    proptest! {
        /// The summary's text has one length for every split of the probes between verdicts (so
        /// the file can be written before they are known), and reads back as the same counts by
        /// a general JSON reader (serde_json; RFC 8259 §2 allows the padding's spaces).
        #[test]
        fn the_summary_has_one_length_and_reads_back(
            probes in 0usize..20_000_000,
            cuts in prop::array::uniform3(0.0f64..=1.0),
        ) {
            let mut cuts = cuts.map(|c| (c * probes as f64) as usize);
            cuts.sort();
            let summary = Summary {
                probes,
                pass: cuts[0],
                fail: cuts[1] - cuts[0],
                unchecked: cuts[2] - cuts[1],
                error: probes - cuts[2],
            };
            let text = summary_text(&summary);
            prop_assert_eq!(text.len(), summary_text(&no_verdicts(probes)).len());
            prop_assert_eq!(serde_json::from_str::<Summary>(&text).unwrap(), summary);
        }
    }
}
