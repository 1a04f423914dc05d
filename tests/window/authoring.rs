//! Authoring probes in the workbench, driven headlessly by widget label (egui_kittest): placing a ray
//! with clicks in the view, undo and redo, saving and reopening, expectations from answers, editing a
//! number, the recovery file, a save that fails, the unsaved-changes guard, and a level reload. Every
//! test works on a copy of the demo in a temporary folder; no file dialog is opened.

use std::path::{Path, PathBuf};

use crate::support::{click_at, press};
use eframe::egui::{self, Event, Key, Modifiers};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use plumbline::app::Workbench;
use plumbline::app::document::Document;
use plumbline_core::check::Verdict;
use plumbline_core::demo::files;
use plumbline_core::probe::{ProbeSet, load_probe_set, probe_set_to_json};
use plumbline_core::query::ClosestProbe;

/// The demo copied into a fresh folder; returns the folder and the probe set's path.
fn demo_copy() -> (tempfile::TempDir, PathBuf) {
    let scenes = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("scenes");
    let folder = tempfile::tempdir().unwrap();
    for name in [files::GLB, files::LEVEL, files::EDITED_LEVEL, files::PROBES] {
        std::fs::copy(scenes.join(name), folder.path().join(name)).unwrap();
    }
    let probes = folder.path().join(files::PROBES);
    (folder, probes)
}

fn harness(path: &Path) -> Harness<'static, Workbench> {
    let workbench =
        Workbench::new(Document::open(path, Default::default()).expect("the copy opens"));
    let mut harness = Harness::builder()
        .with_size([1400.0, 900.0])
        .build_ui_state(|ui, workbench: &mut Workbench| workbench.ui(ui), workbench);
    harness.run_steps(2);
    harness
}

/// Selects the probe with this id, as a click in the list does; returns its index.
fn select_by_id(harness: &mut Harness<'static, Workbench>, id: &str) -> usize {
    let index = probes_of(harness)
        .iter()
        .position(|p| &*p.id == id)
        .expect("the demo has this probe");
    harness.state_mut().select_probe(Some(index));
    index
}

fn probes_of(harness: &Harness<'static, Workbench>) -> Vec<plumbline_core::probe::Probe> {
    harness.state().document.probes.probes.clone()
}

#[test]
fn a_ray_placed_in_the_view_can_be_undone_redone_saved_and_reopened_unchanged() {
    let (folder, path) = demo_copy();
    let mut harness = harness(&path);
    let before = probes_of(&harness);

    harness.get_by_label("Ray").click();
    harness.run_steps(2);
    let view = harness.state().viewport.last_rect;
    click_at(&mut harness, view.center());
    click_at(&mut harness, view.center() + egui::vec2(80.0, 30.0));

    let after = probes_of(&harness);
    assert_eq!(after.len(), before.len() + 1, "one new probe");
    // The new probe follows the written ones (the rules' probes come last).
    let new = after
        .iter()
        .find(|p| &*p.id == "ray")
        .expect("the new probe");
    assert!(new.from_rule.is_none());
    assert_eq!(new.query.kind().name(), "ray");
    // Both ends sit 1.7 m (eye height) above the surface points that were clicked, so 1.7 m below
    // each end there is a surface of the level (to the millimetre the points are rounded to).
    let world = &harness.state().document.world;
    for end in new.query.points() {
        let foot = end - world.up() * 1.7;
        let surface = world
            .everything()
            .closest(ClosestProbe::Point, foot, 0.01)
            .unwrap();
        assert!(surface.is_some_and(|h| h.distance < 2e-3), "{end}");
    }
    assert_eq!(
        harness.state().selection.probe,
        after.iter().position(|p| &*p.id == "ray")
    );
    assert!(harness.state().document.is_dirty());

    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run_steps(2);
    assert_eq!(probes_of(&harness), before, "undo removes it");
    harness.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z);
    harness.run_steps(2);
    assert_eq!(probes_of(&harness), after, "redo brings it back");

    // File ▸ Save as… with a typed path.
    let saved = folder.path().join("yard-edit.probes.json");
    harness.get_by_label("File").click();
    harness.run_steps(2);
    harness.get_by_label_contains("Save as…").click();
    harness.run_steps(2);
    harness.get_by_label("Path").focus();
    harness.run_steps(1);
    harness.key_press_modifiers(Modifiers::COMMAND, Key::A);
    harness.run_steps(1);
    harness
        .get_by_label("Path")
        .type_text(saved.to_str().unwrap());
    harness.run_steps(1);
    harness.get_by_label("Save").click();
    harness.run_steps(2);
    assert!(!harness.state().document.is_dirty());
    assert_eq!(
        harness.state().document.probes_path.as_deref(),
        Some(saved.as_path())
    );

    let reopened = load_probe_set(&saved).unwrap();
    // The file holds the written probes and the rules (the rules' probes are made again on load).
    let written: Vec<_> = after
        .iter()
        .filter(|p| p.from_rule.is_none())
        .cloned()
        .collect();
    assert_eq!(reopened.probes, written);
    assert_eq!(reopened.rules, harness.state().document.probes.rules);
    assert_eq!(reopened.level, files::LEVEL);
    let bytes = std::fs::read_to_string(&saved).unwrap();
    assert_eq!(
        bytes,
        probe_set_to_json(&reopened),
        "saving the reopened set gives the same file"
    );
}

