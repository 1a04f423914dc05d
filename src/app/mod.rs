//! The workbench window (eframe/egui): menus and tools along the top, the probe list on the left, the
//! 3D view in the middle, the inspector on the right and a summary bar along the bottom.
//!
//! [`Workbench`] keeps the window's state; each panel and dialog is a small function or `impl
//! Workbench` block in a file of its own that borrows it ([`menus`], [`toolbar`], [`probe_list`],
//! [`inspector`], [`summary_bar`], [`dialogs`], [`rules_panel`], [`lint_panel`], [`viewport`]), so
//! tests drive them headlessly.
//! [`frame`] lays them out for one frame; [`editing`] is the one way probes change; [`launch`]
//! starts the window.

pub mod answering;
pub mod badge;
pub mod capture;
pub mod commands;
pub mod dialogs;
pub mod disk_watch;
pub mod document;
pub mod editing;
pub mod editor;
pub mod files;
pub mod frame;
pub mod history;
pub mod hit_table;
pub mod inspector;
pub mod jobs;
mod launcher;
pub mod level_answers;
pub mod lint_panel;
pub mod menus;
pub mod overview;
pub mod plotting;
pub mod probe_list;
pub mod reload;
pub mod rules_panel;
mod selection;
pub mod summary_bar;
pub mod toolbar;
pub mod tools;
pub mod viewport;

use std::collections::HashMap;
use std::path::PathBuf;
use std::time::Instant;

use glam::DVec3;

use crate::view::probe_marks::probe_points;
use dialogs::Dialog;
use document::{Document, Reloaded};
use editor::EditorState;
use history::History;
use jobs::Background;
use plumbline_core::check::Aspect;
use plumbline_core::error::Error;
use probe_list::ListFilter;
use tools::{DragMode, Tool};
use viewport::Viewport;

pub use launcher::{WindowOptions, launch};
pub use selection::Selection;

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
    pub history: History<document::Written>,
    /// The tool in hand and the points placed with it so far.
    pub tool: Tool,
    placed: Vec<DVec3>,
    /// Height above picked surfaces, per placing tool.
    lifts: HashMap<Tool, f64>,
    lift_along_normal: bool,
    /// How dragged handles move.
    pub drag_mode: DragMode,
    editor: EditorState,
    shown_cache: Option<((ListFilter, u64), Vec<usize>)>,
    plots: plotting::PlotWorker,
    plot_wanted: bool,
    answers: answering::BackgroundAnswers,
    results_revision: u64,
    scroll_list: bool,
    disk: disk_watch::DiskWatch,
    /// What changed for each probe (by id) when the level was last reloaded, until dismissed.
    pub changes: HashMap<String, Vec<Aspect>>,
    reload_error: Option<Error>,
    reload: Background<Result<Reloaded, Error>>,
    /// Recently opened or saved files, newest first.
    pub recent: Vec<PathBuf>,
    /// The question being asked, if any.
    pub dialog: Option<Dialog>,
    /// The rules window, while it is open.
    pub rules_draft: Option<rules_panel::RulesDraft>,
    /// The level lint window.
    pub lint: lint_panel::LintPanel,
    /// The tag whose objects the view highlights (picked in the overview).
    pub highlight_tag: Option<String>,
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
            answers: answering::BackgroundAnswers::default(),
            results_revision: 1,
            scroll_list: false,
            disk: disk_watch::DiskWatch::default(),
            changes: HashMap::new(),
            reload_error: None,
            reload: Background::default(),
            recent: Vec::new(),
            dialog: None,
            rules_draft: None,
            lint: lint_panel::LintPanel::default(),
            highlight_tag: None,
            message: None,
            last_autosave: Instant::now(),
            autosaved: None,
            closing: false,
        };
        workbench.offer_recovery();
        workbench
    }

    pub(super) fn replace_document(&mut self, document: Document) {
        self.viewport = Viewport::new(&document);
        self.document = document;
        self.selection = Selection::default();
        self.history.clear();
        self.changes.clear();
        self.reload.cancel();
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

    /// True while background work (a clearance plot, a lint run, a reach map) is still running.
    pub fn is_busy(&self) -> bool {
        self.plot_wanted
            || self.plots.is_busy()
            || self.lint.is_running()
            || self.answers.is_running()
            || self.document.is_owing()
    }

    /// Takes in answers made in the background and starts the next one owed.
    fn poll_answers(&mut self, ctx: &eframe::egui::Context) {
        if self.answers.poll(&mut self.document, ctx) {
            self.results_revision += 1;
            self.plot_wanted = true;
            ctx.request_repaint();
        }
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

    pub(super) fn after_selection(&mut self, frame_it: bool) {
        self.plot_wanted = true;
        let Some(index) = self.selection.probe else {
            return;
        };
        if frame_it && let Some(probe) = self.document.probes.probes.get(index) {
            self.viewport.frame_points(&probe_points(
                probe,
                self.document.results.get(index),
                self.document.world.up(),
            ));
        }
    }
}
