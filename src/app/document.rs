//! What the workbench has open: a level, its query world, a probe set and every probe's answer, and
//! whether the level on disk still matches what was answered.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::SystemTime;

use plumbline_core::atomic::{write_atomic, write_with_backup};
use plumbline_core::check::{
    Aspect, DEFAULT_TOLERANCE, Hits, ProbeResult, Summary, Verdict, answer_probe, changes,
    expand_rules,
};
use plumbline_core::error::{Diagnostic, Error};
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{Geometry, Level, LintSettings};
use plumbline_core::probe::{
    Probe, ProbeId, ProbeKind, ProbeSet, Rule, parse_probe_set, probe_set_to_json,
};
use plumbline_core::query::World;
use plumbline_core::session::{Edited, OpenOptions, Opened, open};

/// An open level with its probes answered.
pub struct Document {
    /// The level file.
    pub level_path: PathBuf,
    /// The probe set file, when one is open.
    pub probes_path: Option<PathBuf>,
    /// The level as loaded (kept for drawing and for naming triangles).
    pub level: Level,
    /// The query world built from it (shared with background work such as clearance plots).
    pub world: Arc<World>,
    /// The probes.
    pub probes: ProbeSet,
    /// One answer per probe, in probe order.
    pub results: Vec<ProbeResult>,
    /// The level's digest as loaded.
    pub level_digest: String,
    /// Load warnings.
    pub diagnostics: Vec<Diagnostic>,
    /// The level file's `lint` section.
    pub lint: LintSettings,
    /// Where paths named inside the files may lead (kept for reloads).
    pub paths: PathPolicy,
    stamps: Vec<(PathBuf, Option<SystemTime>)>,
    /// Edits made since opening; compared with `saved_edits` to tell unsaved changes.
    edits: u64,
    saved_edits: u64,
    /// Probes (by id) whose answers are owed: edited kinds that answer in the background.
    owed: Vec<ProbeId>,
    /// Probes (by id) whose background answer the user cancelled.
    cancelled: Vec<ProbeId>,
}

/// True for the kinds whose answers take long enough (a reach map: seconds; a settle: a physics run)
/// that an edit in the window answers them in the background, with progress and a way to cancel.
pub fn answers_in_background(kind: ProbeKind) -> bool {
    matches!(kind, ProbeKind::Reach | ProbeKind::Settle)
}

/// What a probe shows while its answer is owed.
fn owed_result(probe: &Probe) -> ProbeResult {
    let kind = probe.query.kind();
    ProbeResult {
        id: probe.id.clone(),
        kind,
        verdict: Verdict::Unchecked,
        reason: "Being answered in the background…".into(),
        hits: Hits::empty(kind),
        clearance: None,
        volumes: Vec::new(),
    }
}

impl Document {
    /// Opens a probe set (`*.probes.json`, with the level it names) or a level on its own; paths
    /// named inside the files are resolved under `paths`.
    pub fn open(path: &Path, paths: PathPolicy) -> Result<Document, Error> {
        let Answered {
            opened,
            probes,
            results,
        } = Answered::open(path, None, paths)?;
        let stamps = stamps(&opened.level.files);
        let level = opened.level;
        Ok(Document {
            level_path: level.path,
            probes_path: opened.probes_path,
            level: level.model.expect(KEPT),
            world: Arc::new(level.world),
            probes,
            results,
            level_digest: level.digest,
            diagnostics: level.diagnostics,
            lint: level.lint,
            paths,
            stamps,
            edits: 0,
            saved_edits: 0,
            owed: Vec::new(),
            cancelled: Vec::new(),
        })
    }

