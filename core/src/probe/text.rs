//! A probe-set file (`*.probes.json`, SPEC §2) read and checked (its ids, and its first probes
//! whole: [`CHECKED_WHOLE`]), its probes parsed when they are needed, a chunk at a time: a check of
//! a million probes never holds a million parsed probes (about 470 bytes each), only the file's
//! text (about 100–150 bytes a probe), where each probe lies in it, and at most
//! [`PARSED_AHEAD_BYTES`] of probes parsed while its level loaded and its ray index was built.

use std::borrow::Cow;
use std::hash::BuildHasher;
use std::io::Read;
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::sync::atomic::{AtomicU8, Ordering};

use super::model::{Probe, ProbeSet};
use super::parse::parse_probe;
use super::plain_read::{SetFields, plain_id, plain_level};
use super::rules::{Rule, parse_rule};
use crate::beside::beside;
use crate::error::{InputError, check_header};
use crate::input::{MAX_PROBES, read_input, text_digest};

/// Probes checked whole as soon as a file is read, before anything is answered: every probe of
/// a set this size or smaller (nearly every set a person writes), so its mistakes are reported
/// first. Past them only the ids are checked then (unique; the longest's length), and each probe
/// is checked whole when it is parsed to be answered: a check of a large set reads each probe
/// once, and a mistake there still stops it, naming the probe's place, before its results or
/// reports are written. One chunk, so that a check takes them as its first. Ours.
pub const CHECKED_WHOLE: usize = CHUNK;

/// A check parses and answers the probes this many at a time; chunks parsed before they are asked
/// for are kept by their range. Ours.
pub const CHUNK: usize = 8192;

/// How much may be parsed ahead while the level loads and its ray index is built, by an estimate
/// of what parsed probes hold (a [`Probe`] each and about their text again: paths, labels). A
/// chunk of rays is ~4.5 MB by it, so 24 chunks: on two threads (200k rays, 1M-triangle level,
/// 14 alternating runs) 0.658 s against 0.668 for 18 chunks and 0.686 for 12; a million probes
/// then peak at 463 MB instead of 437 and 399 (257 bytes a probe above a 1,000-probe check's
/// 206 MB). Ours.
const PARSED_AHEAD_BYTES: usize = 112 << 20;

/// A chunk parsed before it was asked for: its range (of file order) and its probes or the first
/// error among them.
type ParsedAhead = (Range<usize>, Result<Vec<Probe>, InputError>);

/// How much of a probe-set file is read first, for the level it names: its head. Ours.
const HEAD_BYTES: u64 = 1 << 16;

/// Who started loading the level of a file being read ([`ProbeText::read_alongside`]).
const NO_ONE_YET: u8 = 0;
const HEAD: u8 = 1;
const TOP: u8 = 2;
const UNREADABLE: u8 = 3;

/// Where loading the level of a file being read stands ([`ProbeText::read_alongside`]).
const LEVEL_WAITS: u8 = 0;
const LEVEL_LOADS: u8 = 1;
const LEVEL_LOADED: u8 = 2;

/// The level a probe-set file names in its head (its first [`HEAD_BYTES`]), read on its own:
/// `None` when it is not a regular file, cannot be read, or does not name the level plainly there.
fn head_level(path: &Path) -> Option<String> {
    // Looked at before opening, as `read_input` does: opening a pipe blocks.
    if !std::fs::metadata(path).ok()?.is_file() {
        return None;
    }
    let mut head = Vec::new();
    std::fs::File::open(path)
        .ok()?
        .take(HEAD_BYTES)
        .read_to_end(&mut head)
        .ok()?;
    let text = match std::str::from_utf8(&head) {
        Ok(text) => text,
        // Cut within a character: the whole characters before it.
        Err(e) => std::str::from_utf8(&head[..e.valid_up_to()]).ok()?,
    };
    plain_level(text).map(str::to_string)
}

