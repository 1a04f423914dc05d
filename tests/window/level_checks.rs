//! The whole-level checks in the window, driven headlessly: a rule's probes are read-only and
//! grouped under their rule, the rules window applies edited rules (and undo takes them back), the
//! sightline matrix marks the pair clicked, and the lint window lists findings and picks one.

use std::path::PathBuf;

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use plumbline::app::Workbench;
use plumbline::app::document::Document;
use plumbline::app::probe_list::Origin;
use plumbline_core::demo::files;

fn harness() -> Harness<'static, Workbench> {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("scenes")
        .join(files::PROBES);
    let document = Document::open(&path, Default::default()).expect("the demo opens");
    let mut harness = Harness::builder()
        .with_size([1400.0, 900.0])
        .build_ui_state(
            |ui, workbench: &mut Workbench| workbench.ui(ui),
            Workbench::new(document),
        );
    harness.run_steps(2);
    harness
}

fn index_of(workbench: &Workbench, id: &str) -> usize {
    workbench
        .document
        .probes
        .probes
        .iter()
        .position(|p| &*p.id == id)
        .unwrap()
}

#[test]
fn a_rules_probe_is_read_only_and_listed_under_its_rule() {
    let mut harness = harness();
    let index = index_of(harness.state(), "props-rest/crate-7");
    harness.state_mut().select_probe(Some(index));
    harness.run_steps(2);
    harness.get_by_label_contains("Made by rule props-rest for crate-7");
    assert!(harness.query_by_label("Edit the question").is_none());
    // Deleting it is refused while its rule stands.
    let before = harness.state().document.probes.probes.len();
    harness.get_by_label("Duplicate");
    let ctx = harness.ctx.clone();
    harness
        .state_mut()
        .perform(plumbline::app::commands::Command::Delete, &ctx);
    harness.run_steps(1);
    assert_eq!(harness.state().document.probes.probes.len(), before);
    // The list narrowed to the rule.
    harness.state_mut().filter.origin = Some(Origin::Rule("props-rest".into()));
    harness.run_steps(2);
    let shown = harness.state_mut().shown();
    assert_eq!(shown.len(), 10, "seven crates and three drums");
}

#[test]
fn the_rules_window_applies_edited_rules_and_undo_takes_them_back() {
    let mut harness = harness();
    let count = harness.state().document.probes.probes.len();
    harness.state_mut().toggle_rules();
    harness.run_steps(2);
    harness.get_by_label_contains("objects tagged spawn");
    // A typo is refused with the place it is at.
    harness.state_mut().rules_draft.as_mut().unwrap().text =
        r#"[{"id": "props-rest", "objects": {"tags": ["prop"]}, "rest": {}}]"#.into();
    harness.run_steps(3);
    harness.get_by_label("Apply").click();
    harness.run_steps(2);
    let error = harness.state().rules_draft.as_ref().unwrap().error.clone();
    assert!(error.is_some_and(|e| e.contains("rest")));
    assert_eq!(harness.state().document.probes.probes.len(), count);

    // One rule left: only the props are checked by rule now.
    harness.state_mut().rules_draft.as_mut().unwrap().text =
        r#"[{"id": "props-rest", "objects": {"tags": ["prop"]}, "rests": {}}]"#.into();
    harness.run_steps(3);
    harness.get_by_label("Apply").click();
    harness.run_steps(2);
    let workbench = harness.state();
    assert_eq!(workbench.document.probes.rules.len(), 1);
    let by_rule = workbench
        .document
        .probes
        .probes
        .iter()
        .filter(|p| p.from_rule.is_some())
        .count();
    assert_eq!(by_rule, 10);
    assert!(workbench.document.is_dirty());

    let ctx = harness.ctx.clone();
    harness
        .state_mut()
        .perform(plumbline::app::commands::Command::Undo, &ctx);
    harness.run_steps(2);
    assert_eq!(harness.state().document.probes.rules.len(), 3);
    assert_eq!(harness.state().document.probes.probes.len(), count);
}

