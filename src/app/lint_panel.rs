//! The level lint window: lint runs in the background on the open level (again after each reload),
//! its findings listed by kind; picking one highlights its objects, edges and point in the view and
//! frames them.

use std::sync::Arc;

use eframe::egui;
use egui::RichText;

use super::Workbench;
use super::badge::verdict_color32;
use super::jobs::Background;
use plumbline_core::check::Verdict;
use plumbline_core::level::{Level, LintSettings};
use plumbline_core::lint::{Finding, FindingKind, LintOptions, LintReport, lint};
use plumbline_core::query::World;

/// Metres around a picked finding that the view shows. Ours: a room's worth.
const FRAME_AROUND: f64 = 3.0;

/// The lint window's state.
#[derive(Default)]
pub struct LintPanel {
    /// The window is open.
    pub open: bool,
    /// The last report, and the level digest it was made for.
    pub report: Option<(LintReport, String)>,
    /// The finding picked, by index into the report's findings.
    pub picked: Option<usize>,
    /// Pick the first finding when the run ends (the window was opened with `--lint`).
    pub pick_first: bool,
    job: Background<(LintReport, String)>,
}

impl LintPanel {
    /// True while a run is going.
    pub fn is_running(&self) -> bool {
        self.job.is_running() || (self.open && self.report.is_none())
    }

    /// The finding picked, if any.
    pub fn finding(&self) -> Option<&Finding> {
        let (report, _) = self.report.as_ref()?;
        report.findings.get(self.picked?)
    }
}

impl Workbench {
    /// Opens or closes the lint window; opening lints the level when it was not linted yet.
    pub fn toggle_lint(&mut self, ctx: &egui::Context) {
        self.lint.open = !self.lint.open;
        if self.lint.open {
            self.start_lint(ctx, false);
        } else {
            self.lint.picked = None;
        }
    }

    /// Lints the open level in the background, unless its report is current (or `again`).
    fn start_lint(&mut self, ctx: &egui::Context, again: bool) {
        let current = self
            .lint
            .report
            .as_ref()
            .is_some_and(|(_, digest)| *digest == self.document.level_digest);
        if (current && !again) || self.lint.job.is_running() {
            return;
        }
        let level: Level = self.document.level.clone();
        let world: Arc<World> = self.document.world.clone();
        let settings: LintSettings = self.document.lint.clone();
        let digest = self.document.level_digest.clone();
        self.lint.job.start(ctx, move || {
            let report = lint(&level, &world, &settings, &LintOptions::default(), &|_| {});
            (report, digest)
        });
    }

    /// Shows the lint window while it is open, and takes in a finished run.
    pub(super) fn lint_window(&mut self, ctx: &egui::Context) {
        let mut first = None;
        if let Some(done) = self.lint.job.take() {
            let any = !done.0.findings.is_empty();
            self.lint.report = Some(done);
            self.lint.picked = None;
            if std::mem::take(&mut self.lint.pick_first) && any {
                first = Some(0);
            }
        }
        if !self.lint.open {
            return;
        }
        // A reloaded level is linted again.
        self.start_lint(ctx, false);
        let mut open = true;
        let mut picked = first;
        let mut again = false;
        // Over the inspector, leaving the view clear for the finding it shows.
        egui::Window::new("Level lint")
            .open(&mut open)
            .anchor(egui::Align2::RIGHT_TOP, egui::vec2(-6.0, 64.0))
            .default_width(390.0)
            .max_width(390.0)
            .default_height(460.0)
            .show(ctx, |ui| {
                if self.lint.job.is_running() {
                    ui.horizontal(|ui| {
                        ui.spinner();
                        ui.label("Linting the level…");
                    });
                }
                let Some((report, _)) = &self.lint.report else {
                    return;
                };
                ui.horizontal_wrapped(|ui| {
                    let tone = if report.findings.is_empty() {
                        Verdict::Pass
                    } else {
                        Verdict::Fail
                    };
                    ui.label(
                        RichText::new(format!("{} finding(s)", report.findings.len()))
                            .strong()
                            .color(verdict_color32(tone)),
                    );
                    ui.label(
                        RichText::new(format!(
                            "{} accepted by the level file · {} objects · {} triangles",
                            report.allowed.len(),
                            report.objects,
                            report.triangles
                        ))
                        .weak(),
                    );
                });
                again = ui.small_button("Lint again").clicked();
                ui.separator();
                egui::ScrollArea::vertical()
                    .auto_shrink([false, false])
                    .show(ui, |ui| {
                        ui.set_max_width(370.0);
                        ui.style_mut().wrap_mode = Some(egui::TextWrapMode::Wrap);
                        if let Some(k) = finding_list(ui, report, self.lint.picked) {
                            picked = Some(k);
                        }
                    });
            });
        if again {
            self.start_lint(ctx, true);
        }
        if let Some(k) = picked {
            self.lint.picked = Some(k);
            if let Some(finding) = self.lint.finding() {
                // The finding with a few metres around it, to see where it is.
                let around = glam::DVec3::splat(FRAME_AROUND);
                let mut points = vec![finding.point - around, finding.point + around];
                points.extend(finding.edges.iter().flatten());
                self.viewport.frame_points(&points);
            }
        }
        if !open {
            self.lint.open = false;
            self.lint.picked = None;
        }
    }
}

/// The findings under a heading per kind; returns the one clicked.
fn finding_list(ui: &mut egui::Ui, report: &LintReport, picked: Option<usize>) -> Option<usize> {
    let mut clicked = None;
    for kind in FindingKind::ALL {
        let of_kind: Vec<(usize, &Finding)> = report
            .findings
            .iter()
            .enumerate()
            .filter(|(_, f)| f.kind == kind)
            .collect();
        if of_kind.is_empty() {
            continue;
        }
        ui.label(RichText::new(format!("{} ({})", kind.word(), of_kind.len())).strong());
        for (k, finding) in of_kind {
            let response = ui.selectable_label(picked == Some(k), &finding.message);
            let triangles: Vec<String> = finding
                .triangles
                .iter()
                .take(6)
                .map(|t| format!("{} #{}", t.object, t.number))
                .collect();
            let p = finding.point;
            let detail = format!(
                "at [{:.2}, {:.2}, {:.2}]{}",
                p.x,
                p.y,
                p.z,
                if triangles.is_empty() {
                    String::new()
                } else {
                    format!("\ntriangles: {}", triangles.join(", "))
                }
            );
            if response.on_hover_text(detail).clicked() {
                clicked = Some(k);
            }
        }
        ui.add_space(4.0);
    }
    if report.findings.is_empty() {
        ui.label("Nothing found: the level's geometry is clean under the default thresholds.");
    }
    clicked
}
