//! Every action of the workbench with its name and keyboard shortcut, so the menus, the toolbar's
//! tooltips and the keyboard all say and do the same thing.

use eframe::egui;
use egui::{Key, KeyboardShortcut, Modifiers};

use super::tools::Tool;

/// An action the user can take.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Command {
    /// Open a probe set or level.
    Open,
    /// Save the probe set.
    Save,
    /// Save the probe set under another name.
    SaveAs,
    /// Close the window (asking about unsaved changes).
    Quit,
    /// Undo the last edit.
    Undo,
    /// Redo the last undone edit.
    Redo,
    /// Copy the selected probes.
    Duplicate,
    /// Delete the selected probes.
    Delete,
    /// Set the selected probes' expectations from their current answers.
    ExpectAnswer,
    /// Select every probe the list shows.
    SelectAll,
    /// Pick a tool.
    Tool(Tool),
    /// End the path being placed.
    FinishPath,
    /// Show the whole level.
    FrameLevel,
    /// Show the selected probe.
    FrameProbe,
    /// Fly mode on or off.
    ToggleFly,
    /// Other probes fade while one is selected, or all stay at full strength.
    ToggleDimming,
    /// The legend of the view's marks shown or hidden.
    ToggleLegend,
    /// Open or close the rules window.
    Rules,
    /// Open or close the level lint window.
    Lint,
}

impl Command {
    /// Commands that have a shortcut, in the order shortcuts are tried.
    pub const WITH_SHORTCUTS: [Command; 25] = [
        Command::Open,
        Command::SaveAs,
        Command::Save,
        Command::Quit,
        Command::Redo,
        Command::Undo,
        Command::Duplicate,
        Command::Delete,
        Command::ExpectAnswer,
        Command::SelectAll,
        Command::Tool(Tool::Select),
        Command::Tool(Tool::Ray),
        Command::Tool(Tool::Sweep),
        Command::Tool(Tool::Closest),
        Command::Tool(Tool::Overlap),
        Command::Tool(Tool::Jump),
        Command::Tool(Tool::Walk),
        Command::FinishPath,
        Command::FrameLevel,
        Command::FrameProbe,
        Command::ToggleFly,
        Command::ToggleDimming,
        Command::ToggleLegend,
        Command::Rules,
        Command::Lint,
    ];

    /// The menu item's words.
    pub fn name(self) -> &'static str {
        match self {
            Command::Open => "Open…",
            Command::Save => "Save",
            Command::SaveAs => "Save as…",
            Command::Quit => "Quit",
            Command::Undo => "Undo",
            Command::Redo => "Redo",
            Command::Duplicate => "Duplicate",
            Command::Delete => "Delete",
            Command::ExpectAnswer => "Expect this answer",
            Command::SelectAll => "Select all shown",
            Command::Tool(Tool::Select) => "Select and drag",
            Command::Tool(Tool::Ray) => "New ray",
            Command::Tool(Tool::Sweep) => "New sweep",
            Command::Tool(Tool::Closest) => "New closest point",
            Command::Tool(Tool::Overlap) => "New overlap",
            Command::Tool(Tool::Jump) => "New jump",
            Command::Tool(Tool::Walk) => "New walk",
            Command::FinishPath => "End the path",
            Command::FrameLevel => "Frame level",
            Command::FrameProbe => "Frame probe",
            Command::ToggleFly => "Fly mode",
            Command::ToggleDimming => "Fade other probes",
            Command::ToggleLegend => "Legend",
            Command::Rules => "Rules…",
            Command::Lint => "Level lint…",
        }
    }

    /// The keyboard shortcut.
    pub fn shortcut(self) -> Option<KeyboardShortcut> {
        let plain = |key| KeyboardShortcut::new(Modifiers::NONE, key);
        let command = |key| KeyboardShortcut::new(Modifiers::COMMAND, key);
        Some(match self {
            Command::Open => command(Key::O),
            Command::Save => command(Key::S),
            Command::SaveAs => KeyboardShortcut::new(Modifiers::COMMAND | Modifiers::SHIFT, Key::S),
            Command::Quit => command(Key::Q),
            Command::Undo => command(Key::Z),
            Command::Redo => KeyboardShortcut::new(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z),
            Command::Duplicate => command(Key::D),
            Command::Delete => plain(Key::Delete),
            Command::ExpectAnswer => command(Key::E),
            Command::SelectAll => command(Key::A),
            Command::Tool(tool) => plain(tool.key()),
            Command::FinishPath => plain(Key::Enter),
            Command::FrameLevel => plain(Key::Home),
            Command::FrameProbe => plain(Key::F),
            Command::ToggleFly => plain(Key::G),
            Command::ToggleDimming => plain(Key::M),
            Command::ToggleLegend => plain(Key::K),
            Command::Rules => command(Key::R),
            Command::Lint => command(Key::L),
        })
    }

    /// True when the shortcut still applies while text is being typed into a box (file commands);
    /// the others belong to the box then (bare keys are letters, Ctrl+A, Ctrl+Z and the like edit the
    /// text).
    pub fn works_while_typing(self) -> bool {
        matches!(
            self,
            Command::Open | Command::Save | Command::SaveAs | Command::Quit
        )
    }

    /// True when the shortcut is a bare key.
    pub fn is_bare_key(self) -> bool {
        self.shortcut()
            .is_some_and(|s| s.modifiers == Modifiers::NONE)
    }
}

/// A menu item for a command: its name, its shortcut on the right, greyed out when not possible.
pub fn menu_item(ui: &mut egui::Ui, command: Command, enabled: bool) -> bool {
    let shortcut = shortcut_text(ui, command);
    ui.add_enabled(
        enabled,
        egui::Button::new(command.name()).shortcut_text(shortcut),
    )
    .clicked()
}

/// A menu item for a command that turns something on or off, ticked while it is on.
pub fn toggle_item(ui: &mut egui::Ui, command: Command, on: bool) -> bool {
    let shortcut = shortcut_text(ui, command);
    ui.add(egui::Button::selectable(on, command.name()).shortcut_text(shortcut))
        .clicked()
}

/// The command's shortcut as the platform writes it, or nothing.
fn shortcut_text(ui: &egui::Ui, command: Command) -> String {
    command
        .shortcut()
        .map(|s| ui.ctx().format_shortcut(&s))
        .unwrap_or_default()
}

/// The tooltip of a command's button: its name and shortcut.
pub fn tooltip(ctx: &egui::Context, command: Command) -> String {
    match command.shortcut() {
        Some(s) => format!("{} ({})", command.name(), ctx.format_shortcut(&s)),
        None => command.name().to_string(),
    }
}
