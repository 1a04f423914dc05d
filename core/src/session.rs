//! One way in: open a probe set (or a level on its own), load and validate the level it names (or
//! another one), build the query world, and answer the probes. `check`, `info`, the window's open and
//! its reload all come through [`open`]; nothing else runs this pipeline.
//!
//! ```no_run
//! use std::path::Path;
//! use plumbline_core::session::{OpenOptions, open};
//!
//! let opened = open(Path::new("scenes/saltfen-quay.probes.json"), &OpenOptions::default())?;
//! let results = opened.answer(None, None)?;
//! println!("{} probes, {} warnings", results.len(), opened.level.diagnostics.len());
//! # Ok::<(), plumbline_core::error::Error>(())
//! ```

use std::path::{Path, PathBuf};

use std::borrow::Cow;
use std::ops::Range;
use std::sync::atomic::{AtomicBool, Ordering};

use crate::beside::beside;
use crate::check::{
    ProbeResult, Runner, Shard, Summary, Watcher, assign, entries_text, expand_rules, expected_cost,
};
use crate::error::{Diagnostic, Error, InputError, Warning};
use crate::input::{PathPolicy, resolve_named};
use crate::level::{Level, LevelDigest, LintSettings, LoadedLevel, load_level};
use crate::probe::{Probe, ProbeSet, ProbeText, Rule};
use crate::query::World;

/// How to open.
#[derive(Debug, Clone, Default)]
pub struct OpenOptions {
    /// Use this level instead of the one the probe set names.
    pub level: Option<PathBuf>,
    /// Answer these probes (and rules) instead of the file's (the window's edited set, on a
    /// reloaded level).
    pub probes: Option<Edited>,
    /// Keep the level model beside the query world (the window draws it); without it the world takes
    /// the level over, so peak memory holds one copy of the geometry.
    pub keep_level: bool,
    /// Where paths named inside the files may lead (README, "Paths named inside files").
    pub paths: PathPolicy,
}

/// A probe set being edited: its written probes, and its rules when they were edited too.
#[derive(Debug, Clone, Default)]
pub struct Edited {
    /// The written probes (not those rules give).
    pub probes: Vec<Probe>,
    /// The rules, when they differ from the file's.
    pub rules: Option<Vec<Rule>>,
}

/// A probe set (or a level alone) opened: the probes, and the level they are about, ready to answer.
pub struct Opened {
    /// The probe-set file, when a probe set was opened.
    pub probes_path: Option<PathBuf>,
    /// `sha256:` of the probe-set file's bytes as read; `None` for a level opened alone.
    pub probes_digest: Option<String>,
    /// The probes (none for a level opened alone).
    pub probes: Probes,
    /// The level.
    pub level: OpenLevel,
}

/// The probes of an opened probe set: the checked file (parsed a chunk at a time as they are
/// answered) or probes given in memory (the window's edited set), then the probes its rules give on
/// the level.
pub struct Probes {
    source: Source,
    /// The probes the rules give, in rule order.
    expanded: Vec<Probe>,
}

enum Source {
    /// A checked probe-set file.
    File(ProbeText),
    /// Probes given in memory, about the level named.
    Given(ProbeSet),
}

impl Probes {
    fn explicit(&self) -> usize {
        match &self.source {
            Source::File(text) => text.len(),
            Source::Given(set) => set.probes.len(),
        }
    }

    /// How many probes there are, those the rules give included.
    pub fn len(&self) -> usize {
        self.explicit() + self.expanded.len()
    }

    /// True when there are none.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The length of the longest probe id, in characters (for laying out tables).
    pub fn longest_id(&self) -> usize {
        let own = match &self.source {
            Source::File(text) => text.longest_id(),
            Source::Given(set) => set
                .probes
                .iter()
                .map(|p| p.id.chars().count())
                .max()
                .unwrap_or(0),
        };
        self.expanded
            .iter()
            .map(|p| p.id.chars().count())
            .fold(own, usize::max)
    }

    /// The level, as the probe set names it.
    pub fn level(&self) -> &str {
        match &self.source {
            Source::File(text) => text.level(),
            Source::Given(set) => &set.level,
        }
    }

