//! The selection model: which probes are selected, which one is inspected, and which of its hits is
//! picked; Ctrl+click and Shift+click rules.

/// The selected probes: one is inspected (`probe`, with a picked `hit`), more may be selected with
/// it for bulk edits.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Selection {
    /// The inspected probe.
    pub probe: Option<usize>,
    /// Index of the picked hit within that probe's hits.
    pub hit: Option<usize>,
    /// Further selected probes, ascending, without `probe`.
    pub others: Vec<usize>,
}

impl Selection {
    /// Just probe `index`.
    pub fn one(index: usize) -> Selection {
        Selection {
            probe: Some(index),
            ..Selection::default()
        }
    }

    /// The probe when exactly one is selected.
    pub fn single(&self) -> Option<usize> {
        self.probe.filter(|_| self.others.is_empty())
    }

    /// True when nothing is selected.
    pub fn is_empty(&self) -> bool {
        self.probe.is_none() && self.others.is_empty()
    }

    /// True when probe `index` is selected.
    pub fn contains(&self, index: usize) -> bool {
        self.probe == Some(index) || self.others.binary_search(&index).is_ok()
    }

    /// Every selected probe, ascending.
    pub fn all(&self) -> Vec<usize> {
        let mut all = self.others.clone();
        all.extend(self.probe);
        all.sort_unstable();
        all.dedup();
        all
    }

    /// Adds or removes probe `index` (Ctrl+click).
    pub fn toggle(&mut self, index: usize) {
        let mut all = self.all();
        match all.binary_search(&index) {
            Ok(at) => {
                all.remove(at);
            }
            Err(at) => all.insert(at, index),
        }
        let probe = if all.contains(&index) {
            Some(index)
        } else {
            self.probe.filter(|p| *p != index).or(all.first().copied())
        };
        *self = Selection::of(probe, all);
    }

    /// Selects every shown probe from the inspected one to `index` (Shift+click).
    pub fn extend_to(&mut self, index: usize, shown: &[usize]) {
        let from = self
            .probe
            .and_then(|p| shown.iter().position(|&i| i == p))
            .unwrap_or(0);
        let Some(to) = shown.iter().position(|&i| i == index) else {
            return;
        };
        let (lo, hi) = (from.min(to), from.max(to));
        *self = Selection::of(Some(index), shown[lo..=hi].to_vec());
    }

    /// A selection of `all`, inspecting `probe`.
    pub fn of(probe: Option<usize>, mut all: Vec<usize>) -> Selection {
        all.sort_unstable();
        all.dedup();
        all.retain(|i| Some(*i) != probe);
        Selection {
            probe,
            hit: None,
            others: all,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Selection;

    #[test]
    fn ctrl_click_adds_and_removes_and_shift_click_selects_a_run() {
        let mut selection = Selection::one(4);
        selection.toggle(7);
        assert_eq!(selection.all(), vec![4, 7]);
        assert_eq!(
            selection.probe,
            Some(7),
            "the probe clicked last is inspected"
        );
        selection.toggle(7);
        assert_eq!(selection.all(), vec![4]);
        assert_eq!(selection.single(), Some(4));

        let shown = [1, 4, 5, 9, 12];
        selection.extend_to(9, &shown);
        assert_eq!(selection.all(), vec![4, 5, 9]);
        assert_eq!(selection.probe, Some(9));
        assert!(selection.contains(5) && !selection.contains(12));
        assert_eq!(selection.single(), None);
    }
}