/// A checked probe-set file: its ids are unique and its first [`CHECKED_WHOLE`] probes valid; any
/// other probe is checked whole whenever it is parsed (every way of getting probes parses them).
#[derive(Debug)]
pub struct ProbeText {
    path: PathBuf,
    text: String,
    level: String,
    /// Where each probe lies in `text`, in file order.
    spans: Vec<(usize, usize)>,
    /// The length of the longest id, in characters.
    longest_id: usize,
    /// `sha256:` of the file's bytes as read ([`text_digest`]).
    digest: String,
    /// The rules, parsed.
    rules: Vec<Rule>,
    /// The `$schema` the file names.
    schema: Option<String>,
    /// Chunks parsed before they were asked for — the first, when the file was checked, and any
    /// parsed ahead while the level loaded — each kept until it is first asked for: those are not
    /// parsed twice.
    ahead: Mutex<Vec<ParsedAhead>>,
}

impl ProbeText {
    /// Reads and checks a probe-set file.
    pub fn read(path: &Path) -> Result<ProbeText, InputError> {
        ProbeText::read_alongside(path, |_| ()).map(|(text, ())| text)
    }

    /// Reads and checks a probe-set file as [`ProbeText::read`] does, and runs `alongside` on the
    /// level it names, in parallel (on the current thread pool) with reading and checking the
    /// probes: a check loads its level meanwhile. The level's name is taken from the file's head,
    /// read on its own before the rest of the file, where the head is plain and names it before
    /// the probes (as every file this program writes does); otherwise once the file's top is read.
    /// The probes' errors come first, and a file whose top cannot be read never has its level
    /// loaded on one thread. Should the head name another level than the whole file (the file
    /// changed while it was read), the file's own level is the one loaded. Once the probes are
    /// checked, if the level is still loading, the next chunks of probes are parsed meanwhile
    /// (see [`ProbeText::probes`]).
    pub fn read_alongside<R: Send>(
        path: &Path,
        alongside: impl Fn(&str) -> R + Sync,
    ) -> Result<(ProbeText, R), InputError> {
        ProbeText::read_alongside_with(path, head_level, alongside)
    }

    /// [`ProbeText::read_alongside`] with the head read by `head` (a test's stand-in can name
    /// another level than the file does).
    fn read_alongside_with<R: Send>(
        path: &Path,
        head: fn(&Path) -> Option<String>,
        alongside: impl Fn(&str) -> R + Sync,
    ) -> Result<(ProbeText, R), InputError> {
        // Who starts the level: the head, the top, or no one (the file cannot be read).
        let starter = AtomicU8::new(NO_ONE_YET);
        // Where the level stands: once the probes are checked, more are parsed while it loads, on
        // a core its serial parts leave idle (on one thread it loads after they are checked).
        let loading = AtomicU8::new(LEVEL_WAITS);
        let alongside = |named: &str| {
            loading.store(LEVEL_LOADS, Ordering::Release);
            let also = alongside(named);
            loading.store(LEVEL_LOADED, Ordering::Release);
            also
        };
        let ahead = |text: ProbeText| {
            text.parse_ahead(PARSED_AHEAD_BYTES, || {
                loading.load(Ordering::Acquire) == LEVEL_LOADS
            });
            text
        };
        let starts = |who| {
            starter
                .compare_exchange(NO_ONE_YET, who, Ordering::AcqRel, Ordering::Acquire)
                .is_ok()
        };
        let (read, from_head) = rayon::join(
            || {
                let top = read_input(path).and_then(|bytes| {
                    let text = String::from_utf8(bytes).map_err(|e| {
                        InputError::file(path, format!("not UTF-8 text: {}", e.utf8_error()))
                    })?;
                    ProbeText::read_top(path, text)
                });
                let (unchecked, rule_spans) = match top {
                    Ok(top) => top,
                    Err(error) => {
                        starts(UNREADABLE);
                        return Err(error);
                    }
                };
                if !starts(TOP) {
                    // The head started the level.
                    return Ok((ahead(unchecked.checked(&rule_spans)?), None));
                }
                let level = unchecked.level.clone();
                let (checked, also) = beside(
                    move || unchecked.checked(&rule_spans).map(ahead),
                    || alongside(&level),
                );
                Ok((checked?, Some(also)))
            },
            || {
                let named = (starter.load(Ordering::Acquire) == NO_ONE_YET)
                    .then(|| head(path))
                    .flatten()?;
                starts(HEAD).then(|| {
                    let also = alongside(&named);
                    (named, also)
                })
            },
        );
        let (checked, from_top) = read?;
        let also = match (from_top, from_head) {
            (Some(also), _) => also,
            (None, Some((named, also))) if named == checked.level => also,
            (None, _) => alongside(&checked.level),
        };
        Ok((checked, also))
    }