#[test]
fn a_click_in_the_sightline_matrix_picks_that_pair() {
    let mut harness = harness();
    let index = index_of(harness.state(), "lookout-matrix");
    harness.state_mut().select_probe(Some(index));
    harness.run_steps(2);
    harness.get_by_label("Sightlines (10 pairs)");
    harness
        .get_by_label("lookout-gate – lookout-catwalk: blocked by yard/warehouse")
        .click();
    harness.run_steps(2);
    assert_eq!(harness.state().selection.hit, Some(1));
}

#[test]
fn the_lint_window_lists_the_findings_and_picks_one() {
    let mut harness = harness();
    let ctx = harness.ctx.clone();
    harness.state_mut().toggle_lint(&ctx);
    let waited = std::time::Instant::now();
    while harness.state().lint.report.is_none() && waited.elapsed().as_secs() < 30 {
        std::thread::sleep(std::time::Duration::from_millis(20));
        harness.step();
    }
    harness.run_steps(2);
    harness.get_by_label("8 finding(s)");
    harness
        .get_by_label("crate-7 floats 0.250 m above yard/terrain")
        .click();
    harness.run_steps(2);
    let finding = harness.state().lint.finding().expect("a finding is picked");
    assert_eq!(&*finding.objects[0], "crate-7");
}

/// Runs frames until the background work is done (a hang guard, not a speed check: the demo's
/// reach map takes about two seconds).
fn settle(harness: &mut Harness<'static, Workbench>) {
    for _ in 0..3000 {
        harness.step();
        if !harness.state().is_busy() {
            return;
        }
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    panic!("the background work never ended");
}

/// The demo's reach map with a coarser grid, as an edit in the inspector would make it.
fn coarser_reach(harness: &mut Harness<'static, Workbench>) -> usize {
    let index = index_of(harness.state(), "pickups-reachable");
    let mut probe = harness.state().document.probes.probes[index].clone();
    let plumbline_core::probe::ProbeQuery::Reach { spacing, .. } = &mut probe.query else {
        panic!("the demo's reach probe")
    };
    *spacing = 0.6;
    harness.state_mut().select_probe(Some(index));
    harness.state_mut().edit_probe(index, "spacing", probe);
    index
}

#[test]
fn an_edited_reach_map_is_answered_in_the_background_with_progress() {
    use plumbline_core::check::{Hits, Verdict};
    let mut harness = harness();
    let index = coarser_reach(&mut harness);
    // The edit returns at once: the answer is owed, and the summary bar shows it being made.
    let owed = &harness.state().document.results[index];
    assert_eq!(owed.verdict, Verdict::Unchecked);
    assert!(owed.reason.contains("background"), "{}", owed.reason);
    harness.step();
    harness.get_by_label("Answering pickups-reachable");
    settle(&mut harness);
    let result = &harness.state().document.results[index];
    let Hits::Reach(records) = &result.hits else {
        panic!("a reach answer")
    };
    assert!(records[0].reached > 0);
    // The demo's one pickup no character gets to is still out of reach on the coarser grid.
    assert_eq!(result.verdict, Verdict::Fail, "{}", result.reason);
}

#[test]
fn a_reach_map_cancelled_says_so_and_can_be_answered_again() {
    use plumbline_core::check::Verdict;
    let mut harness = harness();
    let index = coarser_reach(&mut harness);
    harness.step();
    harness.get_by_label("Cancel").click();
    settle(&mut harness);
    let result = &harness.state().document.results[index];
    assert_eq!(result.verdict, Verdict::Error);
    assert!(result.reason.contains("cancelled"), "{}", result.reason);
    harness.run_steps(2);
    harness.get_by_label("Answer again").click();
    harness.step();
    settle(&mut harness);
    assert_eq!(
        harness.state().document.results[index].verdict,
        Verdict::Fail
    );
}

#[test]
fn a_probe_that_enters_a_volume_lists_it_in_the_inspector() {
    let mut harness = harness();
    let index = index_of(harness.state(), "jump-into-the-river");
    harness.state_mut().select_probe(Some(index));
    harness.run_steps(2);
    harness.get_by_label("Volumes (1)");
    harness.get_by_label("river");
    harness.get_by_label("enters");
}
