//! Undo and redo for every edit of the probe set. Each entry is the whole state before an edit (the
//! written probes and the rules: small; answers are not kept, they are recomputed or reused by id).
//! Consecutive edits of the same field, such as the frames of one drag or the keys typed into one
//! box, make one entry until the history is sealed.

/// Entries kept at most; the oldest go first.
const DEPTH: usize = 500;

/// One state, with what the edit that left it was called.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry<S> {
    /// The state.
    pub state: S,
    /// The edit's name, for menus ("Undo move point").
    pub what: String,
}

/// The undo and redo stacks of states `S`.
#[derive(Debug)]
pub struct History<S> {
    undo: Vec<Entry<S>>,
    redo: Vec<Entry<S>>,
    /// The field being edited, while consecutive edits of it merge.
    open: Option<String>,
}

impl<S> Default for History<S> {
    fn default() -> Self {
        History {
            undo: Vec::new(),
            redo: Vec::new(),
            open: None,
        }
    }
}

impl<S: Clone> History<S> {
    /// Records the state as it was before an edit of `key`, called `what`. Another edit of the
    /// same key before [`History::seal`] adds nothing (it is the same gesture).
    pub fn record(&mut self, key: &str, what: &str, before: &S) {
        if self.open.as_deref() == Some(key) {
            return;
        }
        self.open = Some(key.to_string());
        self.undo.push(Entry {
            state: before.clone(),
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

    /// Steps back: returns the state to restore, given the current one (kept for redo).
    pub fn undo(&mut self, current: S) -> Option<S> {
        self.seal();
        let entry = self.undo.pop()?;
        self.redo.push(Entry {
            state: current,
            what: entry.what.clone(),
        });
        Some(entry.state)
    }

    /// Steps forward again after an undo.
    pub fn redo(&mut self, current: S) -> Option<S> {
        self.seal();
        let entry = self.redo.pop()?;
        self.undo.push(Entry {
            state: current,
            what: entry.what.clone(),
        });
        Some(entry.state)
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
    use plumbline_core::probe::{Probe, ProbeQuery};

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
            from_rule: None,
        }
    }

    #[test]
    fn undo_and_redo_walk_the_states_and_a_gesture_is_one_step() {
        let mut history = History::<Vec<Probe>>::default();
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
        assert_eq!(history.undo(dragged.clone()), Some(ab.clone()));
        assert_eq!(history.undo(ab.clone()), Some(a.clone()));
        assert_eq!(history.undo(a.clone()), None);
        assert_eq!(history.redo(a.clone()), Some(ab.clone()));
        assert_eq!(history.redo(ab.clone()), Some(dragged.clone()));
        assert_eq!(history.redo(dragged.clone()), None);
    }

    #[test]
    fn a_new_edit_after_undo_drops_the_redo_branch() {
        let mut history = History::<Vec<Probe>>::default();
        let a = vec![probe("a")];
        history.record("k1", "first", &a);
        let b = vec![probe("b")];
        assert_eq!(history.undo(b.clone()), Some(a.clone()));
        history.record("k2", "second", &a);
        assert_eq!(history.redo_name(), None);
    }
}
