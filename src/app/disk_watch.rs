//! Knowing when the level's files may have changed on disk without looking at them on a timer: a
//! watcher on their folders sets a flag and wakes the window, so an idle window paints nothing.
//! Where the system gives no watcher, the files are looked at every [`POLL`] instead.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use eframe::egui;
use notify::{RecommendedWatcher, RecursiveMode, Watcher};

/// How often the files are looked at when no watcher could be made.
pub const POLL: Duration = Duration::from_secs(2);

/// Watches the folders of the level's files.
pub struct DiskWatch {
    watcher: Option<RecommendedWatcher>,
    /// The files watched (those the level was read from).
    files: Vec<PathBuf>,
    /// Set by the watcher's thread when something in a watched folder changed.
    touched: Arc<AtomicBool>,
    /// When the files were last looked at (for polling without a watcher).
    last_look: Instant,
}

impl Default for DiskWatch {
    fn default() -> DiskWatch {
        DiskWatch {
            watcher: None,
            files: Vec::new(),
            touched: Arc::new(AtomicBool::new(false)),
            last_look: Instant::now(),
        }
    }
}

impl DiskWatch {
    /// True when the files should be looked at now: a watched file was touched since the last call,
    /// or, without a watcher, [`POLL`] has passed. Watches `files` (again when they are not those
    /// watched), waking `ctx` when one changes.
    pub fn due<'a>(
        &mut self,
        ctx: &egui::Context,
        files: impl Iterator<Item = &'a Path> + Clone,
    ) -> bool {
        if !self.files.iter().map(PathBuf::as_path).eq(files.clone()) {
            self.start(ctx, files.map(Path::to_path_buf).collect());
        }
        if self.watcher.is_some() {
            return self.touched.swap(false, Ordering::Relaxed);
        }
        ctx.request_repaint_after(POLL);
        if self.last_look.elapsed() >= POLL {
            self.last_look = Instant::now();
            return true;
        }
        false
    }

    fn start(&mut self, ctx: &egui::Context, files: Vec<PathBuf>) {
        let touched = self.touched.clone();
        let wake = ctx.clone();
        let wanted: Vec<PathBuf> = files.iter().map(|f| absolute(f)).collect();
        let watcher = notify::recommended_watcher(move |event: notify::Result<notify::Event>| {
            let Ok(event) = event else { return };
            // Saving by rename shows as a change to the folder's entry of the file's name.
            if !event.kind.is_access() && event.paths.iter().any(|p| wanted.contains(p)) {
                touched.store(true, Ordering::Relaxed);
                wake.request_repaint();
            }
        });
        self.watcher = watcher.ok().and_then(|mut w| {
            let mut folders: Vec<PathBuf> = files.iter().map(|f| folder_of(f)).collect();
            folders.sort();
            folders.dedup();
            folders
                .iter()
                .all(|folder| w.watch(folder, RecursiveMode::NonRecursive).is_ok())
                .then_some(w)
        });
        self.files = files;
    }
}

/// The folder a file is in (`.` for a bare name), as the watcher reports paths: absolute.
fn folder_of(file: &Path) -> PathBuf {
    absolute(
        file.parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new(".")),
    )
}

fn absolute(path: &Path) -> PathBuf {
    std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf())
}
