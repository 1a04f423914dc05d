//! The workbench window (eframe/egui): menus and tools along the top, the probe list on the left, the
//! 3D view in the middle, the inspector on the right and a summary bar along the bottom. Each panel
//! is a small function or type with a `ui` method, so tests drive them headlessly; [`Workbench::ui`]
//! lays them out and applies what they ask for.

pub mod badge;
pub mod capture;
pub mod commands;
pub mod document;
pub mod editor;
pub mod files;
pub mod history;
pub mod inspector;
pub mod plotting;
pub mod probe_list;
pub mod tools;
pub mod viewport;

use std::collections::HashMap;
use std::path::PathBuf;
use std::time::{Duration, Instant};

use eframe::egui;
use egui::{Color32, RichText};
use glam::DVec3;

use crate::view::probe_marks::probe_points;
use capture::Capture;
use commands::{Command, menu_item, tooltip};
use document::Document;
use editor::{Edit, EditorState};
use files::Dialog;
use history::History;
use inspector::{InspectorAction, inspector_ui};
use plumbline_core::check::{Aspect, expectation_from};
use plumbline_core::probe::{Probe, validate_probe};
use probe_list::{ListFilter, probe_list_ui};
use tools::{Authoring, DragMode, Lift, Tool, new_probe};
use viewport::{ViewEvents, Viewport};

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

/// How often the level's files on disk are looked at.
const DISK_CHECK: Duration = Duration::from_secs(2);

/// How long a status message stays.
const MESSAGE_FOR: Duration = Duration::from_secs(8);

/// The whole window's state.
pub struct Workbench {
    /// What is open.
    pub document: Document,
    /// What is selected.
    pub selection: Selection,
    /// The probe list's filters.
    pub filter: ListFilter,
    /// The 3D view.
    pub viewport: Viewport,
    /// Undo and redo.
    pub history: History,
    /// The tool in hand and the points placed with it so far.
    pub tool: Tool,
    placed: Vec<DVec3>,
    /// Height above picked surfaces, per placing tool.
    lifts: HashMap<&'static str, f64>,
    lift_along_normal: bool,
    /// How dragged handles move.
    pub drag_mode: DragMode,
    editor: EditorState,
    shown_cache: Option<((ListFilter, u64), Vec<usize>)>,
    plots: plotting::PlotWorker,
    plot_wanted: bool,
    results_revision: u64,
    scroll_list: bool,
    last_disk_check: Instant,
    /// What changed for each probe (by id) when the level was last reloaded, until dismissed.
    pub changes: HashMap<String, Vec<Aspect>>,
    reload_error: Option<plumbline_core::error::Error>,
    reload_job:
        Option<std::sync::mpsc::Receiver<Result<document::Reloaded, plumbline_core::error::Error>>>,
    /// Recently opened or saved files, newest first.
    pub recent: Vec<PathBuf>,
    /// The question being asked, if any.
    pub dialog: Option<Dialog>,
    message: Option<(String, Instant)>,
    last_autosave: Instant,
    autosaved: Option<u64>,
    closing: bool,
}

impl Workbench {
    /// A workbench on an open document.
    pub fn new(document: Document) -> Workbench {
        let viewport = Viewport::new(&document);
        let mut workbench = Workbench {
            document,
            selection: Selection::default(),
            filter: ListFilter::default(),
            viewport,
            history: History::default(),
            tool: Tool::Select,
            placed: Vec::new(),
            lifts: HashMap::new(),
            lift_along_normal: false,
            drag_mode: DragMode::default(),
            editor: EditorState::default(),
            shown_cache: None,
            plots: plotting::PlotWorker::default(),
            plot_wanted: false,
            results_revision: 1,
            scroll_list: false,
            last_disk_check: Instant::now(),
            changes: HashMap::new(),
            reload_error: None,
            reload_job: None,
            recent: Vec::new(),
            dialog: None,
            message: None,
            last_autosave: Instant::now(),
            autosaved: None,
            closing: false,
        };
        workbench.offer_recovery();
        workbench
    }

