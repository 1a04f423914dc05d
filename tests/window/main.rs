//! The workbench window: offscreen rendering (EGL, no X), panels driven headlessly by label
//! (egui_kittest), the whole window under Xvfb with real input, and its screenshots.

mod authoring;
mod level_checks;
mod panels;
mod pictures;
mod real_input;
mod render;
mod screenshot;
mod support;
