//! The whole window under a virtual X server (`xvfb-run`, Debian package xvfb): `--screenshot` of the
//! demo writes a PNG that is not blank, shows the level, and shows each probe state's colour where the
//! probes' markers project (the positions come from the `.marks.json` written beside the PNG).

use std::path::Path;
use std::process::Command;

use plumbline::view::palette::verdict_colour;
use plumbline::view::renderer::BACKGROUND;
use plumbline_core::check::Verdict;

struct Image {
    width: usize,
    height: usize,
    rgba: Vec<u8>,
}

impl Image {
    fn read(path: &Path) -> Image {
        let decoder =
            png::Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap()));
        let mut reader = decoder.read_info().unwrap();
        let mut rgba = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut rgba).unwrap();
        assert_eq!(info.color_type, png::ColorType::Rgba);
        Image {
            width: info.width as usize,
            height: info.height as usize,
            rgba,
        }
    }

    fn at(&self, x: usize, y: usize) -> [u8; 3] {
        let i = (y * self.width + x) * 4;
        [self.rgba[i], self.rgba[i + 1], self.rgba[i + 2]]
    }
}

/// True when `pixel` is `colour` under some light factor (the marks are shaded 0.62–1.0).
fn shaded_from(pixel: [u8; 3], colour: [u8; 3]) -> bool {
    (55..=102).any(|k| {
        let k = k as f64 / 100.0;
        (0..3).all(|c| (pixel[c] as f64 - colour[c] as f64 * k).abs() <= 14.0)
    })
}

#[test]
fn the_demo_window_shows_the_level_and_every_probe_state_where_it_projects() {
    let folder = tempfile::tempdir().unwrap();
    let png = folder.path().join("demo.png");
    let run = Command::new("xvfb-run")
        .args(["-a", "-s", "-screen 0 1920x1080x24"])
        .arg(env!("CARGO_BIN_EXE_plumbline"))
        .arg("--screenshot")
        .arg(&png)
        .args(["--size", "1440x860"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("xvfb-run is installed (Debian package xvfb)");
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let image = Image::read(&png);
    assert_eq!((image.width, image.height), (1440, 860));

    // Not blank: a real window has many colours.
    let mut colours = std::collections::HashSet::new();
    for y in (0..image.height).step_by(3) {
        for x in (0..image.width).step_by(3) {
            colours.insert(image.at(x, y));
        }
    }
    assert!(colours.len() > 500, "only {} colours", colours.len());

    let marks: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(folder.path().join("demo.marks.json")).unwrap(),
    )
    .unwrap();
    let view: Vec<usize> = marks["view"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap() as usize)
        .collect();
    // The level, framed whole, fills a good part of the view: a quarter of its pixels or more are
    // not the background.
    let (mut level, mut all) = (0, 0);
    for y in (view[1]..view[3]).step_by(4) {
        for x in (view[0]..view[2]).step_by(4) {
            all += 1;
            level += (image.at(x, y) != BACKGROUND) as usize;
        }
    }
    assert!(
        level * 4 > all,
        "level on {level} of {all} sampled view pixels"
    );

    // Each state's colour within a few pixels of where its probes' markers project.
    let probes = marks["probes"].as_array().unwrap();
    for verdict in [Verdict::Pass, Verdict::Fail, Verdict::Unchecked] {
        let colour = verdict_colour(verdict);
        let of_state: Vec<&serde_json::Value> = probes
            .iter()
            .filter(|p| p["verdict"] == verdict.word())
            .collect();
        assert!(
            !of_state.is_empty(),
            "the demo shows a {} probe",
            verdict.word()
        );
        let found = of_state
            .iter()
            .filter(|p| {
                let (x, y) = (
                    p["x"].as_f64().unwrap() as i64,
                    p["y"].as_f64().unwrap() as i64,
                );
                (-4..=4).any(|dy| {
                    (-4..=4).any(|dx| {
                        let (px, py) = ((x + dx) as usize, (y + dy) as usize);
                        px < image.width
                            && py < image.height
                            && shaded_from(image.at(px, py), colour)
                    })
                })
            })
            .count();
        assert!(
            found * 4 >= of_state.len() * 3,
            "{} of {} {} markers show their colour",
            found,
            of_state.len(),
            verdict.word()
        );
    }
}