    /// The rules.
    pub fn rules(&self) -> &[Rule] {
        match &self.source {
            Source::File(text) => text.rules(),
            Source::Given(set) => &set.rules,
        }
    }

    /// The probes in `range` (of the written probes, then the rules'), parsed.
    pub fn chunk(&self, range: Range<usize>) -> Result<Cow<'_, [Probe]>, Error> {
        let explicit = self.explicit();
        if range.start >= explicit {
            return Ok(Cow::Borrowed(
                &self.expanded[range.start - explicit..range.end - explicit],
            ));
        }
        let own_end = range.end.min(explicit);
        let mut probes: Vec<Probe> = match &self.source {
            Source::File(text) => text.probes(range.start..own_end)?,
            Source::Given(set) => set.probes[range.start..own_end].to_vec(),
        };
        if range.end > explicit {
            probes.extend_from_slice(&self.expanded[..range.end - explicit]);
        }
        Ok(Cow::Owned(probes))
    }

    /// Parses chunks of a probe-set file ahead while `meanwhile` holds (see
    /// [`ProbeText::parse_ahead_while`]); probes given in memory need none.
    fn parse_ahead_while(&self, meanwhile: impl Fn() -> bool) {
        if let Source::File(text) = &self.source {
            text.parse_ahead_while(meanwhile);
        }
    }

    /// The set as written — its probes and its rules — parsed.
    pub fn to_set(&self) -> Result<ProbeSet, Error> {
        Ok(match &self.source {
            Source::File(text) => text.to_set()?,
            Source::Given(set) => set.clone(),
        })
    }

    /// Every probe, the rules' included, parsed.
    pub fn all(&self) -> Result<Vec<Probe>, Error> {
        Ok(self.chunk(0..self.len())?.into_owned())
    }

    /// Every probe, the rules' included, parsed a chunk at a time, in order.
    fn chunks(&self) -> impl Iterator<Item = Result<Cow<'_, [Probe]>, Error>> {
        (0..self.len())
            .step_by(CHUNK)
            .map(|start| self.chunk(start..(start + CHUNK).min(self.len())))
    }

    /// Checks every probe whole (a large file's are otherwise checked as they are taken), a
    /// chunk at a time, keeping none.
    pub fn check_all(&self) -> Result<(), Error> {
        self.chunks().try_for_each(|chunk| chunk.map(drop))
    }
}

/// Probes are parsed and answered this many at a time: enough to keep every core busy, few enough
/// that a run of any size holds little (README, "Real files and hostile input"). The probe-set
/// file's own, so that the chunks it parsed ahead are the ones asked for.
const CHUNK: usize = crate::probe::CHUNK;

/// How many answered chunks may wait to be handed out while the next is answered. Two were 2%
/// faster on two threads (200k rays) but raised the peak of a million probes from 335 to 405 MB.
/// Ours.
const AHEAD: usize = 1;

/// Results are laid out as results-file text this many at a time, in parallel: blocks of 256 were
/// slower on two threads (0.710 against 0.692 s, 200k rays). Ours.
const LAID_OUT: usize = 1024;

/// A chunk of probes and their answers, in probe order, with the time each took, and the answers
/// laid out as results-file text when that was asked for (blocks of up to [`LAID_OUT`], each with
/// how many results it holds).
struct Answered<'a> {
    probes: Cow<'a, [Probe]>,
    results: Vec<(ProbeResult, std::time::Duration)>,
    text: Vec<(String, usize)>,
}

/// Block `k` (of [`LAID_OUT`] results) of a chunk's results laid out as results-file text, the
/// chunk's first result being the `done`th handed out.
fn laid_out_block(done: usize, k: usize, block: &[(ProbeResult, std::time::Duration)]) -> String {
    entries_text(block.iter().map(|(r, _)| r), done + k * LAID_OUT)
}

