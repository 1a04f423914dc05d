//! The workbench's panels driven headlessly by widget label (egui_kittest): the probe list, its
//! filters, the inspector and its hit rows. No window, GPU or file dialog is involved.

use std::path::PathBuf;

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use plumbline::app::Workbench;
use plumbline::app::document::Document;
use plumbline_core::check::Hits;
use plumbline_core::demo::files;

fn demo() -> Document {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("scenes")
        .join(files::PROBES);
    Document::open(&path, Default::default()).expect("the demo opens")
}

fn harness() -> Harness<'static, Workbench> {
    let mut harness = Harness::builder()
        .with_size([1400.0, 900.0])
        .build_ui_state(
            |ui, workbench: &mut Workbench| workbench.ui(ui),
            Workbench::new(demo()),
        );
    harness.run_steps(2);
    harness
}

/// A probe near the top of the list (so its row is on screen) that has hits.
fn probe_with_hits(workbench: &Workbench) -> (usize, String) {
    let index = workbench.document.results[..10]
        .iter()
        .position(|r| !r.hits.is_empty())
        .expect("one of the first ten demo probes is blocked");
    (
        index,
        workbench.document.probes.probes[index].id.to_string(),
    )
}

#[test]
fn selecting_a_probe_in_the_list_shows_its_hits_in_the_inspector() {
    let mut harness = harness();
    harness.get_by_label("Not as expected");
    let (index, id) = probe_with_hits(harness.state());
    harness
        .get_by_label_contains(&format!("pass  {id}"))
        .click();
    harness.run_steps(2);

    let workbench = harness.state();
    assert_eq!(workbench.selection.probe, Some(index));
    let Hits::Ray(hits) = &workbench.document.results[index].hits else {
        panic!("{id} is a ray probe");
    };
    assert!(!hits.is_empty());
    harness.get_by_label(&format!("Hits ({})", hits.len()));
    for hit in hits {
        assert!(
            !harness
                .query_all_by_label(&hit.object)
                .collect::<Vec<_>>()
                .is_empty()
        );
        harness.get_by_label(&format!("{:.3}", hit.distance));
    }
    assert!(harness.query_by_label("Not as expected").is_none());
}

#[test]
fn with_nothing_selected_the_overview_links_the_failures_and_highlights_a_tag() {
    let mut harness = harness();
    // The counts, as in the summary bar.
    assert_eq!(harness.query_all_by_label("pass 60").count(), 2);
    harness.get_by_label("spawns-clear/spawn-pad-hedge").click();
    harness.run_steps(2);
    let workbench = harness.state();
    let picked = workbench.selection.probe.expect("the failure is selected");
    assert_eq!(
        &*workbench.document.probes.probes[picked].id,
        "spawns-clear/spawn-pad-hedge"
    );
    harness.state_mut().select_probe(None);
    harness.run_steps(2);
    harness.get_by_label("lookout (5)").click();
    harness.run_steps(2);
    assert_eq!(harness.state().highlight_tag.as_deref(), Some("lookout"));
    harness.get_by_label("lookout (5)").click();
    harness.run_steps(2);
    assert_eq!(harness.state().highlight_tag, None);
}

#[test]
fn clicking_a_hit_row_marks_that_hit() {
    let mut harness = harness();
    let (_, id) = probe_with_hits(harness.state());
    harness
        .get_by_label_contains(&format!("pass  {id}"))
        .click();
    harness.run_steps(2);
    harness.get_by_label("1").click();
    harness.run_steps(2);
    assert_eq!(harness.state().selection.hit, Some(0));
}

#[test]
fn the_text_filter_narrows_the_list() {
    let mut harness = harness();
    let total = harness.state().document.probes.probes.len();
    harness.get_by_label(&format!("{total} of {total} probes"));

    let field = harness.get_by_role(eframe::egui::accesskit::Role::TextInput);
    field.focus();
    harness.run_steps(1);
    harness
        .get_by_role(eframe::egui::accesskit::Role::TextInput)
        .type_text("culvert");
    harness.run_steps(2);
    let shown = harness.state().filter.shown(&harness.state().document);
    assert!(!shown.is_empty() && shown.len() < total);
    harness.get_by_label(&format!("{} of {total} probes", shown.len()));
    harness.get_by_label_contains("crawl-through-culvert");
    assert!(
        harness
            .query_by_label_contains("gate-sees-warehouse-door")
            .is_none()
    );
}