#[test]
fn expect_this_answer_makes_an_unchecked_probe_pass() {
    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    let index = probes_of(&harness)
        .iter()
        .position(|p| p.expect.is_none())
        .expect("the demo has an unchecked probe");
    let id = probes_of(&harness)[index].id.clone();
    harness.state_mut().select_probe(Some(index));
    harness.run_steps(2);
    assert_eq!(
        harness.state().document.results[index].verdict,
        Verdict::Unchecked
    );

    harness.get_by_label("Expect this answer").click();
    harness.run_steps(2);
    let workbench = harness.state();
    assert!(
        workbench.document.probes.probes[index].expect.is_some(),
        "{id}"
    );
    assert_eq!(workbench.document.results[index].verdict, Verdict::Pass);
    harness.get_by_label_contains(&format!("pass  {id}"));
}

#[test]
fn editing_a_number_in_the_inspector_answers_the_probe_again() {
    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    let index = select_by_id(&mut harness, "gate-view-of-office-blocked");
    harness.run_steps(2);
    assert!(!harness.state().document.results[index].hits.is_empty());
    assert_eq!(
        harness.state().document.results[index].verdict,
        Verdict::Pass
    );

    // Lift the ray's start 40 m up: it now passes over every container.
    harness.get_by_label("Edit the question").click();
    harness.run_steps(2);
    harness.get_by_label("from y").set_value_accesskit(40.0);
    harness.run_steps(2);
    let workbench = harness.state();
    let plumbline_core::probe::ProbeQuery::Ray { from, .. } =
        workbench.document.probes.probes[index].query
    else {
        unreachable!()
    };
    assert_eq!(from.y, 40.0);
    assert_eq!(workbench.document.results[index].verdict, Verdict::Fail);
    harness.get_by_label_contains("FAIL  gate-view-of-office-blocked");
    assert_eq!(harness.state().history.undo_name(), Some("edit from"));
}

#[test]
fn a_recovery_file_is_offered_at_start_and_restored() {
    let (_folder, path) = demo_copy();
    let document = Document::open(&path, Default::default()).unwrap();
    // A session that had deleted the first probe, then stopped without saving.
    let mut probes = document.probes.clone();
    probes.probes.remove(0);
    let recovery = document.recovery_path();
    std::fs::write(
        &recovery,
        probe_set_to_json(&ProbeSet {
            schema: None,
            level: files::LEVEL.into(),
            probes: probes.probes.clone(),
            rules: probes.rules.clone(),
        }),
    )
    .unwrap();

    let mut harness = harness(&path);
    harness.get_by_label("Recover unsaved changes?");
    harness.get_by_label("Restore").click();
    harness.run_steps(2);
    assert_eq!(probes_of(&harness), probes.probes);
    assert!(harness.state().document.is_dirty());
    assert!(harness.query_by_label("Recover unsaved changes?").is_none());

    // Saving keeps the changes and retires the recovery file.
    harness.key_press_modifiers(Modifiers::COMMAND, Key::S);
    harness.run_steps(2);
    assert!(!recovery.exists());
    let written: Vec<_> = probes
        .probes
        .iter()
        .filter(|p| p.from_rule.is_none())
        .cloned()
        .collect();
    assert_eq!(load_probe_set(&path).unwrap().probes, written);
    assert_eq!(load_probe_set(&path).unwrap().rules, probes.rules);
}

#[test]
fn a_save_that_fails_leaves_the_file_on_disk_intact_and_says_why() {
    let (folder, path) = demo_copy();
    let original = std::fs::read(&path).unwrap();
    let mut harness = harness(&path);
    harness.state_mut().select_probe(Some(0));
    harness.run_steps(1);
    harness.get_by_label("Delete").click();
    harness.run_steps(2);
    assert!(harness.state().document.is_dirty());

    // Something already sits where the save's temporary file must go.
    let blocker = folder
        .path()
        .join(format!(".{}.{}.tmp", files::PROBES, std::process::id()));
    std::fs::create_dir(&blocker).unwrap();
    harness.key_press_modifiers(Modifiers::COMMAND, Key::S);
    harness.run_steps(2);

    assert_eq!(
        std::fs::read(&path).unwrap(),
        original,
        "the probe set on disk is untouched"
    );
    assert!(
        harness.state().document.is_dirty(),
        "the edit is still unsaved, not lost"
    );
    harness.get_by_label_contains("cannot save");
}

