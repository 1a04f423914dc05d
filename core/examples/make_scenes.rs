//! Writes the demo scene into `scenes/` (the committed files), or a large level in the same style.
//!
//! cargo run --release --example make_scenes                      # scenes/ (the demo, committed)
//! cargo run --release --example make_scenes -- --large 1000000 bench-levels/1m

use std::path::PathBuf;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let result = match args.as_slice() {
        [] => plumbline_core::demo::write_demo_scene(&PathBuf::from("scenes"))
            .map_err(|e| e.to_string()),
        [flag, count, folder] if flag == "--large" => match count.parse::<usize>() {
            Ok(n) => plumbline_core::demo::write_large_scene(&PathBuf::from(folder), n)
                .map_err(|e| e.to_string()),
            Err(_) => Err(format!("\"{count}\" is not a triangle count")),
        },
        _ => Err("usage: make_scenes [--large TRIANGLES FOLDER]".into()),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("make_scenes: {e}");
            ExitCode::from(2)
        }
    }
}