/// Where [`Opened::answer_each`] hands the answers: each probe with its result, and, when asked
/// for, the results laid out as a results file's entries.
pub struct HandOut<'h> {
    /// Given each probe, its result and the time its answer took, in probe order.
    pub each: &'h mut EachAnswer<'h>,
    /// When set, given each block of results laid out by [`entries_text`] (numbered from the
    /// first result handed out) and how many results it holds, in order, before those probes are
    /// given to `each`.
    pub laid_out: Option<&'h mut LaidOut<'h>>,
}

/// What takes each probe, its result and the time its answer took.
pub type EachAnswer<'h> =
    dyn FnMut(&Probe, ProbeResult, std::time::Duration) -> Result<(), Error> + 'h;

/// What takes a block of results laid out as results-file text, and how many results it holds.
pub type LaidOut<'h> = dyn FnMut(&str, usize) -> Result<(), Error> + 'h;

impl<'h> HandOut<'h> {
    /// Each probe given to `each`, no results laid out.
    pub fn each(each: &'h mut EachAnswer<'h>) -> HandOut<'h> {
        HandOut {
            each,
            laid_out: None,
        }
    }
}

/// The level of an opened probe set: where it came from, what it holds, and its query world.
pub struct OpenLevel {
    /// The level file.
    pub path: PathBuf,
    /// The level model, when [`OpenOptions::keep_level`] asked for it.
    pub model: Option<Level>,
    /// The digest of the geometry as loaded (SPEC §3 `level_digest`).
    pub digest: String,
    /// Mesh triangles in the level.
    pub triangles: usize,
    /// Objects in the level.
    pub objects: usize,
    /// What was skipped or repaired while loading.
    pub diagnostics: Vec<Diagnostic>,
    /// Every file read to load the level (the level file first).
    pub files: Vec<PathBuf>,
    /// The level file's `lint` section.
    pub lint: LintSettings,
    /// The query world.
    pub world: World,
}

/// True when `path` names a probe set (`*.probes.json`) rather than a level.
pub fn is_probe_set(path: &Path) -> bool {
    path.file_name()
        .and_then(|n| n.to_str())
        .is_some_and(|n| n.ends_with(".probes.json"))
}

/// Opens a probe set (`*.probes.json`) or a level (`.level.json`, `.gltf`, `.glb`, `.obj`): reads and
/// validates the probes, loads the level (the set's own, or [`OpenOptions::level`]) and builds its
/// query world. Nothing is answered yet: see [`Opened::answer`].
pub fn open(path: &Path, options: &OpenOptions) -> Result<Opened, Error> {
    let (probes_path, probes_digest, mut probes, level) = if is_probe_set(path) {
        // The level loads while the probes are checked; the probes' errors come first.
        let (text, level) = ProbeText::read_alongside(path, |named| {
            let level_path = match &options.level {
                Some(given) => given.clone(),
                None => resolve_named(path, named, options.paths)
                    .map_err(|m| InputError::at(path, "field \"level\"", m))?,
            };
            open_level(&level_path, options)
        })?;
        (
            Some(path.to_path_buf()),
            Some(text.digest().to_string()),
            Source::File(text),
            level?,
        )
    } else {
        let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
        let set = ProbeSet {
            schema: None,
            level: name.to_string(),
            probes: Vec::new(),
            rules: Vec::new(),
        };
        let level_path = options.level.clone().unwrap_or_else(|| path.to_path_buf());
        (
            None,
            None,
            Source::Given(set),
            open_level(&level_path, options)?,
        )
    };
    if let Some(edited) = &options.probes {
        let (schema, level, rules) = match &probes {
            Source::File(text) => (
                text.schema().map(str::to_string),
                text.level().to_string(),
                text.rules().to_vec(),
            ),
            Source::Given(set) => (set.schema.clone(), set.level.clone(), set.rules.clone()),
        };
        probes = Source::Given(ProbeSet {
            schema,
            level,
            probes: edited.probes.clone(),
            rules: edited.rules.clone().unwrap_or(rules),
        });
    }
    let rules = match &probes {
        Source::File(text) => text.rules(),
        Source::Given(set) => &set.rules,
    };
    let expanded = expand_rules(rules, &level.world);
    Ok(Opened {
        probes_path,
        probes_digest,
        probes: Probes {
            source: probes,
            expanded,
        },
        level,
    })
}