    fn replace_document(&mut self, document: Document) {
        self.viewport = Viewport::new(&document);
        self.document = document;
        self.selection = Selection::default();
        self.history.clear();
        self.changes.clear();
        self.reload_job = None;
        self.placed.clear();
        self.plot_wanted = true;
        self.results_revision += 1;
    }

    /// The probes the list shows, in order: recomputed only when the filter or an answer changed
    /// (the filter reads every probe's id, label and first hit).
    pub fn shown(&mut self) -> Vec<usize> {
        let key = (self.filter.clone(), self.results_revision);
        match &self.shown_cache {
            Some((k, shown)) if *k == key => shown.clone(),
            _ => {
                let shown = self.filter.shown(&self.document);
                self.shown_cache = Some((key, shown.clone()));
                shown
            }
        }
    }

    /// True while background work (a clearance plot) is still running.
    pub fn is_busy(&self) -> bool {
        self.plot_wanted || self.plots.is_busy()
    }

    /// Shows a status message in the summary bar.
    pub fn say(&mut self, message: String) {
        self.message = Some((message, Instant::now()));
    }

    /// Selects a probe (and no hit), as a click in the list does: the view frames it.
    pub fn select_probe(&mut self, index: Option<usize>) {
        self.selection = Selection {
            probe: index,
            ..Selection::default()
        };
        self.after_selection(true);
    }

    fn after_selection(&mut self, frame_it: bool) {
        self.plot_wanted = true;
        let Some(index) = self.selection.probe else {
            return;
        };
        if frame_it && let Some(probe) = self.document.probes.probes.get(index) {
            self.viewport
                .frame_points(&probe_points(probe, self.document.results.get(index)));
        }
    }

    /// Replaces every probe as one edit (recorded for undo under `key`), answering what changed.
    pub fn replace_probes(&mut self, key: &str, what: &str, probes: Vec<Probe>) {
        self.history.record(key, what, &self.document.probes.probes);
        self.set_probes(probes);
    }

    fn set_probes(&mut self, probes: Vec<Probe>) {
        self.document.set_probes(probes);
        self.after_probes_changed();
    }

    /// Keeps the selection within the probes and asks for new marks and a new plot.
    fn after_probes_changed(&mut self) {
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
        if let Err(why) = validate_probe(&probe) {
            self.say(why.message);
            return;
        }
        // By position, so that renaming a probe letter by letter stays one step.
        let key = format!("{index}:{field}");
        self.history
            .record(&key, &format!("edit {field}"), &self.document.probes.probes);
        // Only this probe is answered again: a drag edits it every frame.
        self.document.replace_probe(index, probe);
        self.after_probes_changed();
    }

    /// Does what a menu item, button or shortcut asks.
    pub fn run(&mut self, command: Command, ctx: &egui::Context) {
        match command {
            Command::Open => self.ask_open(),
            Command::Save => self.save(),
            Command::SaveAs => self.ask_save_as(),
            Command::Quit => ctx.send_viewport_cmd(egui::ViewportCommand::Close),
            Command::Undo => {
                if let Some(probes) = self.history.undo(&self.document.probes.probes) {
                    self.set_probes(probes);
                }
            }
            Command::Redo => {
                if let Some(probes) = self.history.redo(&self.document.probes.probes) {
                    self.set_probes(probes);
                }
            }
            Command::Duplicate => self.duplicate(),
            Command::Delete => self.delete(),
            Command::ExpectAnswer => self.expect_answers(),
            Command::SelectAll => {
                let shown = self.shown();
                self.selection = Selection::of(shown.first().copied(), shown);
            }
            Command::Tool(tool) => {
                self.tool = tool;
                self.placed.clear();
            }
            Command::FinishPath => self.finish_path(),
            Command::FrameLevel => self.viewport.frame_level(),
            Command::FrameProbe => self.after_selection(true),
            Command::ToggleFly => self.viewport.fly = !self.viewport.fly,
        }
    }