    /// Replaces the probes, answering the ones that changed (a probe equal to one with its id before
    /// keeps that answer), and counts an edit. The written probes are listed first, in the order
    /// given, then the rules' probes.
    pub fn set_probes(&mut self, probes: Vec<Probe>) {
        let (mut probes, made): (Vec<Probe>, Vec<Probe>) =
            probes.into_iter().partition(|p| p.from_rule.is_none());
        probes.extend(made);
        let old: std::collections::HashMap<&str, (&Probe, &ProbeResult)> = self
            .probes
            .probes
            .iter()
            .zip(&self.results)
            .map(|(p, r)| (&*p.id, (p, r)))
            .collect();
        let kept: Vec<Option<ProbeResult>> = probes
            .iter()
            .map(|probe| match old.get(&*probe.id) {
                Some((was, result)) if *was == probe => Some((*result).clone()),
                _ => None,
            })
            .collect();
        drop(old);
        self.results = probes
            .iter()
            .zip(kept)
            .map(|(probe, kept)| kept.unwrap_or_else(|| self.answer_or_owe(probe)))
            .collect();
        self.probes.probes = probes;
        self.edits += 1;
    }

    /// The answer of `probe`, or (for a kind answered in the background) a note that it is owed.
    fn answer_or_owe(&mut self, probe: &Probe) -> ProbeResult {
        self.cancelled.retain(|id| *id != probe.id);
        if !answers_in_background(probe.query.kind()) {
            return answer_probe(&self.world, probe);
        }
        if !self.owed.contains(&probe.id) {
            self.owed.push(probe.id.clone());
        }
        owed_result(probe)
    }

    /// The first probe whose answer is owed, with the world to answer it on.
    pub fn next_owed(&mut self) -> Option<(Probe, Arc<World>)> {
        let probes = &self.probes.probes;
        self.owed.retain(|id| probes.iter().any(|p| p.id == *id));
        let id = self.owed.first()?;
        let probe = probes.iter().find(|p| p.id == *id)?;
        Some((probe.clone(), self.world.clone()))
    }

    /// True while the answer of exactly this probe, on this world, is owed.
    pub fn owes(&self, probe: &Probe, world: &Arc<World>) -> bool {
        Arc::ptr_eq(world, &self.world)
            && self.owed.contains(&probe.id)
            && self.probes.probes.iter().any(|p| p == probe)
    }

    /// Takes in an answer made in the background for `probe` on `world`, when it is still owed
    /// (`cancelled` when the user stopped it: the probe then shows why, and can be answered again).
    /// Returns whether it was taken.
    pub fn take_answer(
        &mut self,
        probe: &Probe,
        world: &Arc<World>,
        result: ProbeResult,
        cancelled: bool,
    ) -> bool {
        if !self.owes(probe, world) {
            return false;
        }
        let Some(index) = self.probes.probes.iter().position(|p| p == probe) else {
            return false;
        };
        self.owed.retain(|id| *id != probe.id);
        if cancelled {
            self.cancelled.push(probe.id.clone());
        }
        self.results[index] = result;
        true
    }

    /// True when the background answer of probe `index` was cancelled.
    pub fn was_cancelled(&self, index: usize) -> bool {
        self.probes
            .probes
            .get(index)
            .is_some_and(|p| self.cancelled.contains(&p.id))
    }

    /// Owes the answer of probe `index` again (after a cancel).
    pub fn answer_again(&mut self, index: usize) {
        if let Some(probe) = self.probes.probes.get(index).cloned() {
            self.results[index] = self.answer_or_owe(&probe);
        }
    }

    /// True while some probe's answer is owed.
    pub fn is_owing(&self) -> bool {
        !self.owed.is_empty()
    }

    /// The probe set as the user wrote it: the written probes and the rules (what undo keeps).
    pub fn written(&self) -> Written {
        Written {
            probes: written_probes(&self.probes.probes),
            rules: self.probes.rules.clone(),
        }
    }

    /// Puts back a written state: its probes, and its rules' probes given anew on the level;
    /// answers what changed and counts an edit.
    pub fn restore(&mut self, written: Written) {
        let mut probes = written.probes;
        probes.extend(expand_rules(&written.rules, &self.world));
        self.probes.rules = written.rules;
        self.set_probes(probes);
    }