    /// Checks probe-set text; `path` is named in errors.
    pub fn parse(path: &Path, text: String) -> Result<ProbeText, InputError> {
        let (unchecked, rule_spans) = ProbeText::read_top(path, text)?;
        unchecked.checked(&rule_spans)
    }

    /// The file's top: its header, its rules parsed, where each probe and rule lies; the probes
    /// are not checked yet (see [`ProbeText::checked`]).
    fn read_top(path: &Path, text: String) -> Result<(ProbeText, Vec<(usize, usize)>), InputError> {
        let raw = SetFields::read(&text).map_err(|e| InputError::json(path, &e))?;
        check_header(path, &raw.plumbline, raw.version, "probes", "a probe set")?;
        if raw.probes.len() > MAX_PROBES {
            return Err(InputError::at(
                path,
                "field \"probes\"",
                format!("{} probes; at most {MAX_PROBES} are read", raw.probes.len()),
            ));
        }
        // Where each fragment lies in the text.
        let base = text.as_ptr() as usize;
        let spans_of = |fragments: &[&str]| -> Vec<(usize, usize)> {
            fragments
                .iter()
                .map(|f| {
                    let start = f.as_ptr() as usize - base;
                    (start, start + f.len())
                })
                .collect()
        };
        let spans = spans_of(&raw.probes);
        let rules = raw
            .rules
            .iter()
            .map(|r| parse_rule(path, &text, r))
            .collect::<Result<Vec<Rule>, _>>()?;
        let rule_spans = spans_of(&raw.rules);
        let (schema, level) = (raw.schema, raw.level);
        let unchecked = ProbeText {
            path: path.to_path_buf(),
            text,
            schema,
            level,
            spans,
            longest_id: 0,
            digest: String::new(),
            rules,
            ahead: Mutex::default(),
        };
        Ok((unchecked, rule_spans))
    }

    /// This text once every probe is checked (`rule_spans`: where each rule lies), its digest
    /// taken meanwhile on the current thread pool.
    fn checked(mut self, rule_spans: &[(usize, usize)]) -> Result<ProbeText, InputError> {
        let (longest, digest) = rayon::join(
            || self.check_every_probe(rule_spans),
            || text_digest(self.text.as_bytes()),
        );
        let (longest, first) = longest?;
        self.longest_id = longest;
        if !first.is_empty() {
            let range = 0..first.len();
            self.ahead = Mutex::new(vec![(range, Ok(first))]);
        }
        self.digest = digest;
        Ok(self)
    }

    /// Checks the ids of every probe (unique among probes and rules) and the first
    /// [`CHECKED_WHOLE`] probes whole; returns the length of the longest id and those probes. The
    /// first error in file order wins.
    fn check_every_probe(
        &self,
        rule_spans: &[(usize, usize)],
    ) -> Result<(usize, Vec<Probe>), InputError> {
        let mut whole = self
            .parse_each(0..self.spans.len().min(CHECKED_WHOLE))
            .into_iter();
        let mut first = Vec::with_capacity(whole.len());
        // Every id in file order, the rules' first, up to the first probe that cannot be read.
        let mut ids: Vec<Cow<'_, str>> = Vec::with_capacity(self.rules.len() + self.spans.len());
        ids.extend(
            self.rules
                .iter()
                .map(|rule| Cow::Borrowed(rule.id.as_str())),
        );
        let mut unreadable = None;
        for k in 0..self.spans.len() {
            let id = match whole.next() {
                Some(Ok(probe)) => {
                    let id = Cow::Owned(probe.id.to_string());
                    first.push(probe);
                    Ok(id)
                }
                Some(Err(error)) => Err(error),
                None => self.id_of(k),
            };
            match id {
                Ok(id) => ids.push(id),
                Err(error) => {
                    unreadable = Some(error);
                    break;
                }
            }
        }
        if let Some(at) = first_repeat(&ids) {
            let (start, end, message) = match at.checked_sub(self.rules.len()) {
                None => {
                    let (start, end) = rule_spans[at];
                    let message = format!("rule id \"{}\" is used twice", ids[at]);
                    (start, end, message)
                }
                Some(k) => {
                    let (start, end) = self.spans[k];
                    let id = self.probe(k)?.id;
                    let message = format!("probe id \"{id}\" is used twice (by a probe or a rule)");
                    (start, end, message)
                }
            };
            return Err(InputError::at_fragment(
                &self.path,
                &self.text,
                &self.text[start..end],
                message,
            ));
        }
        if let Some(error) = unreadable {
            return Err(error);
        }
        let longest = ids[self.rules.len()..]
            .iter()
            .map(|id| characters(id))
            .max()
            .unwrap_or(0);
        Ok((longest, first))
    }

