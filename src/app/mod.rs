//! The workbench window (eframe/egui): the probe list on the left, the 3D view in the middle, the
//! inspector on the right and a summary bar along the bottom. Each panel is a small function or type
//! with a `ui` method, so tests drive them headlessly; [`Workbench::ui`] lays them out.

pub mod badge;
pub mod capture;
pub mod document;
pub mod history;
pub mod inspector;
pub mod probe_list;
pub mod tools;
pub mod viewport;

use std::path::PathBuf;
use std::time::{Duration, Instant};

use eframe::egui;
use egui::{Color32, RichText};

use crate::view::probe_marks::probe_points;
use capture::Capture;
use document::Document;
use inspector::{ClearancePlot, inspector_ui};
use probe_list::{ListFilter, probe_list_ui};
use viewport::Viewport;

/// The selected probe and, within it, the selected hit.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Selection {
    /// Index of the selected probe.
    pub probe: Option<usize>,
    /// Index of the selected hit within that probe's hits.
    pub hit: Option<usize>,
}

/// How often the level's files on disk are looked at.
const DISK_CHECK: Duration = Duration::from_secs(2);

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
    plot: Option<ClearancePlot>,
    results_revision: u64,
    scroll_list: bool,
    level_changed: bool,
    last_disk_check: Instant,
}

impl Workbench {
    /// A workbench on an open document.
    pub fn new(document: Document) -> Workbench {
        let viewport = Viewport::new(&document);
        Workbench {
            document,
            selection: Selection::default(),
            filter: ListFilter::default(),
            viewport,
            plot: None,
            results_revision: 1,
            scroll_list: false,
            level_changed: false,
            last_disk_check: Instant::now(),
        }
    }

    /// Selects a probe (and no hit), as a click in the list does: the view frames it.
    pub fn select_probe(&mut self, index: Option<usize>) {
        self.selection = Selection {
            probe: index,
            hit: None,
        };
        self.after_selection(true);
    }

    fn after_selection(&mut self, frame_it: bool) {
        let Some(index) = self.selection.probe else {
            self.plot = None;
            return;
        };
        if frame_it && let Some(probe) = self.document.probes.probes.get(index) {
            self.viewport
                .frame_points(&probe_points(probe, self.document.results.get(index)));
        }
        if self.plot.as_ref().is_none_or(|p| p.probe != index) {
            self.plot = ClearancePlot::measure(&self.document, index);
        }
    }

    /// Lays out and runs every panel for one frame.
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        self.check_disk(ui.ctx());
        self.shortcuts(ui.ctx());
        let shown = self.filter.shown(&self.document);

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
                    scroll,
                );
                if picked {
                    self.after_selection(true);
                }
            });
        egui::Panel::right("inspector")
            .resizable(true)
            .default_size(380.0)
            .min_size(260.0)
            .show(ui, |ui| {
                ui.add_space(4.0);
                egui::ScrollArea::vertical()
                    .auto_shrink([false, false])
                    .show(ui, |ui| {
                        inspector_ui(ui, &self.document, &mut self.selection, self.plot.as_ref());
                    });
            });
        egui::CentralPanel::no_frame().show(ui, |ui| {
            let clicked = self.viewport.ui(
                ui,
                &self.document,
                self.results_revision,
                &shown,
                &mut self.selection,
            );
            if clicked {
                self.scroll_list = true;
                self.after_selection(false);
            }
        });
    }

    fn toolbar(&mut self, ui: &mut egui::Ui) {
        ui.horizontal(|ui| {
            ui.label(RichText::new("Plumbline").strong());
            ui.separator();
            let name = self
                .document
                .probes_path
                .as_ref()
                .unwrap_or(&self.document.level_path);
            ui.label(name.display().to_string());
            ui.separator();
            if ui
                .button("Frame level")
                .on_hover_text("Show the whole level (Home)")
                .clicked()
            {
                self.viewport.frame_level();
            }
            let can_frame = self.selection.probe.is_some();
            if ui
                .add_enabled(can_frame, egui::Button::new("Frame probe"))
                .on_hover_text("Show the selected probe (F)")
                .clicked()
            {
                self.after_selection(true);
            }
            ui.toggle_value(&mut self.viewport.fly, "Fly")
                .on_hover_text(
                    "Fly mode (G): drag to look around, W/A/S/D to move, Q/E down and up.\n\
                     Otherwise drag orbits, right or middle drag pans, the wheel zooms.",
                );
        });
    }

    fn shortcuts(&mut self, ctx: &egui::Context) {
        if ctx.egui_wants_keyboard_input() {
            return;
        }
        let (home, frame, fly, quit) = ctx.input(|i| {
            (
                i.key_pressed(egui::Key::Home),
                i.key_pressed(egui::Key::F),
                i.key_pressed(egui::Key::G),
                i.modifiers.command && i.key_pressed(egui::Key::Q),
            )
        });
        if quit {
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
        if home {
            self.viewport.frame_level();
        }
        if frame {
            self.after_selection(true);
        }
        if fly {
            self.viewport.fly = !self.viewport.fly;
        }
    }

    fn summary_bar(&self, ui: &mut egui::Ui) {
        let summary = self.document.summary();
        ui.horizontal(|ui| {
            for (verdict, count) in [
                (crate::check::Verdict::Pass, summary.pass),
                (crate::check::Verdict::Fail, summary.fail),
                (crate::check::Verdict::Error, summary.error),
                (crate::check::Verdict::Unchecked, summary.unchecked),
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
                "level {level} · {} objects · {} triangles",
                self.document.level.objects.len(),
                self.document.level.triangle_count()
            ));
            ui.separator();
            if self.level_changed {
                ui.label(
                    RichText::new("The level changed on disk since these answers")
                        .color(Color32::from_rgb(240, 228, 66))
                        .strong(),
                )
                .on_hover_text(format!(
                    "Answered on level digest {}; reopen to answer again.",
                    self.document.level_digest
                ));
            } else {
                ui.label("Answers match the level on disk")
                    .on_hover_text(format!("level digest {}", self.document.level_digest));
            }
            if !self.document.warnings.is_empty() {
                ui.separator();
                ui.label(format!("{} load warnings", self.document.warnings.len()))
                    .on_hover_text(self.document.warnings.join("\n"));
            }
        });
    }

    fn check_disk(&mut self, ctx: &egui::Context) {
        if self.last_disk_check.elapsed() >= DISK_CHECK {
            self.last_disk_check = Instant::now();
            self.level_changed = self.document.level_changed_on_disk();
        }
        ctx.request_repaint_after(DISK_CHECK);
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

struct WorkbenchApp {
    workbench: Workbench,
    capture: Capture,
}

impl eframe::App for WorkbenchApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.capture.before_frame(ui.ctx(), &mut self.workbench);
        self.workbench.ui(ui);
    }
}

/// Opens the window on a probe set or level and runs until it is closed.
pub fn run(path: &std::path::Path, options: WindowOptions) -> Result<(), String> {
    let document = Document::open(path)?;
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
    if unattended {
        native.persistence_path = Some(std::env::temp_dir().join("plumbline-unattended.ron"));
    }
    eframe::run_native(
        "plumbline",
        native,
        Box::new(move |_cc| {
            let mut workbench = Workbench::new(document);
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
    outcome.result()
}