    /// Replaces the rules (the written probes stay), answers what changed, and counts an edit.
    pub fn set_rules(&mut self, rules: Vec<Rule>) {
        let probes = written_probes(&self.probes.probes);
        self.restore(Written { probes, rules });
    }

    /// Replaces probe `index` and answers it, and counts an edit.
    pub fn replace_probe(&mut self, index: usize, probe: Probe) {
        self.results[index] = self.answer_or_owe(&probe);
        self.probes.probes[index] = probe;
        self.edits += 1;
    }

    /// How many edits were made since opening.
    pub fn edit_count(&self) -> u64 {
        self.edits
    }

    /// Treats the current probes as if saved (the user chose to discard the changes).
    pub fn discard_changes(&mut self) {
        self.saved_edits = self.edits;
    }

    /// True when there are edits that are not saved.
    pub fn is_dirty(&self) -> bool {
        self.edits != self.saved_edits
    }

    /// The probe set as it would be saved to `path`: the level named relative to that file's folder.
    fn probe_set_for(&self, path: &Path) -> ProbeSet {
        ProbeSet {
            schema: self.probes.schema.clone(),
            level: level_reference(path, &self.level_path),
            probes: written_probes(&self.probes.probes),
            rules: self.probes.rules.clone(),
        }
    }

    /// Saves the probe set to `path` atomically, keeping the file it replaces as `.bak`, and forgets
    /// the recovery file. The document then belongs to `path`.
    pub fn save(&mut self, path: &Path) -> Result<(), String> {
        let set = self.probe_set_for(path);
        let text = probe_set_to_json(&set);
        write_with_backup(path, text.as_bytes())
            .map_err(|e| format!("{}: cannot save: {e}", path.display()))?;
        // The recovery file of the name the document had until now.
        self.forget_recovery();
        self.probes.level = set.level;
        self.probes_path = Some(path.to_path_buf());
        self.saved_edits = self.edits;
        Ok(())
    }

    /// Where unsaved changes are kept against a crash: beside the probe set (or the level, for a set
    /// not saved yet), named `<file>.recovery`.
    pub fn recovery_path(&self) -> PathBuf {
        let base = match &self.probes_path {
            Some(p) => p.clone(),
            None => self.level_path.with_extension("untitled.probes.json"),
        };
        let mut name = base.file_name().unwrap_or_default().to_os_string();
        name.push(".recovery");
        base.with_file_name(name)
    }

    /// Writes the current probes to the recovery file (atomically).
    pub fn write_recovery(&self) -> Result<(), String> {
        let path = self.recovery_path();
        let text = probe_set_to_json(&self.probe_set_for(&path));
        write_atomic(&path, text.as_bytes()).map_err(|e| format!("{}: {e}", path.display()))
    }

    /// The probes and rules kept in a recovery file from an earlier session, when there is one
    /// that differs from what is open.
    pub fn recovered(&self) -> Option<Written> {
        let path = self.recovery_path();
        let text = std::fs::read_to_string(&path).ok()?;
        let set = parse_probe_set(&path, &text).ok()?;
        let kept = Written {
            probes: set.probes,
            rules: set.rules,
        };
        (kept != self.written()).then_some(kept)
    }

    /// Deletes the recovery file (changes saved or discarded).
    pub fn forget_recovery(&self) {
        let _ = std::fs::remove_file(self.recovery_path());
    }

