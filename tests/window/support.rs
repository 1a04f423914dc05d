//! Pointer input for the headless window tests (egui_kittest): presses and clicks at a position.

use eframe::egui::{Event, Modifiers, PointerButton, Pos2};
use egui_kittest::Harness;
use plumbline::app::Workbench;

/// Moves the pointer to `pos` and presses (or releases) the primary button, for one frame.
pub fn press(harness: &mut Harness<'static, Workbench>, pos: Pos2, pressed: bool) {
    harness.input_mut().events.push(Event::PointerMoved(pos));
    harness.input_mut().events.push(Event::PointerButton {
        pos,
        button: PointerButton::Primary,
        pressed,
        modifiers: Modifiers::NONE,
    });
    harness.step();
}

/// A click of the primary button at `at`, and a couple of frames to act on it.
pub fn click_at(harness: &mut Harness<'static, Workbench>, at: Pos2) {
    press(harness, at, true);
    press(harness, at, false);
    harness.run_steps(2);
}