    /// Probe `k`'s id: found in its text without parsing the rest, or, where the text is not
    /// plain there, by parsing the probe (whose error this returns).
    fn id_of(&self, k: usize) -> Result<Cow<'_, str>, InputError> {
        let (start, end) = self.spans[k];
        match plain_id(&self.text[start..end]) {
            Some(id) => Ok(Cow::Borrowed(id)),
            None => Ok(Cow::Owned(self.probe(k)?.id.to_string())),
        }
    }

    /// The probes in `range` (of file order), each parsed, in parallel on the current thread pool.
    fn parse_each(&self, range: Range<usize>) -> Vec<Result<Probe, InputError>> {
        use rayon::prelude::*;
        range.into_par_iter().map(|k| self.probe(k)).collect()
    }

    fn probe(&self, k: usize) -> Result<Probe, InputError> {
        let (start, end) = self.spans[k];
        parse_probe(&self.path, &self.text, &self.text[start..end])
    }

    /// The level, as the file names it.
    pub fn level(&self) -> &str {
        &self.level
    }

    /// How many probes the file holds.
    pub fn len(&self) -> usize {
        self.spans.len()
    }

    /// True when the file holds no probes.
    pub fn is_empty(&self) -> bool {
        self.spans.is_empty()
    }

    /// The probes in `range` (of file order), parsed. Chunks parsed before they were asked for
    /// (the first, when the file was checked, and any parsed ahead) are handed over the first
    /// time a range holding them is asked for; the rest of the range is parsed. The first mistake
    /// in file order is the one returned.
    pub fn probes(&self, range: Range<usize>) -> Result<Vec<Probe>, InputError> {
        let mut held: Vec<ParsedAhead> = {
            let mut ahead = self.ahead.lock().unwrap_or_else(|e| e.into_inner());
            let (inside, outside) = std::mem::take(&mut *ahead)
                .into_iter()
                .partition(|(r, _)| range.start <= r.start && r.end <= range.end);
            *ahead = outside;
            inside
        };
        if let [(whole, _)] = held.as_slice()
            && *whole == range
        {
            return held.remove(0).1;
        }
        held.sort_by_key(|(r, _)| r.start);
        let mut probes = Vec::with_capacity(range.len());
        let mut at = range.start;
        for (r, parsed) in held {
            probes.extend(self.parsed(at..r.start)?);
            probes.extend(parsed?);
            at = r.end;
        }
        probes.extend(self.parsed(at..range.end)?);
        Ok(probes)
    }

    /// The probes in `range`, parsed now.
    fn parsed(&self, range: Range<usize>) -> Result<Vec<Probe>, InputError> {
        self.parse_each(range).into_iter().collect()
    }

    /// Parses the chunks after the first ([`CHUNK`] probes each, as a check asks for them), while
    /// `meanwhile` holds and their estimated size stays within `budget` bytes (see
    /// [`PARSED_AHEAD_BYTES`]): each is kept until it is asked for, its error too, so that a
    /// mistake is still reported when its chunk is reached. Chunks still held are counted and
    /// skipped; before each chunk, the pool's waiting jobs run first.
    fn parse_ahead(&self, budget: usize, meanwhile: impl Fn() -> bool) {
        let mut held = 0;
        for start in (CHUNK..self.len()).step_by(CHUNK) {
            let range = start..(start + CHUNK).min(self.len());
            let text = self.spans[range.end - 1].1 - self.spans[start].0;
            held += range.len() * std::mem::size_of::<Probe>() + text;
            if held > budget || !meanwhile() {
                return;
            }
            if self.holds(&range) {
                continue;
            }
            // The pool's other work comes first: parsing ahead only fills a core it leaves idle.
            while rayon::yield_now() == Some(rayon::Yield::Executed) {}
            if !meanwhile() {
                return;
            }
            let parsed = self.parsed(range.clone());
            self.ahead
                .lock()
                .unwrap_or_else(|e| e.into_inner())
                .push((range, parsed));
        }
    }

    /// True when the chunk `range` was parsed ahead and is still held.
    fn holds(&self, range: &Range<usize>) -> bool {
        let ahead = self.ahead.lock().unwrap_or_else(|e| e.into_inner());
        ahead.iter().any(|(r, _)| r == range)
    }

    /// Parses further chunks ahead, as while the level loaded (within the same budget, the
    /// chunks still held counted), while `meanwhile` holds: beside work that keeps only part of
    /// the pool busy, such as the ray index's build, whose serial steps leave a core idle.
    pub fn parse_ahead_while(&self, meanwhile: impl Fn() -> bool) {
        self.parse_ahead(PARSED_AHEAD_BYTES, meanwhile);
    }

    /// The whole set, parsed.
    pub fn to_set(&self) -> Result<ProbeSet, InputError> {
        Ok(ProbeSet {
            schema: self.schema.clone(),
            level: self.level.clone(),
            probes: self.probes(0..self.len())?,
            rules: self.rules.clone(),
        })
    }

    /// The JSON Schema the file names (`"$schema"`), if it names one.
    pub fn schema(&self) -> Option<&str> {
        self.schema.as_deref()
    }

    /// The rules.
    pub fn rules(&self) -> &[Rule] {
        &self.rules
    }

    /// The length of the longest probe id, in characters.
    pub fn longest_id(&self) -> usize {
        self.longest_id
    }

    /// The file's text as read.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// `sha256:` of the file's bytes as read: a results file's `probes_digest`.
    pub fn digest(&self) -> &str {
        &self.digest
    }
}

