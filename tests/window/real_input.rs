//! The real window under a virtual X server, driven by real X input events (xdotool, Debian package
//! xdotool): resize the window, pick the ray tool with its key, place a ray with two clicks on the
//! level, save with Ctrl+S, quit with Ctrl+Q. Then the probe set on disk has the new ray, the previous
//! version is kept as `.bak`, and the window's size and the recent files were saved for the next run.

use std::path::PathBuf;
use std::process::Command;

use plumbline_core::demo::files;
use plumbline_core::probe::load_probe_set;

#[test]
fn real_keys_and_clicks_place_save_and_quit() {
    let folder = tempfile::tempdir().unwrap();
    let scenes = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("scenes");
    for name in [files::GLB, files::LEVEL, files::PROBES] {
        std::fs::copy(scenes.join(name), folder.path().join(name)).unwrap();
    }
    let probes = folder.path().join(files::PROBES);
    let data = folder.path().join("data");
    let before = load_probe_set(&probes).unwrap().probes.len();

    // The view fills the middle of a 1300×800 window; its centre shows the level.
    let script = format!(
        r#"set -e
"{bin}" open "{probes}" &
app=$!
window=$(xdotool search --sync --onlyvisible --name Plumbline | head -1)
sleep 1
xdotool windowsize "$window" 1300 800
sleep 1
xdotool windowfocus "$window"
xdotool mousemove --window "$window" 600 430
sleep 0.3
xdotool key r
sleep 0.3
xdotool click 1
sleep 0.5
xdotool mousemove --window "$window" 660 470
sleep 0.3
xdotool click 1
sleep 0.5
xdotool key ctrl+s
sleep 0.5
xdotool key ctrl+q
wait "$app"
"#,
        bin = env!("CARGO_BIN_EXE_plumbline"),
        probes = probes.display(),
    );
    let run = Command::new("xvfb-run")
        .args(["-a", "-s", "-screen 0 1600x1000x24", "sh", "-c", &script])
        .env("XDG_DATA_HOME", &data)
        .output()
        .expect("xvfb-run and xdotool are installed (Debian packages xvfb, xdotool)");
    assert!(
        run.status.success(),
        "{}\n{}",
        String::from_utf8_lossy(&run.stdout),
        String::from_utf8_lossy(&run.stderr)
    );

    let saved = load_probe_set(&probes).unwrap();
    assert_eq!(saved.probes.len(), before + 1, "the placed ray was saved");
    let ray = saved.probes.last().unwrap();
    assert_eq!((&*ray.id, ray.query.kind().name()), ("ray", "ray"));
    let backup = load_probe_set(&folder.path().join(format!("{}.bak", files::PROBES))).unwrap();
    assert_eq!(backup.probes.len(), before, "the previous version is kept");
    let state = std::fs::read_to_string(data.join("plumbline").join("app.ron"))
        .expect("the window's state was saved");
    assert!(
        state.contains("inner_size_points:(x:1300.0,y:800.0)"),
        "the window size is remembered: {state}"
    );
    assert!(
        state.contains(&format!("{}", probes.display())),
        "the probe set is among the recent files: {state}"
    );
}