#[test]
fn closing_with_unsaved_changes_asks_first() {
    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    harness.state_mut().select_probe(Some(0));
    harness.run_steps(1);
    harness.get_by_label("Duplicate").click();
    harness.run_steps(2);

    harness
        .input_mut()
        .viewports
        .entry(egui::ViewportId::ROOT)
        .or_default()
        .events
        .push(egui::ViewportEvent::Close);
    harness.run_steps(2);
    harness.get_by_label("Unsaved changes");
    harness.get_by_label("Cancel").click();
    harness.run_steps(2);
    assert!(harness.query_by_label("Unsaved changes").is_none());
    assert!(harness.state().document.is_dirty());
}

#[test]
fn a_level_edited_on_disk_is_reloaded_and_what_changed_is_shown_until_dismissed() {
    let (folder, path) = demo_copy();
    let mut harness = harness(&path);
    // Someone saves the edited level over the one the probes use.
    std::fs::copy(
        folder.path().join(files::EDITED_LEVEL),
        folder.path().join(files::LEVEL),
    )
    .unwrap();
    // The window looks at the level's files every two seconds and reloads in the background.
    let waited = std::time::Instant::now();
    while harness.state().changes.is_empty() && waited.elapsed().as_secs() < 20 {
        std::thread::sleep(std::time::Duration::from_millis(100));
        harness.step();
    }
    harness.run_steps(2);

    let changes = harness.state().changes.clone();
    assert_eq!(changes.len(), 6, "{changes:?}");
    assert!(changes.contains_key("gate-sees-warehouse-door"));
    // A rule's probe changes like any other: the lifted crate no longer rests.
    assert!(changes.contains_key("props-rest/crate-2"));
    // The moved container takes ground from the reach map.
    assert!(changes.contains_key("pickups-reachable"));
    harness.get_by_label("Level reloaded: 6 probe(s) changed");
    harness.get_by_label_contains("gate-sees-warehouse-door changed");

    harness.get_by_label("Dismiss").click();
    harness.run_steps(2);
    assert!(harness.state().changes.is_empty());
    harness.get_by_label("Answers match the level on disk");
}

/// Height of `p` above the level straight below it.
fn height_above_level(world: &plumbline_core::query::World, p: glam::DVec3) -> f64 {
    world
        .everything()
        .ray_first(p, p - world.up() * 1.0e4)
        .unwrap()
        .expect("level below")
        .distance
}

#[test]
fn a_handle_dragged_over_surfaces_keeps_its_height_and_is_one_undo_step() {
    use plumbline::app::tools::DragMode;

    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    let index = select_by_id(&mut harness, "gate-view-of-office-blocked");
    harness.state_mut().drag_mode = DragMode::Surface;
    harness.run_steps(3);
    let start = probes_of(&harness)[index].query.points()[0];
    let world = harness.state().document.world.clone();
    let height = height_above_level(&world, start);
    let at = harness
        .state()
        .viewport
        .to_screen(harness.state().viewport.last_rect, start)
        .expect("the ray's start is in view");

    // A short drag, staying on the yard's flat ground (not over the quay's edge).
    press(&mut harness, at, true);
    for k in 1..=8 {
        let pos = at + egui::vec2(3.0 * k as f32, 1.5 * k as f32);
        harness.input_mut().events.push(Event::PointerMoved(pos));
        harness.step();
    }
    press(&mut harness, at + egui::vec2(24.0, 12.0), false);
    harness.run_steps(2);

    let moved = probes_of(&harness)[index].query.points()[0];
    assert!(
        moved.distance(start) > 0.5,
        "the start moved: {start} -> {moved}"
    );
    assert!(
        (height_above_level(&world, moved) - height).abs() < 2e-3,
        "kept {height} m above the level: {start} -> {moved}"
    );
    assert_eq!(harness.state().history.undo_name(), Some("edit point 0"));
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run_steps(2);
    assert_eq!(
        probes_of(&harness)[index].query.points()[0],
        start,
        "one undo brings it back"
    );
}

