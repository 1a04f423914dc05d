//! Joining the partial results files of a sharded check (`check --shard K/N --out …`) into the
//! results file a single run writes, byte for byte: each result's text is copied as the shard wrote
//! it, in the order of the whole set.

use std::io::Write;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use serde_json::value::RawValue;

use super::records::{ProbeResult, Summary};
use super::results_file::{
    PARTIAL_KIND, ResultsHead, before_entry, head_text, parse_entry, tail_text,
};
use super::shard::Shard;
use crate::atomic::AtomicFile;
use crate::error::{Error, InputError, check_header};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPart<'a> {
    #[serde(rename = "$schema")]
    _schema: Option<String>,
    #[serde(rename = "plumbline")]
    _plumbline: String,
    #[serde(rename = "version")]
    _version: u32,
    probes: String,
    level: String,
    level_digest: String,
    probes_digest: String,
    #[serde(deserialize_with = "crate::json_object::object")]
    shard: RawShard,
    positions: Vec<usize>,
    #[serde(deserialize_with = "crate::json_object::object")]
    summary: Summary,
    #[serde(borrow)]
    results: Vec<&'a RawValue>,
}

/// The fields that say what a file is.
#[derive(Deserialize)]
struct Kind {
    plumbline: String,
    version: u32,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawShard {
    index: usize,
    count: usize,
    of_probes: usize,
}

/// One partial file read: its text, and where it came from.
struct PartText {
    path: PathBuf,
    text: String,
}

/// Joins the partial results files `parts` (every shard of one check, in any order) into the
/// results file `out`, written atomically. `each` is handed every result in probe order, parsed
/// (for reports), when given. Refuses parts of different probe sets, levels or splits, and a set of
/// parts with a shard missing or given twice.
pub fn merge(
    parts: &[PathBuf],
    out: &Path,
    mut each: Option<&mut dyn FnMut(ProbeResult) -> Result<(), Error>>,
) -> Result<(ResultsHead, Summary), Error> {
    let texts = parts
        .iter()
        .map(|path| {
            let bytes = crate::input::read_input(path)?;
            let text = String::from_utf8(bytes)
                .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
            Ok(PartText {
                path: path.clone(),
                text,
            })
        })
        .collect::<Result<Vec<_>, Error>>()?;
    let raws = texts
        .iter()
        .map(|p| parse_part(&p.path, &p.text))
        .collect::<Result<Vec<_>, InputError>>()?;
    let Some(first) = raws.first() else {
        return Err(Error::Incomplete(
            "merge needs the partial results files of every shard".into(),
        ));
    };
    let count = first.shard.count;
    let total = first.shard.of_probes;
    let mut by_shard: Vec<Option<usize>> = vec![None; count];
    let mut summary = Summary::default();
    for (k, raw) in raws.iter().enumerate() {
        let path = &texts[k].path;
        let first_path = texts[0].path.display();
        agree(path, raw, first, &first_path.to_string())?;
        let slot = &mut by_shard[raw.shard.index - 1];
        if let Some(other) = *slot {
            return Err(InputError::file(
                path,
                format!(
                    "is shard {}/{count}, as is {}",
                    raw.shard.index,
                    texts[other].path.display()
                ),
            )
            .into());
        }
        *slot = Some(k);
        summary.add(&raw.summary);
    }
    let missing: Vec<String> = (0..count)
        .filter(|&s| by_shard[s].is_none())
        .map(|s| format!("{}/{count}", s + 1))
        .collect();
    if !missing.is_empty() {
        let (noun, verb) = if missing.len() == 1 {
            ("shard", "is")
        } else {
            ("shards", "are")
        };
        return Err(Error::Incomplete(format!(
            "{noun} {} of the check {verb} missing: give the partial results file of every shard",
            missing.join(", ")
        )));
    }
    // The parts' own results bound the set's size before anything is sized by it, so a part that
    // claims a set of billions cannot make the merge allocate for it.
    if summary.probes != total {
        return Err(Error::Incomplete(format!(
            "the parts hold {} results, but their shards say the set has {total} probes",
            summary.probes
        )));
    }
    let mut source: Vec<Option<(usize, usize)>> = vec![None; total];
    for (k, raw) in raws.iter().enumerate() {
        for (i, &position) in raw.positions.iter().enumerate() {
            let slot = source.get_mut(position).ok_or_else(|| {
                InputError::at(
                    &texts[k].path,
                    "field \"positions\"",
                    format!("position {position} is beyond the set's {total} probes"),
                )
            })?;
            if let Some((other, _)) = *slot {
                return Err(InputError::at(
                    &texts[k].path,
                    "field \"positions\"",
                    format!(
                        "position {position} is answered by {} too",
                        texts[other].path.display()
                    ),
                )
                .into());
            }
            *slot = Some((k, i));
        }
    }
    if source.iter().any(Option::is_none) {
        return Err(Error::Incomplete(format!(
            "the parts hold {} of the set's {total} probes",
            source.iter().flatten().count()
        )));
    }
    let head = ResultsHead {
        probes: first.probes.clone(),
        level: first.level.clone(),
        level_digest: first.level_digest.clone(),
        probes_digest: first.probes_digest.clone(),
    };
    let written = |source| Error::Write {
        path: out.to_path_buf(),
        source,
    };
    let mut file = AtomicFile::create(out).map_err(written)?;
    file.write_all(head_text(&head, &summary, total, None).0.as_bytes())
        .map_err(written)?;
    for (position, &(k, i)) in source.iter().flatten().enumerate() {
        let raw = raws[k].results[i];
        write!(file, "{}    {}", before_entry(position), raw.get()).map_err(written)?;
        if let Some(each) = each.as_deref_mut() {
            each(parse_entry(&texts[k].path, &texts[k].text, raw)?)?;
        }
    }
    file.write_all(tail_text(total).as_bytes())
        .map_err(written)?;
    file.commit().map_err(written)?;
    Ok((head, summary))
}

/// Reads one partial file and checks it is whole: a shard of a known split, one position per result.
fn parse_part<'a>(path: &Path, text: &'a str) -> Result<RawPart<'a>, InputError> {
    // What kind of file it is first, so a whole results file is named as such.
    let kind: Kind = serde_json::from_str(text).map_err(|e| InputError::json(path, &e))?;
    check_header(
        path,
        &kind.plumbline,
        kind.version,
        PARTIAL_KIND,
        "a shard's partial results (check --shard K/N --out …)",
    )?;
    let raw: RawPart =
        crate::json_object::from_object_str(text).map_err(|e| InputError::json(path, &e))?;
    let shard = format!("{}/{}", raw.shard.index, raw.shard.count);
    if shard.parse::<Shard>().is_err() {
        return Err(InputError::at(
            path,
            "field \"shard\"",
            format!("{shard} is not a shard of a split"),
        ));
    }
    if raw.positions.len() != raw.results.len() || raw.summary.probes != raw.results.len() {
        return Err(InputError::file(
            path,
            format!(
                "holds {} results, {} positions and a summary of {} probes; it was cut short or edited",
                raw.results.len(),
                raw.positions.len(),
                raw.summary.probes
            ),
        ));
    }
    Ok(raw)
}

/// Refuses a part that is not of the same check as the first one.
fn agree(path: &Path, raw: &RawPart, first: &RawPart, first_path: &str) -> Result<(), InputError> {
    let differs = |what: &str| {
        InputError::file(
            path,
            format!("{what} than {first_path}; merge joins the shards of one check"),
        )
    };
    if raw.probes_digest != first.probes_digest || raw.probes != first.probes {
        return Err(differs("answers a different probe set"));
    }
    if raw.level_digest != first.level_digest || raw.level != first.level {
        return Err(differs("was answered on a different level"));
    }
    if raw.shard.count != first.shard.count || raw.shard.of_probes != first.shard.of_probes {
        return Err(differs(&format!(
            "is shard {}/{} of {} probes, a different split",
            raw.shard.index, raw.shard.count, raw.shard.of_probes
        )));
    }
    Ok(())
}