/// Loads a level and builds its world.
fn open_level(path: &Path, options: &OpenOptions) -> Result<OpenLevel, Error> {
    let LoadedLevel {
        level,
        diagnostics,
        files,
        lint,
    } = load_level(path, options.paths)?;
    let (triangles, objects) = (level.triangle_count(), level.objects.len());
    let build_error = |cause| Error::Build {
        level: path.to_path_buf(),
        cause,
    };
    let model = options.keep_level.then(|| level.clone());
    // The digest is taken as the world is built, each object while its mesh is welded.
    let mut digest = LevelDigest::new(&level);
    let world =
        World::from_level_seen(level, |object| digest.object(object)).map_err(build_error)?;
    let digest = digest.finish();
    let mut diagnostics = diagnostics;
    diagnostics.extend((0..world.len()).filter_map(|id| {
        let edges = world.winding_faults(id);
        (edges > 0).then(|| {
            Diagnostic::new(
                path,
                Warning::InconsistentWinding {
                    object: world.name(id).to_string(),
                    edges,
                },
            )
        })
    }));
    Ok(OpenLevel {
        path: path.to_path_buf(),
        model,
        digest,
        triangles,
        objects,
        diagnostics,
        files,
        lint,
        world,
    })
}

impl Opened {
    /// Answers every probe on `jobs` threads (all cores when `None`), in probe order; `progress` is
    /// told how many are done. The answers do not depend on the thread count.
    pub fn answer(
        &self,
        jobs: Option<usize>,
        progress: Watcher,
    ) -> Result<Vec<ProbeResult>, Error> {
        let mut results = Vec::with_capacity(self.probes.len());
        let each = &mut |_: &Probe, result, _| {
            results.push(result);
            Ok(())
        };
        self.answer_each(&Runner::new(jobs)?, None, progress, HandOut::each(each))?;
        Ok(results)
    }

    /// Answers every probe as [`Opened::answer`] does, on `runner`'s threads (the check's one pool,
    /// which also parsed the probe set), handing the answers to `hand_out` in probe order as soon
    /// as their chunk is done, so that nothing of the run is held beyond a few chunks. The pool
    /// answers up to [`AHEAD`] chunks ahead while this thread hands out the answered ones; the
    /// pool also lays them out, unless it [answers alone](Runner::answers_alone) (one thread):
    /// then this thread does. With `only` (ascending positions in the whole set, as
    /// [`Opened::shard_positions`] gives), answers those probes alone. Returns the counts by
    /// verdict.
    pub fn answer_each(
        &self,
        runner: &Runner,
        only: Option<&[usize]>,
        progress: Watcher,
        hand_out: HandOut,
    ) -> Result<Summary, Error> {
        let HandOut { each, mut laid_out } = hand_out;
        let lay_out_here = runner.answers_alone();
        let lay_out = laid_out.is_some() && !lay_out_here;
        let mut summary = Summary::default();
        let mut hand_out = |answered: Answered| -> Result<(), Error> {
            if let Some(write) = laid_out.as_mut() {
                for (text, count) in &answered.text {
                    write(text, *count)?;
                }
                if lay_out_here {
                    for (k, block) in answered.results.chunks(LAID_OUT).enumerate() {
                        write(&laid_out_block(summary.probes, k, block), block.len())?;
                    }
                }
            }
            runner.free_later(answered.text);
            for (probe, (result, took)) in answered.probes.iter().zip(answered.results) {
                summary.count(result.verdict);
                each(probe, result, took)?;
            }
            if let Cow::Owned(probes) = answered.probes {
                runner.free_later(probes);
            }
            Ok(())
        };
        std::thread::scope(|scope| {
            let (sender, receiver) = std::sync::mpsc::sync_channel(AHEAD);
            // The queue closes when this thread stops taking (a failed hand-out): the
            // answering thread then stops after its chunk.
            let answering = scope.spawn(move || {
                self.answer_chunks(runner, only, progress, lay_out, &mut |answered| {
                    sender.send(answered).is_ok()
                })
            });
            let handed = receiver.into_iter().try_for_each(&mut hand_out);
            let answered = answering
                .join()
                .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
            handed.and(answered)
        })?;
        Ok(summary)
    }

