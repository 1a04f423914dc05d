//! Undo and redo for every edit of the probe set. Each entry is the whole list of probes before an
//! edit (probes are small; answers are not kept, they are recomputed or reused by id). Consecutive
//! edits of the same field, such as the frames of one drag or the keys typed into one box, make one
//! entry until the history is sealed.

use plumbline_core::probe::Probe;

/// Entries kept at most; the oldest go first.
const DEPTH: usize = 500;

/// One state of the probes, with what the edit that left it was called.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    /// The probes.
    pub probes: Vec<Probe>,
    /// The edit's name, for menus ("Undo move point").
    pub what: String,
}

/// The undo and redo stacks.
#[derive(Debug, Default)]
pub struct History {
    undo: Vec<Entry>,
    redo: Vec<Entry>,
    /// The field being edited, while consecutive edits of it merge.
    open: Option<String>,
}

impl History {
    /// Records the probes as they were before an edit of `key`, called `what`. Another edit of the
    /// same key before [`History::seal`] adds nothing (it is the same gesture).
    pub fn record(&mut self, key: &str, what: &str, before: &[Probe]) {
        if self.open.as_deref() == Some(key) {
            return;
        }
        self.open = Some(key.to_string());
        self.undo.push(Entry {
            probes: before.to_vec(),
            what: what.to_string(),
        });
        if self.undo.len() > DEPTH {
            self.undo.remove(0);
        }
        self.redo.clear();
    }

    /// Ends the current gesture: the next edit, even of the same field, is a new entry.
    pub fn seal(&mut self) {
        self.open = None;
    }

    /// Steps back: returns the probes to restore, given the current ones (kept for redo).
    pub fn undo(&mut self, current: &[Probe]) -> Option<Vec<Probe>> {
        self.seal();
        let entry = self.undo.pop()?;
        self.redo.push(Entry {
            probes: current.to_vec(),
            what: entry.what.clone(),
        });
        Some(entry.probes)
    }

    /// Steps forward again after an undo.
    pub fn redo(&mut self, current: &[Probe]) -> Option<Vec<Probe>> {
        self.seal();
        let entry = self.redo.pop()?;
        self.undo.push(Entry {
            probes: current.to_vec(),
            what: entry.what.clone(),
        });
        Some(entry.probes)
    }

    /// What undo would undo.
    pub fn undo_name(&self) -> Option<&str> {
        self.undo.last().map(|e| e.what.as_str())
    }

    /// What redo would redo.
    pub fn redo_name(&self) -> Option<&str> {
        self.redo.last().map(|e| e.what.as_str())
    }

    /// Forgets everything (another file was opened).
    pub fn clear(&mut self) {
        *self = History::default();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec3;
    use plumbline_core::probe::ProbeQuery;

    fn probe(id: &str) -> Probe {
        Probe {
            id: id.into(),
            label: None,
            filter: Default::default(),
            query: ProbeQuery::Ray {
                from: DVec3::ZERO,
                to: DVec3::X,
                hits: None,
            },
            expect: None,
        }
    }

    #[test]
    fn undo_and_redo_walk_the_states_and_a_gesture_is_one_step() {
        let mut history = History::default();
        let a = vec![probe("a")];
        let ab = vec![probe("a"), probe("b")];
        history.record("add", "add b", &a);
        // Three frames of one drag of b's end: one entry.
        let mut dragged = ab.clone();
        for x in [1.0, 2.0, 3.0] {
            history.record("drag b 1", "move point", &dragged);
            if let ProbeQuery::Ray { to, .. } = &mut dragged[1].query {
                to.x = x;
            }
        }
        history.seal();
        assert_eq!(history.undo_name(), Some("move point"));
        assert_eq!(history.undo(&dragged), Some(ab.clone()));
        assert_eq!(history.undo(&ab), Some(a.clone()));
        assert_eq!(history.undo(&a), None);
        assert_eq!(history.redo(&a), Some(ab.clone()));
        assert_eq!(history.redo(&ab), Some(dragged.clone()));
        assert_eq!(history.redo(&dragged), None);
    }

    #[test]
    fn a_new_edit_after_undo_drops_the_redo_branch() {
        let mut history = History::default();
        let a = vec![probe("a")];
        history.record("k1", "first", &a);
        let b = vec![probe("b")];
        assert_eq!(history.undo(&b), Some(a.clone()));
        history.record("k2", "second", &a);
        assert_eq!(history.redo_name(), None);
    }
}