    /// Takes in a level loaded again (and answered) elsewhere, typically on a background thread;
    /// probes edited meanwhile are answered again here. Returns what changed for each probe, by
    /// index (the same rules as `check --baseline`, default tolerance).
    pub fn apply_reload(&mut self, reloaded: Reloaded) -> Vec<(usize, Vec<Aspect>)> {
        let Answered {
            opened,
            probes,
            mut results,
        } = reloaded.0;
        let level = opened.level;
        // The rules' probes as they are on the new level, after the written probes as edited now.
        let mut now = written_probes(&self.probes.probes);
        now.extend(expand_rules(&self.probes.rules, &level.world));
        // Answers owed on the old level are owed anew if still needed; a probe whose answer was
        // owed before or is owed now is not told as changed.
        let unanswered = std::mem::take(&mut self.owed);
        self.cancelled.clear();
        self.world = Arc::new(level.world);
        if probes.probes != now {
            results = now.iter().map(|p| self.answer_or_owe(p)).collect();
        }
        // Changes are told for probes there before and after (a rule's probe for a new object is
        // new, not changed).
        let before: std::collections::HashMap<&str, &ProbeResult> = self
            .probes
            .probes
            .iter()
            .zip(&self.results)
            .map(|(p, r)| (&*p.id, r))
            .collect();
        let changed = now
            .iter()
            .zip(&results)
            .enumerate()
            .filter(|(_, (probe, _))| {
                !unanswered.contains(&probe.id) && !self.owed.contains(&probe.id)
            })
            .filter_map(|(i, (probe, new))| {
                let old = before.get(&*probe.id)?;
                let aspects = changes(old, new, DEFAULT_TOLERANCE);
                (!aspects.is_empty()).then_some((i, aspects))
            })
            .collect();
        self.probes.probes = now;
        self.stamps = stamps(&level.files);
        self.level_digest = level.digest;
        self.diagnostics = level.diagnostics;
        self.lint = level.lint;
        self.level = level.model.expect(KEPT);
        self.results = results;
        changed
    }

    /// Counts by verdict.
    pub fn summary(&self) -> Summary {
        Summary::of(&self.results)
    }

    /// The files the level was read from.
    pub fn level_files(&self) -> impl Iterator<Item = &Path> + Clone {
        self.stamps.iter().map(|(p, _)| p.as_path())
    }

    /// True when the level file, or a geometry file beside it, changed on disk since it was loaded
    /// (so the answers on screen may no longer hold).
    pub fn level_changed_on_disk(&self) -> bool {
        self.stamps.iter().any(|(p, stamp)| modified(p) != *stamp)
    }

    /// The three corners of a triangle of an object's mesh, by object name and the triangle's number
    /// as the file gives it (as hits name triangles).
    pub fn triangle(&self, object: &str, triangle: u32) -> Option<[glam::DVec3; 3]> {
        let found = self.level.objects.iter().find(|o| o.name == object)?;
        match &found.geometry {
            Geometry::Mesh(mesh) => {
                let kept = mesh.origin.kept(triangle)?;
                let t = mesh.triangles.get(kept as usize)?;
                Some(t.map(|i| mesh.vertices[i as usize]))
            }
            Geometry::Primitive { .. } => None,
        }
    }
}

/// The probe set as the user wrote it: probes and rules, without the probes the rules give.
#[derive(Debug, Clone, PartialEq)]
pub struct Written {
    /// The written probes, in order.
    pub probes: Vec<Probe>,
    /// The rules, in order.
    pub rules: Vec<Rule>,
}

/// The probes of `probes` that the user wrote (not given by a rule).
fn written_probes(probes: &[Probe]) -> Vec<Probe> {
    probes
        .iter()
        .filter(|p| p.from_rule.is_none())
        .cloned()
        .collect()
}

/// The session keeps the level model when asked, and the document always asks.
const KEPT: &str = "the session keeps the level model when asked";

/// A probe set opened with its level and every probe answered: the one pipeline of the core
/// ([`plumbline_core::session::open`]), keeping the level model for drawing.
struct Answered {
    opened: Opened,
    probes: ProbeSet,
    results: Vec<ProbeResult>,
}