    fn duplicate(&mut self) {
        let chosen = self.selection.all();
        if chosen.is_empty() {
            return;
        }
        let mut probes = self.document.probes.probes.clone();
        let mut copies = Vec::new();
        for &i in &chosen {
            let mut copy = probes[i].clone();
            copy.id = document::unused_id(&probes, &format!("{}-copy", copy.id));
            probes.push(copy);
            copies.push(probes.len() - 1);
        }
        self.replace_probes("duplicate", "duplicate", probes);
        self.history.seal();
        self.selection = Selection::of(copies.first().copied(), copies);
        self.scroll_list = true;
    }

    fn delete(&mut self) {
        let chosen = self.selection.all();
        if chosen.is_empty() {
            return;
        }
        let probes = self
            .document
            .probes
            .probes
            .iter()
            .enumerate()
            .filter(|(i, _)| !chosen.contains(i))
            .map(|(_, p)| p.clone())
            .collect();
        self.selection = Selection::default();
        self.replace_probes("delete", "delete", probes);
        self.history.seal();
        self.say(format!(
            "Deleted {} probe(s); Ctrl+Z brings them back.",
            chosen.len()
        ));
    }

    /// Sets each selected probe's expectation to what it shows now.
    fn expect_answers(&mut self) {
        let chosen = self.selection.all();
        let mut probes = self.document.probes.probes.clone();
        let mut set = 0;
        for &i in &chosen {
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

    fn lift(&self) -> Lift {
        Lift {
            height: self
                .lifts
                .get(self.tool.name())
                .copied()
                .unwrap_or(self.tool.default_lift()),
            along_normal: self.lift_along_normal,
        }
    }

    fn place(&mut self, point: DVec3) {
        self.placed.push(point);
        if self.tool.clicks() == Some(self.placed.len()) {
            self.finish_path();
        }
    }

    /// Turns the placed points into a new probe, selected.
    fn finish_path(&mut self) {
        let base = self.tool.name().to_lowercase();
        let id = document::unused_id(&self.document.probes.probes, &base);
        let Some(probe) = new_probe(self.tool, id, &self.placed) else {
            return;
        };
        self.placed.clear();
        let mut probes = self.document.probes.probes.clone();
        probes.push(probe);
        let what = format!("new {}", self.tool.name().to_lowercase());
        self.replace_probes("new", &what, probes);
        self.history.seal();
        self.selection = Selection::one(self.document.probes.probes.len() - 1);
        self.after_selection(false);
        self.scroll_list = true;
    }

    /// Lays out and runs every panel for one frame.
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        if ctx.input(|i| i.viewport().close_requested()) {
            self.close_requested(&ctx);
        }
        self.check_disk(&ctx);
        self.shortcuts(&ctx);
        self.autosave();
        self.plots.poll();
        let shown = self.shown();

        egui::Panel::top("menus").show(ui, |ui| self.menu_bar(ui));
        egui::Panel::top("toolbar").show(ui, |ui| self.toolbar(ui));
        egui::Panel::bottom("summary").show(ui, |ui| self.summary_bar(ui));
        egui::Panel::left("probes")
            .resizable(true)
            .default_size(310.0)
            .min_size(220.0)
            .show(ui, |ui| {
                ui.add_space(4.0);
                ui.heading("Probes");
                let scroll = std::mem::take(&mut self.scroll_list);
                let picked = probe_list_ui(
                    ui,
                    &mut self.filter,
                    &self.document,
                    &shown,
                    &mut self.selection,
                    &self.changes,
                    scroll,
                );
                if picked {
                    self.after_selection(self.selection.others.is_empty());
                }
            });
        egui::Panel::right("inspector")
            .resizable(true)
            .default_size(400.0)
            .min_size(280.0)
            .show(ui, |ui| {
                ui.add_space(4.0);
                let mut action = None;
                egui::ScrollArea::vertical()
                    .auto_shrink([false, false])
                    .show(ui, |ui| {
                        action = inspector_ui(
                            ui,
                            &self.document,
                            &mut self.selection,
                            &mut self.editor,
                            self.plots.plot(),
                            &self.changes,
                        );
                    });
                match action {
                    Some(InspectorAction::Edit(index, edit)) => {
                        let Edit { field, probe } = *edit;
                        self.edit_probe(index, &field, probe)
                    }
                    Some(InspectorAction::Run(command)) => self.run(command, &ctx),
                    Some(InspectorAction::Bulk(what, probes)) => {
                        self.replace_probes("bulk", &what, probes);
                        self.history.seal();
                    }
                    None => {}
                }
            });
        egui::CentralPanel::no_frame().show(ui, |ui| {
            let authoring = Authoring {
                tool: self.tool,
                placed: self.placed.clone(),
                lift: self.lift(),
                drag_mode: self.drag_mode,
            };
            let scene = viewport::Scene {
                document: &self.document,
                results_revision: self.results_revision,
                shown: &shown,
                selection: &self.selection,
                authoring: &authoring,
                changes: &self.changes,
            };
            let events = self.viewport.ui(ui, &scene);
            self.view_events(events, &shown);
        });
        self.dialog_ui(&ctx);
        // One measurement at a time; changes made meanwhile are measured when it is done.
        if self.plot_wanted && !self.plots.is_busy() {
            self.plot_wanted = false;
            self.plots
                .request(&self.document, self.selection.probe, &ctx);
        }
        // A gesture ends when nothing is being dragged or typed into.
        if ctx.dragged_id().is_none() && ctx.memory(|m| m.focused().is_none()) {
            self.history.seal();
        }
    }

    fn view_events(&mut self, events: ViewEvents, shown: &[usize]) {
        if let Some(picked) = events.clicked_probe {
            let before = self.selection.clone();
            match picked {
                Some(i) if events.modifiers.command => self.selection.toggle(i),
                Some(i) if events.modifiers.shift => self.selection.extend_to(i, shown),
                Some(i) => self.selection = Selection::one(i),
                None if events.modifiers.any() => {}
                None => self.selection = Selection::default(),
            }
            if self.selection != before {
                self.scroll_list = true;
                self.after_selection(false);
            }
        }
        if let Some(point) = events.placed {
            self.place(point);
        }
        if events.finish {
            self.finish_path();
        }
        if let (Some((k, to)), Some(i)) = (events.moved, self.selection.single()) {
            let mut probe = self.document.probes.probes[i].clone();
            if let Some(p) = probe.query.point_mut(k) {
                *p = to;
                self.edit_probe(i, &format!("point {k}"), probe);
            }
        }
    }

    fn menu_bar(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        let mut chosen = None;
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                for command in [Command::Open, Command::Save, Command::SaveAs] {
                    if menu_item(ui, command, true) {
                        chosen = Some(command);
                    }
                }
                ui.menu_button("Open recent", |ui| {
                    if self.recent.is_empty() {
                        ui.label("Nothing yet");
                    }
                    for path in self.recent.clone() {
                        if ui.button(path.display().to_string()).clicked()
                            && let Err(e) = self.open(&path)
                        {
                            self.say(e);
                        }
                    }
                });
                ui.separator();
                if menu_item(ui, Command::Quit, true) {
                    chosen = Some(Command::Quit);
                }
            });
            ui.menu_button("Edit", |ui| {
                let undo = self.history.undo_name().map(|w| format!("Undo {w}"));
                let redo = self.history.redo_name().map(|w| format!("Redo {w}"));
                for (command, name) in [(Command::Undo, undo), (Command::Redo, redo)] {
                    let shortcut = command
                        .shortcut()
                        .map(|s| ctx.format_shortcut(&s))
                        .unwrap_or_default();
                    let text = name.clone().unwrap_or_else(|| command.name().to_string());
                    if ui
                        .add_enabled(
                            name.is_some(),
                            egui::Button::new(text).shortcut_text(shortcut),
                        )
                        .clicked()
                    {
                        chosen = Some(command);
                    }
                }
                ui.separator();
                let any = !self.selection.is_empty();
                for command in [
                    Command::Duplicate,
                    Command::Delete,
                    Command::ExpectAnswer,
                    Command::SelectAll,
                ] {
                    if menu_item(ui, command, any || command == Command::SelectAll) {
                        chosen = Some(command);
                    }
                }
            });
            ui.menu_button("Probe", |ui| {
                for tool in Tool::PLACING {
                    if menu_item(ui, Command::Tool(tool), true) {
                        chosen = Some(Command::Tool(tool));
                    }
                }
                if menu_item(ui, Command::FinishPath, self.tool == Tool::Sweep) {
                    chosen = Some(Command::FinishPath);
                }
            });
            ui.menu_button("View", |ui| {
                for command in [Command::FrameLevel, Command::FrameProbe, Command::ToggleFly] {
                    if menu_item(ui, command, true) {
                        chosen = Some(command);
                    }
                }
            });
        });
        if let Some(command) = chosen {
            self.run(command, &ctx);
        }
    }

    fn toolbar(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        ui.horizontal(|ui| {
            let dirty = if self.document.is_dirty() { " •" } else { "" };
            ui.label(RichText::new(format!("{}{dirty}", self.document_name())).strong())
                .on_hover_text(if dirty.is_empty() {
                    "Saved"
                } else {
                    "Unsaved changes (a recovery copy is kept every 10 s)"
                });
            ui.separator();
            for tool in [
                Tool::Select,
                Tool::Ray,
                Tool::Sweep,
                Tool::Closest,
                Tool::Overlap,
            ] {
                let selected = self.tool == tool;
                if ui
                    .selectable_label(selected, tool.name())
                    .on_hover_text(format!(
                        "{}\n{}",
                        tool.help(),
                        tooltip(&ctx, Command::Tool(tool))
                    ))
                    .clicked()
                {
                    self.run(Command::Tool(tool), &ctx);
                }
            }
            ui.separator();
            if self.tool == Tool::Select {
                let label = ui.label("Drag handles");
                egui::ComboBox::from_id_salt("drag-mode")
                    .selected_text(self.drag_mode.name())
                    .show_ui(ui, |ui| {
                        for mode in DragMode::ALL {
                            ui.selectable_value(&mut self.drag_mode, mode, mode.name());
                        }
                    })
                    .response
                    .labelled_by(label.id)
                    .on_hover_text(
                        "How the white handles of the selected probe move; over surfaces, a \
                         point keeps its height above the level",
                    );
            }
            if self.tool != Tool::Select {
                let key = self.tool.name();
                let mut height = self.lift().height;
                let label = ui.label("Lift");
                if ui
                    .add(
                        egui::DragValue::new(&mut height)
                            .speed(0.01)
                            .range(-100.0..=100.0)
                            .suffix(" m"),
                    )
                    .labelled_by(label.id)
                    .on_hover_text("How far above the picked surface points are placed")
                    .changed()
                {
                    self.lifts.insert(key, height);
                }
                egui::ComboBox::from_id_salt("lift-along")
                    .selected_text(if self.lift_along_normal {
                        "along the normal"
                    } else {
                        "along up"
                    })
                    .show_ui(ui, |ui| {
                        ui.selectable_value(&mut self.lift_along_normal, false, "along up");
                        ui.selectable_value(&mut self.lift_along_normal, true, "along the normal");
                    })
                    .response
                    .labelled_by(label.id);
            }
            if self.tool == Tool::Sweep && !self.placed.is_empty() {
                ui.label(format!("{} points", self.placed.len()));
                if ui
                    .add_enabled(self.placed.len() >= 2, egui::Button::new("End path"))
                    .on_hover_text(tooltip(&ctx, Command::FinishPath))
                    .clicked()
                {
                    self.finish_path();
                }
            }
            ui.separator();
            if ui
                .button("Frame level")
                .on_hover_text(tooltip(&ctx, Command::FrameLevel))
                .clicked()
            {
                self.viewport.frame_level();
            }
            ui.toggle_value(&mut self.viewport.fly, "Fly")
                .on_hover_text(
                    "Fly mode (G): drag to look around, W/A/S/D to move, Q/E down and up.\n\
                 Otherwise drag orbits, right or middle drag pans, the wheel zooms.",
                );
        });
    }

    fn shortcuts(&mut self, ctx: &egui::Context) {
        if self.dialog.is_some() {
            return;
        }
        let typing = ctx.egui_wants_keyboard_input();
        let flying = self.viewport.fly;
        for command in Command::WITH_SHORTCUTS {
            if typing && !command.works_while_typing()
                || flying && command.is_bare_key() && command != Command::ToggleFly
            {
                continue;
            }
            let Some(shortcut) = command.shortcut() else {
                continue;
            };
            if ctx.input_mut(|i| i.consume_shortcut(&shortcut)) {
                self.run(command, ctx);
            }
        }
    }

    fn summary_bar(&mut self, ui: &mut egui::Ui) {
        let summary = self.document.summary();
        ui.horizontal(|ui| {
            for (verdict, count) in [
                (plumbline_core::check::Verdict::Pass, summary.pass),
                (plumbline_core::check::Verdict::Fail, summary.fail),
                (plumbline_core::check::Verdict::Error, summary.error),
                (plumbline_core::check::Verdict::Unchecked, summary.unchecked),
            ] {
                badge::badge(ui, verdict, &format!(" {count}"));
                ui.add_space(6.0);
            }
            ui.separator();
            let level = self
                .document
                .level_path
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default();
            ui.label(format!(
                "level {level} · {} objects · {} mesh triangles",
                self.document.level.objects.len(),
                self.document.level.triangle_count()
            ));
            ui.separator();
            let warn = Color32::from_rgb(240, 228, 66);
            if let Some(e) = &self.reload_error {
                ui.label(
                    RichText::new("The level on disk cannot be read")
                        .color(warn)
                        .strong(),
                )
                .on_hover_text(format!(
                    "{e}\nThe answers shown are for the level as it was."
                ));
            } else if !self.changes.is_empty() {
                ui.label(
                    RichText::new(format!(
                        "Level reloaded: {} probe(s) changed",
                        self.changes.len()
                    ))
                    .color(warn)
                    .strong(),
                );
                if ui.button("Dismiss").clicked() {
                    self.changes.clear();
                    self.results_revision += 1;
                }
            } else {
                ui.label("Answers match the level on disk")
                    .on_hover_text(format!("level digest {}", self.document.level_digest));
            }
            let diagnostics = &self.document.diagnostics;
            if !diagnostics.is_empty() {
                ui.separator();
                let lines: Vec<String> = diagnostics.iter().map(|d| d.to_string()).collect();
                ui.label(format!("{} load warnings", diagnostics.len()))
                    .on_hover_text(lines.join("\n"));
            }
            if let Some((message, since)) = &self.message {
                if since.elapsed() < MESSAGE_FOR {
                    ui.separator();
                    ui.label(RichText::new(message).italics());
                } else {
                    self.message = None;
                }
            }
        });
    }

    /// Reloads the level when its files change on disk, answers every probe again and keeps what
    /// changed to show until dismissed.
    fn check_disk(&mut self, ctx: &egui::Context) {
        if let Some(job) = &self.reload_job {
            match job.try_recv() {
                Ok(loaded) => {
                    self.reload_job = None;
                    match loaded {
                        Ok(reloaded) => {
                            let changed = self.document.apply_reload(reloaded);
                            self.after_reload(changed);
                        }
                        Err(e) => self.reload_error = Some(e),
                    }
                }
                Err(std::sync::mpsc::TryRecvError::Empty) => {}
                Err(std::sync::mpsc::TryRecvError::Disconnected) => self.reload_job = None,
            }
        } else if self.last_disk_check.elapsed() >= DISK_CHECK {
            self.last_disk_check = Instant::now();
            if self.document.level_changed_on_disk() {
                // Loading a big level takes seconds: in the background, saying so meanwhile.
                self.say(
                    "The level changed on disk: reloading it and answering every probe…".into(),
                );
                let (send, receive) = std::sync::mpsc::channel();
                let path = self.document.level_path.clone();
                let probes = self.document.probes.probes.clone();
                let wake = ctx.clone();
                std::thread::spawn(move || {
                    let _ = send.send(document::Reloaded::load(path, probes));
                    wake.request_repaint();
                });
                self.reload_job = Some(receive);
            }
        }
        ctx.request_repaint_after(DISK_CHECK);
    }

    fn after_reload(&mut self, changed: Vec<(usize, Vec<Aspect>)>) {
        self.reload_error = None;
        self.message = None;
        self.changes = changed
            .into_iter()
            .map(|(i, aspects)| (self.document.probes.probes[i].id.clone(), aspects))
            .collect();
        self.viewport.set_level(&self.document);
        self.results_revision += 1;
        self.plot_wanted = true;
    }
}

