//! One frame of the window: the panels laid out around the 3D view, what they ask for applied, the
//! keyboard shortcuts, and the background work polled.

use eframe::egui;

use super::commands::Command;
use super::editor::Edit;
use super::inspector::{InspectorAction, inspector_ui};
use super::probe_list::probe_list_ui;
use super::tools::Authoring;
use super::viewport::{self, ViewEvents};
use super::{Selection, Workbench};

impl Workbench {
    /// Does what a menu item, button or shortcut asks.
    pub fn perform(&mut self, command: Command, ctx: &egui::Context) {
        match command {
            Command::Open => self.ask_open(),
            Command::Save => self.save(),
            Command::SaveAs => self.ask_save_as(),
            Command::Quit => ctx.send_viewport_cmd(egui::ViewportCommand::Close),
            Command::Undo => {
                if let Some(state) = self.history.undo(self.document.written()) {
                    self.restore(state);
                }
            }
            Command::Redo => {
                if let Some(state) = self.history.redo(self.document.written()) {
                    self.restore(state);
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
            Command::ToggleDimming => self.viewport.dim_others = !self.viewport.dim_others,
            Command::ToggleLegend => self.viewport.legend = !self.viewport.legend,
            Command::Rules => self.toggle_rules(),
            Command::Lint => self.toggle_lint(ctx),
        }
    }

    /// Lays out and runs every panel for one frame.
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        if ctx.input(|i| i.viewport().close_requested()) {
            self.close_requested(&ctx);
        }
        self.check_disk(&ctx);
        self.shortcuts(&ctx);
        self.autosave(&ctx);
        self.plots.poll();
        self.poll_answers(&ctx);
        let shown = self.shown();
        // Before the view: a finding picked now is framed and drawn in this frame.
        self.lint_window(&ctx);

        let frame = bare_panel(ui.style());
        egui::Panel::top("menus")
            .frame(frame)
            .show(ui, |ui| self.menu_bar(ui));
        egui::Panel::top("toolbar")
            .frame(frame)
            .show(ui, |ui| self.toolbar(ui));
        egui::Panel::bottom("summary")
            .frame(frame)
            .show(ui, |ui| self.summary_bar(ui));
        egui::Panel::left("probes")
            .frame(frame)
            .resizable(true)
            .default_size(310.0)
            .min_size(220.0)
            .show(ui, |ui| {
                ui.scope_builder(panel_colour_known(ui.style()), |ui| {
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
            });
        egui::Panel::right("inspector")
            .frame(frame)
            .resizable(true)
            .default_size(400.0)
            .min_size(280.0)
            .show(ui, |ui| {
                ui.scope_builder(panel_colour_known(ui.style()), |ui| {
                    ui.add_space(4.0);
                    let mut action = None;
                    // Both ways: text wraps to the panel, and a table wider than it scrolls
                    // instead of widening the panel (which would resize the 3D view and redraw the
                    // whole level whenever the inspected probe changes).
                    egui::ScrollArea::both()
                        .auto_shrink([false, false])
                        .show(ui, |ui| {
                            action = inspector_ui(
                                ui,
                                &self.document,
                                &mut self.selection,
                                &mut self.editor,
                                self.plots.plot(),
                                &self.changes,
                                self.highlight_tag.as_deref(),
                            );
                        });
                    if let Some(action) = action {
                        self.inspector_action(action, &ctx);
                    }
                });
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
                finding: self.lint.finding(),
                highlight_tag: self.highlight_tag.as_deref(),
            };
            let events = self.viewport.ui(ui, &scene);
            self.view_events(events, &shown);
        });
        self.rules_window(&ctx);
        self.dialog_ui(&ctx);
        // One measurement at a time; changes made meanwhile are measured when it is done.
        if self.plot_wanted && !self.plots.is_busy() {
            self.plot_wanted = false;
            self.plots
                .request(&self.document, self.selection.probe, &ctx);
        }
        // Answers owed by this frame's edits start now.
        self.poll_answers(&ctx);
        // A gesture ends when nothing is being dragged or typed into.
        if ctx.dragged_id().is_none() && ctx.memory(|m| m.focused().is_none()) {
            self.history.seal();
        }
    }

    pub(super) fn view_events(&mut self, events: ViewEvents, shown: &[usize]) {
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

    pub(super) fn shortcuts(&mut self, ctx: &egui::Context) {
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
                self.perform(command, ctx);
            }
        }
    }

    /// Does what the inspector asked for this frame.
    fn inspector_action(&mut self, action: InspectorAction, ctx: &egui::Context) {
        match action {
            InspectorAction::Edit(index, edit) => {
                let Edit { field, probe } = *edit;
                self.edit_probe(index, &field, probe)
            }
            InspectorAction::Run(command) => self.perform(command, ctx),
            InspectorAction::Bulk(what, probes) => {
                self.replace_probes("bulk", &what, probes);
                self.history.seal();
            }
            InspectorAction::Select(index) => {
                self.select_probe(Some(index));
                self.scroll_list = true;
            }
            InspectorAction::Highlight(tag) => self.highlight_tag = tag,
            InspectorAction::AnswerAgain(index) => {
                self.document.answer_again(index);
                self.results_revision += 1;
            }
        }
    }
}

/// A panel's frame without its fill: the window is cleared to the panels' colour
/// (`WorkbenchApp::clear_color`), so on a CPU rasteriser the panels' pixels are not filled a
/// second time.
fn bare_panel(style: &egui::Style) -> egui::Frame {
    egui::Frame::side_top_panel(style).fill(egui::Color32::TRANSPARENT)
}

/// A child Ui that knows it stands on the panels' colour without painting it, so that what reads
/// the background from the Ui stack (the fades at a scroll area's ends) finds it.
fn panel_colour_known(style: &egui::Style) -> egui::UiBuilder {
    let frame = egui::Frame::new().fill(style.visuals.panel_fill);
    egui::UiBuilder::new().ui_stack_info(egui::UiStackInfo::default().with_frame(frame))
}
