//! The window's command-line options: `--screenshot PATH`, `--size WxH`, `--select PROBE`,
//! `--lint`, `--legend`, `--bench-frames N`.

use std::path::PathBuf;

use plumbline::app::WindowOptions;

/// Options of `plumbline` and `plumbline open`.
#[derive(clap::Args, Debug, Clone, Default)]
pub struct WindowArgs {
    /// Write a PNG of the window after the first complete frame, and beside it PATH with the
    /// extension .marks.json (where each probe's marker landed), then exit.
    #[arg(long, value_name = "PATH")]
    pub screenshot: Option<PathBuf>,
    /// Window size in pixels, e.g. 1280x720.
    #[arg(long, value_name = "WxH", value_parser = parse_size)]
    pub size: Option<[u32; 2]>,
    /// Select this probe (by id) at the start, framed in the view.
    #[arg(long, value_name = "PROBE")]
    pub select: Option<String>,
    /// Open the level lint window at the start, its first finding picked and framed.
    #[arg(long)]
    pub lint: bool,
    /// Show the legend of the view's marks (as View > Legend does).
    #[arg(long)]
    pub legend: bool,
    /// Draw N frames of each kind (overlay change, camera motion, full redraw), print their times,
    /// then exit.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..))]
    pub bench_frames: Option<u32>,
    /// Let files name paths outside their own folder (absolute, or `..` above it).
    #[arg(long)]
    pub allow_outside_paths: bool,
}

impl WindowArgs {
    /// The library's window options.
    pub fn options(&self) -> Result<WindowOptions, String> {
        Ok(WindowOptions {
            screenshot: self.screenshot.clone(),
            size: self.size,
            bench_frames: self.bench_frames.map(|n| n as usize),
            select: self.select.clone(),
            lint: self.lint,
            legend: self.legend,
            paths: plumbline_core::input::PathPolicy {
                anywhere: self.allow_outside_paths,
            },
        })
    }
}

/// Parses `WIDTHxHEIGHT` in pixels, each 64 to 8192.
fn parse_size(text: &str) -> Result<[u32; 2], String> {
    let bad =
        || format!("\"{text}\" is not a window size like 1280x720 (64 to 8192 pixels a side)");
    let (w, h) = text.split_once(['x', 'X', '×']).ok_or_else(bad)?;
    let side = |s: &str| {
        s.trim()
            .parse::<u32>()
            .ok()
            .filter(|v| (64..=8192).contains(v))
            .ok_or_else(bad)
    };
    Ok([side(w)?, side(h)?])
}