    /// Answers the chunks in turn, each told how many probes were done before it (for progress),
    /// their results laid out as results-file text when `lay_out`, giving each to `deliver`
    /// until it returns false.
    fn answer_chunks<'s>(
        &'s self,
        runner: &Runner,
        only: Option<&[usize]>,
        progress: Watcher,
        lay_out: bool,
        deliver: &mut dyn FnMut(Answered<'s>) -> bool,
    ) -> Result<(), Error> {
        let total = self.probes.len();
        let mut done = 0;
        for start in (0..total).step_by(CHUNK) {
            let range = start..(start + CHUNK).min(total);
            let Some(probes) = self.chunk_of(runner, range, only)? else {
                continue;
            };
            if done == 0 {
                self.prepare_rays_parsing_ahead(runner, &probes);
            }
            let results = runner.answer(&self.level.world, &probes, done, progress);
            let text = if lay_out {
                runner.install(|| {
                    use rayon::prelude::*;
                    results
                        .par_chunks(LAID_OUT)
                        .enumerate()
                        .map(|(k, block)| (laid_out_block(done, k, block), block.len()))
                        .collect()
                })
            } else {
                Vec::new()
            };
            done += probes.len();
            if !deliver(Answered {
                probes,
                results,
                text,
            }) {
                break;
            }
        }
        Ok(())
    }

    /// Builds the ray index before the first chunk of rays is answered, with further chunks parsed
    /// ahead [`beside`] it: on more than one thread in the cores its serial steps leave idle, on
    /// one thread on a reading thread of its own.
    fn prepare_rays_parsing_ahead(&self, runner: &Runner, first: &[Probe]) {
        if !first.iter().any(|p| p.query.kind().casts_rays()) {
            return;
        }
        let built = AtomicBool::new(false);
        runner.install(|| {
            beside(
                || {
                    self.probes
                        .parse_ahead_while(|| !built.load(Ordering::Acquire))
                },
                || {
                    self.level.world.prepare_rays();
                    built.store(true, Ordering::Release);
                },
            )
        });
    }

    /// The probes of `range` (of the whole set) parsed on `runner`'s threads; with `only`, those
    /// of them it lists (`None` when it lists none).
    fn chunk_of(
        &self,
        runner: &Runner,
        range: Range<usize>,
        only: Option<&[usize]>,
    ) -> Result<Option<Cow<'_, [Probe]>>, Error> {
        let parse = || runner.install(|| self.probes.chunk(range.clone()));
        let Some(positions) = only else {
            return parse().map(Some);
        };
        let wanted = &positions[positions.partition_point(|&p| p < range.start)
            ..positions.partition_point(|&p| p < range.end)];
        if wanted.is_empty() {
            return Ok(None);
        }
        let all = parse()?;
        Ok(Some(Cow::Owned(
            wanted
                .iter()
                .map(|&p| all[p - range.start].clone())
                .collect(),
        )))
    }

    /// The positions (in the whole set, ascending) of the probes shard `shard` answers: every probe's
    /// [`expected_cost`] on this level, split by [`assign`]. The same for every shard of a check, so
    /// the shards answer each probe exactly once between them.
    pub fn shard_positions(&self, shard: Shard) -> Result<Vec<usize>, Error> {
        let total = self.probes.len();
        let mut costs = Vec::with_capacity(total);
        for chunk in self.probes.chunks() {
            costs.extend(chunk?.iter().map(|p| expected_cost(p, &self.level.world)));
        }
        let shard_of = assign(&costs, shard.count);
        Ok((0..total)
            .filter(|&p| shard_of[p] as usize + 1 == shard.index)
            .collect())
    }

    /// Every file this run reads: the probe set, then the level's files.
    pub fn inputs(&self) -> Vec<PathBuf> {
        self.probes_path
            .iter()
            .cloned()
            .chain(self.level.files.iter().cloned())
            .collect()
    }
}