/// The position of the first id equal to one before it; `None` when every id differs. By sorting
/// their 64-bit hashes (with positions) and comparing ids only where hashes meet: a sort of a few
/// megabytes in place of a hash set's table of every id, whose random reads miss the caches.
fn first_repeat(ids: &[Cow<'_, str>]) -> Option<usize> {
    let hasher = foldhash::fast::FixedState::default();
    first_repeat_by(ids, |id| hasher.hash_one(id))
}

/// [`first_repeat`] with any hash: ids whose hashes are equal are compared, so a poor hash costs
/// time, never a wrong answer.
fn first_repeat_by(ids: &[Cow<'_, str>], hash: impl Fn(&str) -> u64) -> Option<usize> {
    let mut keyed: Vec<(u64, usize)> = ids
        .iter()
        .enumerate()
        .map(|(k, id)| (hash(id), k))
        .collect();
    keyed.sort_unstable();
    let mut found: Option<usize> = None;
    for run in keyed
        .chunk_by(|a, b| a.0 == b.0)
        .filter(|run| run.len() > 1)
    {
        // A run is in file order; its first repeat, if any, is the earliest it can offer.
        let repeat = (1..run.len()).map(|j| run[j].1).find(|&later| {
            run.iter()
                .take_while(|&&(_, earlier)| earlier < later)
                .any(|&(_, earlier)| ids[earlier] == ids[later])
        });
        found = match (found, repeat) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        };
    }
    found
}

/// How many characters `text` holds (its length when it is ASCII, as ids nearly always are).
fn characters(text: &str) -> usize {
    if text.is_ascii() {
        text.len()
    } else {
        text.chars().count()
    }
}

/// Reads and validates a probe-set file.
pub fn load_probe_set(path: &Path) -> Result<ProbeSet, InputError> {
    ProbeText::read(path)?.to_set()
}

/// Parses and validates probe-set text; `path` is used in error messages.
pub fn parse_probe_set(path: &Path, text: &str) -> Result<ProbeSet, InputError> {
    ProbeText::parse(path, text.to_string())?.to_set()
}

/// Checks one probe against every rule of the file format (by writing it as a file and reading it
/// back, so editing in the window and loading from disk can never disagree). The error's message
/// names the probe and what is wrong.
pub fn validate_probe(probe: &Probe) -> Result<(), InputError> {
    let set = ProbeSet {
        schema: None,
        level: "level".into(),
        probes: vec![probe.clone()],
        rules: Vec::new(),
    };
    ProbeText::parse(Path::new("probe"), super::probe_set_to_json(&set)).map(|_| ())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::probe::ProbeQuery;
    use crate::query::Filter;
    use glam::DVec3;

    /// A probe set of `probes` rays on `level`, with `before` as the members ahead of the level.
    fn set_text(before: &str, level: &str, probes: usize) -> String {
        let rays: Vec<String> = (0..probes)
            .map(|k| {
                format!(r#"{{"id": "r{k}", "kind": "ray", "from": [0, 1, 0], "to": [1, 1, 0]}}"#)
            })
            .collect();
        format!(
            r#"{{{before}"plumbline": "probes", "version": 1, "level": "{level}", "probes": [{}]}}"#,
            rays.join(",\n")
        )
    }

    #[test]
    fn the_level_is_named_by_the_files_head_or_else_by_its_top() {
        let dir = tempfile::tempdir().unwrap();
        let cases = [
            ("plain", set_text("", "quay.level.json", 3), Some("quay.level.json")),
            // A head too long to hold the level: it is read from the top.
            (
                "long head",
                set_text(&format!(r#""$schema": "{}", "#, "s".repeat(70_000)), "quay.level.json", 3),
                None,
            ),
            // The level after the probes: from the top.
            (
                "level last",
                r#"{"plumbline": "probes", "version": 1, "probes": [], "level": "quay.level.json"}"#
                    .to_string(),
                None,
            ),
        ];
        for (name, text, from_head) in cases {
            let path = dir.path().join(format!("{name}.probes.json"));
            std::fs::write(&path, &text).unwrap();
            assert_eq!(head_level(&path).as_deref(), from_head, "{name}");
            for jobs in [1, 2] {
                let (read, level) = on_threads(jobs, || {
                    ProbeText::read_alongside(&path, |named| named.to_string())
                })
                .unwrap();
                assert_eq!(
                    (read.level(), level.as_str()),
                    ("quay.level.json", "quay.level.json")
                );
            }
        }
        // Neither a folder nor a pipe is read for its head (opening a pipe would block).
        assert_eq!(head_level(dir.path()), None);
        let pipe = dir.path().join("pipe.probes.json");
        let made = std::process::Command::new("mkfifo").arg(&pipe).status();
        assert!(made.unwrap().success());
        assert_eq!(head_level(&pipe), None);
    }

    /// `work` run on a pool of `jobs` threads.
    fn on_threads<R: Send>(jobs: usize, work: impl FnOnce() -> R + Send) -> R {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(jobs).build();
        pool.unwrap().install(work)
    }

    #[test]
    fn a_level_the_head_names_but_the_file_does_not_is_not_the_one_kept() {
        // As when the file changes between reading its head and reading it whole. On two threads
        // the head is read long before the whole file (8 MB), so its level starts first; on one
        // the top starts it (the head is then never read), with the same answer.
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("edited.probes.json");
        std::fs::write(&path, set_text("", "quay.level.json", 100_000)).unwrap();
        let elsewhere = |_: &Path| Some("elsewhere.level.json".to_string());
        for jobs in [1, 2] {
            let (_, level) = on_threads(jobs, || {
                ProbeText::read_alongside_with(&path, elsewhere, |named| named.to_string())
            })
            .unwrap();
            assert_eq!(level, "quay.level.json", "{jobs} thread(s)");
        }
    }

    #[test]
    fn an_edited_probe_is_held_to_the_file_format() {
        let mut probe = Probe {
            id: "gate".into(),
            label: None,
            filter: Filter::default(),
            query: ProbeQuery::Ray {
                from: DVec3::ZERO,
                to: DVec3::X,
                hits: None,
            },
            expect: None,
            from_rule: None,
        };
        assert_eq!(validate_probe(&probe), Ok(()));
        probe.id = "gate view".into();
        assert!(
            validate_probe(&probe)
                .unwrap_err()
                .message
                .contains("letters, digits")
        );
        probe.id = "gate".into();
        probe.query = ProbeQuery::Sweep {
            shape: crate::level::ShapeSpec::Sphere { radius: 0.5 },
            rotation: None,
            path: vec![DVec3::ZERO],
            hits: None,
            duration: None,
            clearance: None,
            turns: None,
        };
        assert!(validate_probe(&probe).is_err(), "a path needs two points");
    }

    /// The ranges (start, end) of the chunks `set` holds parsed, in order.
    fn held(set: &ProbeText) -> Vec<(usize, usize)> {
        let ahead = set.ahead.lock().unwrap();
        let mut ranges: Vec<_> = ahead.iter().map(|(r, _)| (r.start, r.end)).collect();
        ranges.sort();
        ranges
    }

    /// The first probes, parsed when the file is checked, are handed over once and are the
    /// probes a later parse gives; ranges that are not exactly them are parsed.
    #[test]
    fn the_first_probes_are_parsed_once_and_handed_over_whole() {
        let probes: Vec<String> = (0..5)
            .map(|k| {
                format!(
                    r#"{{"id": "p{k}", "kind": "ray", "from": [{k}, 0, 0], "to": [{k}, 1, 0]}}"#
                )
            })
            .collect();
        let text = format!(
            r#"{{"plumbline": "probes", "version": 1, "level": "l.level.json", "probes": [{}]}}"#,
            probes.join(", ")
        );
        let set = ProbeText::parse(Path::new("set"), text).unwrap();
        assert_eq!(held(&set), [(0, 5)]);
        let part = set.probes(1..3).unwrap();
        assert_eq!(held(&set), [(0, 5)], "a part is parsed, not taken");
        let handed = set.probes(0..5).unwrap();
        assert!(held(&set).is_empty());
        let parsed = set.probes(0..5).unwrap();
        assert_eq!(handed, parsed);
        assert_eq!(&parsed[1..3], &part[..]);
        assert_eq!(&*parsed[4].id, "p4");
    }

    /// While the level loads, the chunks after the first are parsed and held until asked for (on
    /// the pool's other thread, or on one thread by a reading thread of their own): the same
    /// probes a parse gives, and a chunk's mistake is only reported when that chunk is asked for.
    /// Without a level to load, none are parsed ahead.
    #[test]
    fn chunks_are_parsed_ahead_while_the_level_loads_and_keep_their_mistakes() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("large.probes.json");
        let count = 2 * CHUNK + 100;
        let bad = 2 * CHUNK + 7;
        // The bad probe's id is plain, so the file checks; its missing `to` is found when parsed.
        let text = set_text("", "quay.level.json", count).replacen(
            &format!(r#"{{"id": "r{bad}", "kind": "ray", "from": [0, 1, 0], "to": [1, 1, 0]}}"#),
            &format!(r#"{{"id": "r{bad}", "kind": "ray", "from": [0, 1, 0]}}"#),
            1,
        );
        std::fs::write(&path, &text).unwrap();
        // The level's stand-in takes long enough for every chunk to be parsed meanwhile. Whether
        // it has started by the time the probes are checked depends on both threads being
        // scheduled (on a busy machine the other may not have run yet, and then nothing is parsed
        // ahead, rightly): a few tries.
        let slow_level = |_: &str| std::thread::sleep(std::time::Duration::from_millis(500));
        let parsed_ahead = |jobs| {
            (0..20)
                .map(|_| on_threads(jobs, || ProbeText::read_alongside(&path, slow_level)).unwrap())
                .map(|(set, ())| set)
                .find(|set| held(set) == [(0, CHUNK), (CHUNK, 2 * CHUNK), (2 * CHUNK, count)])
                .unwrap_or_else(|| panic!("{jobs} thread(s): every chunk parsed ahead in 20 tries"))
        };
        let (ahead, ahead_on_one) = (parsed_ahead(2), parsed_ahead(1));
        let plain = ProbeText::parse(&path, text).unwrap();
        assert_eq!(held(&plain), [(0, CHUNK)]);
        // A range holding chunks parsed ahead takes them and parses the rest: the same probes.
        let start = ahead.probes(0..CHUNK + 1).unwrap();
        assert_eq!(held(&ahead), [(CHUNK, 2 * CHUNK), (2 * CHUNK, count)]);
        assert_eq!(start, plain.probes(0..CHUNK + 1).unwrap());
        assert!(held(&plain).is_empty());
        assert_eq!(ahead_on_one.probes(0..CHUNK + 1).unwrap(), start);
        for set in [&ahead, &ahead_on_one, &plain] {
            assert_eq!(
                set.probes(CHUNK..2 * CHUNK + 7).unwrap(),
                set.probes(CHUNK..2 * CHUNK + 7).unwrap(),
                "held, then parsed again"
            );
            // The mistake, held with its chunk, is found when a range holding it is asked for.
            let mistake = set.probes(CHUNK..count).unwrap_err();
            assert_eq!(mistake, set.probe(bad).unwrap_err());
            assert!(held(set).is_empty());
        }
    }

    /// Parsing ahead stops before the chunks' estimated size passes its budget, and when told to.
    #[test]
    fn parsing_ahead_keeps_to_its_budget() {
        let count = 3 * CHUNK + 10;
        let text = set_text("", "quay.level.json", count);
        let set = ProbeText::parse(Path::new("set"), text).unwrap();
        let chunk = |k: usize| {
            let (start, end) = (k * CHUNK, ((k + 1) * CHUNK).min(count));
            (end - start) * std::mem::size_of::<Probe>() + set.spans[end - 1].1 - set.spans[start].0
        };
        set.parse_ahead(chunk(1) + chunk(2) - 1, || true);
        assert_eq!(held(&set), [(0, CHUNK), (CHUNK, 2 * CHUNK)]);
        set.probes(CHUNK..2 * CHUNK).unwrap();
        set.parse_ahead(usize::MAX, || false);
        assert_eq!(held(&set), [(0, CHUNK)], "told to stop at once");
        set.parse_ahead(chunk(1) + chunk(2) - 1, || true);
        assert_eq!(held(&set), [(0, CHUNK), (CHUNK, 2 * CHUNK)]);
        // A later call counts the chunks still held against its budget and parses only the rest.
        set.parse_ahead(chunk(1) + chunk(2) + chunk(3) - 1, || true);
        assert_eq!(
            held(&set),
            [(0, CHUNK), (CHUNK, 2 * CHUNK), (2 * CHUNK, 3 * CHUNK)]
        );
        set.parse_ahead_while(|| true);
        assert_eq!(
            held(&set),
            [
                (0, CHUNK),
                (CHUNK, 2 * CHUNK),
                (2 * CHUNK, 3 * CHUNK),
                (3 * CHUNK, count)
            ]
        );
    }

    /// Parsing ahead gives way to the pool's other work: on a one-thread pool, work waiting
    /// beside it runs before its first chunk (here, work that ends it).
    #[test]
    fn parsing_ahead_lets_waiting_work_run_first() {
        let set =
            ProbeText::parse(Path::new("set"), set_text("", "l.level.json", 3 * CHUNK)).unwrap();
        let other_done = std::sync::atomic::AtomicBool::new(false);
        on_threads(1, || {
            rayon::join(
                || set.parse_ahead_while(|| !other_done.load(Ordering::Acquire)),
                || other_done.store(true, Ordering::Release),
            )
        });
        assert!(other_done.load(Ordering::Acquire));
        assert_eq!(
            held(&set),
            [(0, CHUNK)],
            "nothing parsed once the other work ran"
        );
    }

    proptest::proptest! {
        /// The first repeated id is the one a set of the ids seen so far finds first (common
        /// practice), whatever the hash: with the real one, and with one that gives most ids the
        /// same hash (their length), so that runs of equal hashes hold ids that differ.
        #[test]
        fn the_first_repeat_is_found_whatever_the_hash(ids in proptest::collection::vec("[ab]{0,4}", 0..40)) {
            let ids: Vec<Cow<'_, str>> = ids.into_iter().map(Cow::Owned).collect();
            let mut seen = std::collections::HashSet::new();
            let expected = ids.iter().position(|id| !seen.insert(id.clone()));
            proptest::prop_assert_eq!(first_repeat(&ids), expected);
            proptest::prop_assert_eq!(first_repeat_by(&ids, |id| id.len() as u64), expected);
        }
    }
}