impl Answered {
    /// Opens `path` (answering `probes` instead of the file's, when given) and answers every probe.
    fn open(path: &Path, probes: Option<Edited>, paths: PathPolicy) -> Result<Answered, Error> {
        let options = OpenOptions {
            probes,
            keep_level: true,
            paths,
            ..OpenOptions::default()
        };
        let opened = open(path, &options)?;
        let results = opened.answer(None, None)?;
        // The pointer picks with rays: build their index here, off the frame that first hovers.
        opened.level.world.prepare_rays();
        let written = opened.probes.to_set()?;
        // The document lists every probe, the rules' included (they are not saved: their rules are).
        let probes = ProbeSet {
            probes: opened.probes.all()?,
            ..written
        };
        Ok(Answered {
            opened,
            probes,
            results,
        })
    }
}

/// A level loaded again from disk with the probes answered on it, ready for
/// [`Document::apply_reload`].
pub struct Reloaded(Answered);

impl Reloaded {
    /// Loads the level at `level_path` and answers `probes` on it (the slow part of a reload; it
    /// needs nothing from the open document, so it can run on another thread).
    pub fn load(level_path: PathBuf, set: &ProbeSet, paths: PathPolicy) -> Result<Reloaded, Error> {
        let edited = Edited {
            probes: written_probes(&set.probes),
            rules: Some(set.rules.clone()),
        };
        Answered::open(&level_path, Some(edited), paths).map(Reloaded)
    }
}

/// An id not used by any of `probes`: `base`, or `base-2`, `base-3`, …
pub fn unused_id(probes: &[Probe], base: &str) -> String {
    let taken = |id: &str| probes.iter().any(|p| &*p.id == id);
    if !taken(base) {
        return base.to_string();
    }
    (2..)
        .map(|n| format!("{base}-{n}"))
        .find(|id| !taken(id))
        .expect("some number is free")
}

/// How a probe set saved at `probes_path` names the level: relative to the probe set's folder (with
/// `..` when the level lies outside it, which opening then needs `--allow-outside-paths` for), or the
/// level's full path when the two share no folder at all.
fn level_reference(probes_path: &Path, level_path: &Path) -> String {
    let folder = probes_path.parent().unwrap_or(Path::new(""));
    plumbline_core::input::relative_path(folder, level_path)
}

/// Modification times of the files a level was read from.
fn stamps(files: &[PathBuf]) -> Vec<(PathBuf, Option<SystemTime>)> {
    files.iter().map(|p| (p.clone(), modified(p))).collect()
}

/// When a file was last modified (`None` when it cannot be read).
fn modified(path: &Path) -> Option<SystemTime> {
    std::fs::metadata(path).and_then(|m| m.modified()).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_level_is_named_relative_to_the_probe_set_when_it_is_beside_or_below_it() {
        let root = std::path::absolute(Path::new("/levels")).unwrap();
        let probes = root.join("yard.probes.json");
        assert_eq!(
            level_reference(&probes, &root.join("yard.level.json")),
            "yard.level.json"
        );
        assert_eq!(
            level_reference(&probes, &root.join("parts").join("yard.glb")),
            "parts/yard.glb"
        );
        let beside = std::path::absolute(Path::new("/shared/yard.level.json")).unwrap();
        assert_eq!(
            level_reference(
                &std::path::absolute(Path::new("/shared/probes/a.probes.json")).unwrap(),
                &beside
            ),
            "../yard.level.json"
        );
    }

    #[test]
    fn new_ids_are_unused() {
        let probe = |id: &str| Probe {
            id: id.into(),
            label: None,
            filter: Default::default(),
            query: plumbline_core::probe::ProbeQuery::Ray {
                from: glam::DVec3::ZERO,
                to: glam::DVec3::X,
                hits: None,
            },
            expect: None,
            from_rule: None,
        };
        let probes = [probe("ray"), probe("ray-2")];
        assert_eq!(unused_id(&probes, "ray"), "ray-3");
        assert_eq!(unused_id(&probes, "sweep"), "sweep");
    }
}
