//! The clearance plot is measured off the UI thread (a long path takes tens of milliseconds on a big
//! level), so dragging a sweep's points stays smooth; the newest request wins.

use std::sync::mpsc;

use eframe::egui;

use super::document::Document;
use super::inspector::ClearancePlot;
use plumbline_core::probe::ProbeKind;

/// Measures clearance plots in the background.
#[derive(Default)]
pub struct PlotWorker {
    current: Option<ClearancePlot>,
    pending: Option<mpsc::Receiver<Option<ClearancePlot>>>,
}

impl PlotWorker {
    /// Starts measuring the plot of probe `index` (or clears it); an earlier request still running
    /// is forgotten.
    pub fn request(&mut self, document: &Document, index: Option<usize>, ctx: &egui::Context) {
        let job = index.and_then(|i| {
            let probe = document.probes.probes.get(i)?;
            let result = document.results.get(i)?;
            (probe.query.kind() == ProbeKind::Sweep).then(|| (i, probe.clone(), result.clone()))
        });
        let Some((index, probe, result)) = job else {
            self.current = None;
            self.pending = None;
            return;
        };
        if self.current.as_ref().is_some_and(|p| p.probe != index) {
            self.current = None;
        }
        let (send, receive) = mpsc::channel();
        let world = document.world.clone();
        let ctx = ctx.clone();
        std::thread::spawn(move || {
            let _ = send.send(ClearancePlot::of(&world, &probe, &result, index));
            ctx.request_repaint();
        });
        self.pending = Some(receive);
    }

    /// Takes a finished measurement, if one arrived.
    pub fn poll(&mut self) {
        if let Some(receive) = &self.pending {
            match receive.try_recv() {
                Ok(plot) => {
                    self.current = plot;
                    self.pending = None;
                }
                Err(mpsc::TryRecvError::Empty) => {}
                Err(mpsc::TryRecvError::Disconnected) => self.pending = None,
            }
        }
    }

    /// The latest plot.
    pub fn plot(&self) -> Option<&ClearancePlot> {
        self.current.as_ref()
    }

    /// True while a measurement is running.
    pub fn is_busy(&self) -> bool {
        self.pending.is_some()
    }
}