#[test]
fn renaming_is_one_undo_step_and_taken_ids_are_refused() {
    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    let original = probes_of(&harness)[0].id.clone();
    let taken = probes_of(&harness)[1].id.clone();
    harness.state_mut().select_probe(Some(0));
    harness.run_steps(2);
    harness.get_by_label("Edit the question").click();
    harness.run_steps(2);

    harness.get_by_label("id").focus();
    harness.run_steps(1);
    harness.key_press_modifiers(Modifiers::COMMAND, Key::A);
    harness.run_steps(1);
    harness.get_by_label("id").type_text(&taken);
    harness.run_steps(2);
    // Ctrl+A selected the box's text (not every probe); the taken name is refused with a reason.
    assert_eq!(probes_of(&harness)[0].id, original);
    assert_eq!(harness.state().selection.single(), Some(0));
    harness.get_by_label_contains("Another probe is called");
    harness.get_by_label("id").type_text("-north");
    harness.run_steps(2);
    assert_eq!(&*probes_of(&harness)[0].id, format!("{taken}-north"));

    // Leave the box, then one undo brings the old name back.
    harness.key_press(Key::Escape);
    harness.run_steps(2);
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run_steps(2);
    assert_eq!(probes_of(&harness)[0].id, original);
}

#[test]
fn a_jump_placed_with_two_clicks_is_aimed_at_the_second_and_answered() {
    use plumbline_core::check::Hits;
    use plumbline_core::probe::{Launch, ProbeQuery};

    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    harness.key_press(Key::J);
    harness.run_steps(2);
    let view = harness.state().viewport.last_rect;
    click_at(&mut harness, view.center());
    click_at(&mut harness, view.center() + egui::vec2(60.0, 20.0));

    let workbench = harness.state();
    let index = workbench
        .document
        .probes
        .probes
        .iter()
        .position(|p| &*p.id == "jump")
        .expect("a new jump");
    assert_eq!(workbench.selection.probe, Some(index));
    let ProbeQuery::Jump {
        from,
        launch: Launch::Target { to, apex },
        ..
    } = workbench.document.probes.probes[index].query
    else {
        panic!("a jump aimed at the second click")
    };
    // Rising the default 1.2 m above the higher of its two ends (to the millimetre).
    let up = workbench.document.world.up();
    let expected = (to - from).dot(up).max(0.0) + plumbline::app::tools::JUMP_RISE;
    assert!((apex - expected).abs() <= 5e-4, "{apex} vs {expected}");
    let result = &workbench.document.results[index];
    let Hits::Jump(landing) = &result.hits else {
        panic!("a jump's answer")
    };
    // Both ends stand on the level, so the character comes down on something.
    assert_eq!(landing.len(), 1, "{}", result.reason);
    assert_ne!(result.verdict, Verdict::Error, "{}", result.reason);
    harness.get_by_label("Landing");
}

#[test]
fn a_turning_sweep_shows_a_yaw_per_point_and_switching_turns_off_answers_again() {
    use plumbline_core::probe::ProbeQuery;

    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    let index = select_by_id(&mut harness, "beam-turned-through-vehicle-door");
    harness.run_steps(2);
    harness.get_by_label("Edit the question").click();
    harness.run_steps(2);
    for k in 0..3 {
        harness.get_by_label(&format!("yaw {k}"));
    }
    assert_eq!(
        harness.state().document.results[index].verdict,
        Verdict::Pass
    );
    // Held across the whole way, the beam meets the door's jambs.
    harness.get_by_label("turns").click();
    harness.run_steps(3);
    let workbench = harness.state();
    assert!(matches!(
        workbench.document.probes.probes[index].query,
        ProbeQuery::Sweep { turns: None, .. }
    ));
    assert_eq!(workbench.document.results[index].verdict, Verdict::Fail);
}

#[test]
fn a_walk_placed_with_clicks_and_enter_is_walked_and_its_record_shown() {
    use plumbline_core::check::Hits;
    use plumbline_core::probe::ProbeQuery;

    let (_folder, path) = demo_copy();
    let mut harness = harness(&path);
    harness.key_press(Key::W);
    harness.run_steps(2);
    let view = harness.state().viewport.last_rect;
    click_at(&mut harness, view.center());
    click_at(&mut harness, view.center() + egui::vec2(40.0, 10.0));
    harness.key_press(Key::Enter);
    harness.run_steps(2);

    let workbench = harness.state();
    let index = workbench
        .document
        .probes
        .probes
        .iter()
        .position(|p| &*p.id == "walk")
        .expect("a new walk");
    assert!(matches!(
        &workbench.document.probes.probes[index].query,
        ProbeQuery::Walk { path, .. } if path.len() == 2
    ));
    let result = &workbench.document.results[index];
    let Hits::Walk(records) = &result.hits else {
        panic!("a walk's answer")
    };
    assert_eq!(records.len(), 1, "{}", result.reason);
    assert!(records[0].path.len() >= 2, "it took at least a step");
    harness.get_by_label("stopped by");
}
