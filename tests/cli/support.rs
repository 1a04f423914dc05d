//! Running the binary as a user's script would: in a folder, without colour.

use std::path::Path;
use std::process::{Command, Output};

/// Runs `plumbline ARGS` in `dir` with colour off, and waits for it.
pub fn plumbline(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .current_dir(dir)
        .args(args)
        .env("NO_COLOR", "1")
        .output()
        .unwrap()
}