#[test]
fn the_kind_and_verdict_filters_narrow_the_list() {
    let mut harness = harness();
    let document = &harness.state().document;
    let total = document.probes.probes.len();
    let overlaps = document
        .probes
        .probes
        .iter()
        .filter(|p| p.query.kind().name() == "overlap")
        .count();
    assert!(overlaps > 0 && overlaps < total);

    harness.get_by_label("Kind").click();
    harness.run_steps(2);
    harness.get_by_label("overlap").click();
    harness.run_steps(2);
    harness.get_by_label(&format!("{overlaps} of {total} probes"));

    harness.get_by_label("Verdict").click();
    harness.run_steps(2);
    harness.get_by_label("FAIL").click();
    harness.run_steps(2);
    // The failing overlaps: the spawn by the drums and the spawn pad in the hedge.
    harness.get_by_label(&format!("2 of {total} probes"));
    harness.get_by_label_contains("FAIL  spawn-by-drums");
    harness.get_by_label_contains("FAIL  spawns-clear/spawn-pad-hedge");
}

#[test]
fn picking_a_probe_frames_it_in_the_view_and_clicking_it_in_the_view_finds_it_in_the_list() {
    use plumbline::view::probe_marks::start_point;

    let mut harness = harness();
    let before = harness.state().viewport.camera;
    let (index, id) = probe_with_hits(harness.state());
    harness
        .get_by_label_contains(&format!("pass  {id}"))
        .click();
    harness.run_steps(2);
    let camera = harness.state().viewport.camera;
    assert_ne!(camera.target, before.target, "the view moved to the probe");
    assert!(camera.distance < before.distance, "and came closer");
    let probe = &harness.state().document.probes.probes[index];
    let seen = harness.state().viewport.to_screen(
        harness.state().viewport.last_rect,
        start_point(&probe.query, None),
    );
    assert!(seen.is_some_and(|p| harness.state().viewport.last_rect.contains(p)));

    // Back to the whole level; the failing probe is far down the list, out of sight.
    harness.get_by_label("Frame level").click();
    harness.run_steps(2);
    assert!(
        harness
            .query_by_label_contains("FAIL  spawn-by-drums")
            .is_none()
    );
    let workbench = harness.state();
    let target = workbench
        .document
        .probes
        .probes
        .iter()
        .position(|p| &*p.id == "spawn-by-drums")
        .unwrap();
    let at = workbench
        .viewport
        .to_screen(
            workbench.viewport.last_rect,
            start_point(&workbench.document.probes.probes[target].query, None),
        )
        .expect("the failing probe is in view");
    crate::support::click_at(&mut harness, at);
    harness.run_steps(1);
    assert_eq!(harness.state().selection.probe, Some(target));
    harness.get_by_label_contains("FAIL  spawn-by-drums");
}

#[test]
fn an_idle_window_asks_for_no_frames() {
    // The level's files are watched, not looked at on a timer: once the demo is answered and
    // drawn, nothing asks for another frame until something happens.
    let mut harness = harness();
    harness
        .try_run()
        .expect("the window settles within the harness's step limit");
    harness.step();
    assert!(!harness.ctx.has_requested_repaint());
}

/// The 3D view keeps its size whichever probe is inspected: a long answer in the inspector wraps
/// instead of widening its panel (which would shrink the view and redraw the whole level).
#[test]
fn inspecting_any_probe_leaves_the_view_its_size() {
    let mut harness = harness();
    harness.state_mut().selection.probe = Some(0);
    harness.run_steps(2);
    let view = harness.state().viewport.last_rect;
    for index in 0..harness.state().document.probes.probes.len() {
        harness.state_mut().selection.probe = Some(index);
        harness.run_steps(2);
        let id = harness.state().document.probes.probes[index].id.clone();
        assert_eq!(harness.state().viewport.last_rect, view, "inspecting {id}");
    }
}