/// How the window is started from the command line.
#[derive(Debug, Clone, Default)]
pub struct WindowOptions {
    /// Write a PNG of the window after the first complete frame, then exit.
    pub screenshot: Option<PathBuf>,
    /// Inner window size in pixels.
    pub size: Option<[u32; 2]>,
    /// Draw this many frames of each kind, print the frame times, then exit.
    pub bench_frames: Option<usize>,
    /// The id of a probe to select at the start.
    pub select: Option<String>,
}

/// Where the recent files are kept in the window's saved state.
const RECENT_KEY: &str = "recent-files";

struct WorkbenchApp {
    workbench: Workbench,
    capture: Capture,
}

impl eframe::App for WorkbenchApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.capture.before_frame(ui.ctx(), &mut self.workbench);
        self.workbench.ui(ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        if let Ok(text) = serde_json::to_string(&self.workbench.recent) {
            storage.set_string(RECENT_KEY, text);
        }
    }
}

/// Opens the window on a probe set or level and runs until it is closed.
pub fn run(path: &std::path::Path, options: WindowOptions) -> Result<(), String> {
    // Opening a big level takes a few seconds before the window can appear: say what is happening.
    let started = Instant::now();
    eprintln!("plumbline: opening {} …", path.display());
    let document = Document::open(path).map_err(|e| e.to_string())?;
    eprintln!(
        "plumbline: {} objects ({} mesh triangles) loaded and {} probes answered in {:.1} s",
        document.level.objects.len(),
        document.level.triangle_count(),
        document.probes.probes.len(),
        started.elapsed().as_secs_f64()
    );
    let selected = match &options.select {
        None => None,
        Some(id) => Some(
            document
                .probes
                .probes
                .iter()
                .position(|p| p.id == *id)
                .ok_or_else(|| format!("{}: no probe with id \"{id}\"", path.display()))?,
        ),
    };
    let capture = Capture::new(&options);
    let outcome = capture.outcome();
    let size = options.size.unwrap_or([1440, 860]);
    let unattended = options.screenshot.is_some() || options.bench_frames.is_some();
    let mut native = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_title("Plumbline")
            .with_inner_size([size[0] as f32, size[1] as f32])
            .with_min_inner_size([720.0, 480.0]),
        renderer: eframe::Renderer::Glow,
        depth_buffer: 24,
        multisampling: 0,
        // A screenshot or benchmark must not move the user's saved window, nor take its size from it.
        persist_window: !unattended && options.size.is_none(),
        ..Default::default()
    };
    // Frame times of an unattended benchmark must not include waiting for the display.
    native.glow_options.vsync = !unattended;
    // An unattended run neither reads nor leaves saved state: a fresh file of its own, removed after.
    let scratch =
        std::env::temp_dir().join(format!("plumbline-unattended-{}.ron", std::process::id()));
    if unattended {
        native.persistence_path = Some(scratch.clone());
    }
    let opened = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    eframe::run_native(
        "plumbline",
        native,
        Box::new(move |cc| {
            let mut workbench = Workbench::new(document);
            if let Some(storage) = cc.storage
                && let Some(text) = storage.get_string(RECENT_KEY)
            {
                workbench.recent = serde_json::from_str(&text).unwrap_or_default();
            }
            workbench.recent.retain(|p| *p != opened);
            workbench.recent.insert(0, opened);
            if unattended {
                workbench.dialog = None;
            }
            if selected.is_some() {
                workbench.select_probe(selected);
                workbench.scroll_list = true;
            }
            Ok(Box::new(WorkbenchApp { workbench, capture }))
        }),
    )
    .map_err(|e| {
        format!(
            "cannot open the window: {e} (without a display, `plumbline check` runs the probes)"
        )
    })?;
    if unattended {
        let _ = std::fs::remove_file(&scratch);
    }
    outcome.result()
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
