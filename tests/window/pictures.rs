//! `check --pictures` with the reports that show them, from the outside: one picture per failing or
//! changed probe (every probe with --pictures-all), the same bytes on every run, and the Markdown,
//! HTML and JUnit reports pointing at them. Drawn on an EGL surfaceless context, no X server.

use std::path::Path;
use std::process::Command;

const FIXTURE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/core/tests/fixtures/check");

fn check(dir: &Path, args: &[&str]) {
    let run = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .current_dir(dir)
        .args(["check", "lane.probes.json"])
        .args(args)
        .env("NO_COLOR", "1")
        .env_remove("DISPLAY")
        .output()
        .unwrap();
    assert_eq!(
        run.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
}

/// Width and height of a PNG, read back with the png crate.
fn png_size(bytes: &[u8]) -> (u32, u32) {
    let reader = png::Decoder::new(std::io::Cursor::new(bytes))
        .read_info()
        .expect("a PNG");
    let info = reader.info();
    (info.width, info.height)
}

#[test]
fn failing_probes_get_pictures_that_every_report_shows() {
    let dir = tempfile::tempdir().unwrap();
    for name in ["lane.level.json", "lane.probes.json"] {
        std::fs::copy(Path::new(FIXTURE).join(name), dir.path().join(name)).unwrap();
    }
    std::fs::create_dir(dir.path().join("reports")).unwrap();
    let args = [
        "--pictures",
        "reports/pictures",
        "--markdown",
        "reports/summary.md",
        "--html",
        "reports/report.html",
        "--junit",
        "junit.xml",
    ];
    check(dir.path(), &args);
    let pictures = dir.path().join("reports/pictures");
    let names: Vec<String> = std::fs::read_dir(&pictures)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    assert_eq!(names, vec!["spawn-by-bollard.png".to_string()]);
    let png = std::fs::read(pictures.join("spawn-by-bollard.png")).unwrap();
    let (width, height) = png_size(&png);
    assert_eq!(width, plumbline::pictures::WIDTH);
    assert!(
        height > plumbline::pictures::HEIGHT,
        "a caption strip below"
    );

    // The same inputs draw the same bytes.
    check(dir.path(), &args);
    assert!(std::fs::read(pictures.join("spawn-by-bollard.png")).unwrap() == png);

    let markdown = std::fs::read_to_string(dir.path().join("reports/summary.md")).unwrap();
    assert!(
        markdown.contains("![spawn-by-bollard](pictures/spawn-by-bollard.png)"),
        "{markdown}"
    );
    let html = std::fs::read_to_string(dir.path().join("reports/report.html")).unwrap();
    assert!(html.contains("data:image/png;base64,iVBORw0KGgo"));
    assert_eq!(html.matches("class=\"thumb\"").count(), 1);
    assert!(html.contains("<tr class=\"fail\"><td><code>spawn-by-bollard</code>"));
    let junit = std::fs::read_to_string(dir.path().join("junit.xml")).unwrap();
    let doc = roxmltree::Document::parse(&junit).unwrap();
    let case = doc
        .descendants()
        .find(|n| n.attribute("name") == Some("spawn-by-bollard"))
        .unwrap();
    let out = case
        .children()
        .find(|n| n.has_tag_name("system-out"))
        .unwrap();
    assert_eq!(
        out.text(),
        Some("[[ATTACHMENT|reports/pictures/spawn-by-bollard.png]]\n")
    );

    // Every probe, when asked.
    check(dir.path(), &["--pictures", "all", "--pictures-all"]);
    assert_eq!(
        std::fs::read_dir(dir.path().join("all")).unwrap().count(),
        7
    );
}
