//! Edits of the probe set: every change goes through [`Workbench::replace_probes`] or
//! [`Workbench::edit_probe`] (history first, then the document answers what changed), and the placing
//! tools turn clicks into new probes.

use glam::DVec3;

use super::document::{self, Written};
use super::tools::{Lift, new_probe};
use super::{Selection, Workbench};
use plumbline_core::check::expectation_from;
use plumbline_core::probe::{Probe, Rule, validate_probe};

impl Workbench {
    /// Replaces every probe as one edit (recorded for undo under `key`), answering what changed.
    pub fn replace_probes(&mut self, key: &str, what: &str, probes: Vec<Probe>) {
        self.history.record(key, what, &self.document.written());
        self.document.set_probes(probes);
        self.after_probes_changed();
    }

    /// Replaces the rules (one undoable step); their probes are given anew on the level.
    pub fn replace_rules(&mut self, rules: Vec<Rule>) {
        self.history
            .record("rules", "edit rules", &self.document.written());
        self.history.seal();
        self.document.set_rules(rules);
        self.after_probes_changed();
    }

    /// Puts back a written state (undo, redo, recovered changes).
    pub(super) fn restore(&mut self, state: Written) {
        self.document.restore(state);
        self.after_probes_changed();
    }

    /// The index of the probe with this id.
    fn index_of(&self, id: &str) -> Option<usize> {
        self.document
            .probes
            .probes
            .iter()
            .position(|p| &*p.id == id)
    }

    /// True (and says why) when probe `index` is made by a rule, which is edited instead.
    fn made_by_rule(&mut self, index: usize) -> bool {
        let Some(from) = self
            .document
            .probes
            .probes
            .get(index)
            .and_then(|p| p.from_rule.clone())
        else {
            return false;
        };
        self.say(format!(
            "This probe is made by rule \"{}\": edit the rule (Probe > Rules…).",
            from.rule
        ));
        true
    }

    /// Keeps the selection within the probes and asks for new marks and a new plot.
    pub(super) fn after_probes_changed(&mut self) {
        self.results_revision += 1;
        let n = self.document.probes.probes.len();
        let kept: Vec<usize> = self
            .selection
            .all()
            .into_iter()
            .filter(|i| *i < n)
            .collect();
        let probe = self.selection.probe.filter(|i| *i < n);
        let hit = self.selection.hit;
        self.selection = Selection::of(probe.or(kept.first().copied()), kept);
        self.selection.hit = hit;
        // The plot follows the probe's new answer.
        self.plot_wanted = true;
    }

    /// Applies an edit of one probe when it is valid; says why not otherwise.
    pub fn edit_probe(&mut self, index: usize, field: &str, probe: Probe) {
        if self.made_by_rule(index) {
            return;
        }
        if let Err(why) = validate_probe(&probe) {
            self.say(why.message);
            return;
        }
        // By position, so that renaming a probe letter by letter stays one step.
        let key = format!("{index}:{field}");
        self.history
            .record(&key, &format!("edit {field}"), &self.document.written());
        // Only this probe is answered again: a drag edits it every frame.
        self.document.replace_probe(index, probe);
        self.after_probes_changed();
    }

    pub(super) fn duplicate(&mut self) {
        let chosen = self.selection.all();
        if chosen.is_empty() {
            return;
        }
        let mut probes = self.document.probes.probes.clone();
        let mut copies = Vec::new();
        for &i in &chosen {
            // A copy of a rule's probe is the user's own, free to edit.
            let mut copy = probes[i].clone();
            copy.from_rule = None;
            let base = format!("{}-copy", copy.id.replace('/', "-"));
            copy.id = document::unused_id(&probes, &base).into();
            copies.push(copy.id.clone());
            probes.push(copy);
        }
        self.replace_probes("duplicate", "duplicate", probes);
        self.history.seal();
        let copies: Vec<usize> = copies.iter().filter_map(|id| self.index_of(id)).collect();
        self.selection = Selection::of(copies.first().copied(), copies);
        self.scroll_list = true;
    }

    pub(super) fn delete(&mut self) {
        let chosen = self.selection.all();
        if chosen.is_empty() {
            return;
        }
        // A rule's probes stay while the rule does.
        let by_rule = |i: &usize| self.document.probes.probes[*i].from_rule.is_some();
        let kept = chosen.iter().filter(|i| by_rule(i)).count();
        let probes = self
            .document
            .probes
            .probes
            .iter()
            .enumerate()
            .filter(|(i, p)| !chosen.contains(i) || p.from_rule.is_some())
            .map(|(_, p)| p.clone())
            .collect();
        let deleted = chosen.len() - kept;
        if deleted > 0 {
            self.selection = Selection::default();
            self.replace_probes("delete", "delete", probes);
            self.history.seal();
        }
        let mut message = format!("Deleted {deleted} probe(s); Ctrl+Z brings them back.");
        if kept > 0 {
            message = format!(
                "{message} {kept} made by rules kept: change or remove their rule (Probe > Rules…)."
            );
        }
        self.say(message);
    }

    /// Sets each selected probe's expectation to what it shows now.
    pub(super) fn expect_answers(&mut self) {
        let chosen = self.selection.all();
        let mut probes = self.document.probes.probes.clone();
        let mut set = 0;
        for &i in &chosen {
            if probes[i].from_rule.is_some() {
                continue;
            }
            if let Some(expect) = self.document.results.get(i).and_then(expectation_from) {
                probes[i].expect = Some(expect);
                set += 1;
            }
        }
        if set > 0 {
            self.replace_probes("expect", "expect this answer", probes);
            self.history.seal();
        }
    }

    pub(super) fn lift(&self) -> Lift {
        Lift {
            height: self
                .lifts
                .get(&self.tool)
                .copied()
                .unwrap_or(self.tool.default_lift()),
            along_normal: self.lift_along_normal,
        }
    }

    pub(super) fn place(&mut self, point: DVec3) {
        self.placed.push(point);
        if self.tool.clicks() == Some(self.placed.len()) {
            self.finish_path();
        }
    }

    /// Turns the placed points into a new probe, selected.
    pub(super) fn finish_path(&mut self) {
        let base = self.tool.name().to_lowercase();
        let id = document::unused_id(&self.document.probes.probes, &base);
        let probe_id = id.clone();
        let Some(probe) = new_probe(self.tool, id, &self.placed, self.document.world.up()) else {
            return;
        };
        self.placed.clear();
        let mut probes = self.document.probes.probes.clone();
        probes.push(probe);
        let what = format!("new {}", self.tool.name().to_lowercase());
        let id = probe_id;
        self.replace_probes("new", &what, probes);
        self.history.seal();
        self.selection = self
            .index_of(&id)
            .map_or_else(Selection::default, Selection::one);
        self.after_selection(false);
        self.scroll_list = true;
    }
}
