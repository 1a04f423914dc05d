//! Starting the window from the command line: open the document first (saying what is loading), then
//! run eframe with the workbench, its saved state and the unattended modes (`--screenshot`,
//! `--bench-frames`).

use std::path::PathBuf;
use std::time::Instant;

use eframe::egui;

use super::Workbench;
use super::capture::Capture;
use super::document::Document;

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
    /// Open the level lint window at the start, its first finding picked.
    pub lint: bool,
    /// Show the legend of the view's marks.
    pub legend: bool,
    /// Where paths named inside the files opened may lead.
    pub paths: plumbline_core::input::PathPolicy,
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

    /// The panels' colour: the panels are drawn without a fill of their own (see
    /// `frame::bare_panel`), so what shows through them is this clear.
    fn clear_color(&self, visuals: &egui::Visuals) -> [f32; 4] {
        visuals.panel_fill.to_normalized_gamma_f32()
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        if let Ok(text) = serde_json::to_string(&self.workbench.recent) {
            storage.set_string(RECENT_KEY, text);
        }
    }
}

/// Opens the window on a probe set or level and runs until it is closed.
pub fn launch(path: &std::path::Path, options: WindowOptions) -> Result<(), String> {
    // Opening a big level takes a few seconds before the window can appear: say what is happening.
    let started = Instant::now();
    eprintln!("plumbline: opening {} …", path.display());
    let document = Document::open(path, options.paths).map_err(|e| e.to_string())?;
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
                .position(|p| *p.id == **id)
                .ok_or_else(|| format!("{}: no probe with id \"{id}\"", path.display()))?,
        ),
    };
    let lint = options.lint;
    let legend = options.legend;
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
                workbench.viewport.ignore_hover = true;
            }
            if selected.is_some() {
                workbench.select_probe(selected);
                workbench.scroll_list = true;
            }
            workbench.viewport.legend = legend;
            if lint {
                workbench.lint.open = true;
                workbench.lint.pick_first = true;
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
