//! `plumbline lint LEVEL`: what is wrong with the level's own geometry — a line per finding grouped
//! by kind, the totals, and the requested files (JSON, JUnit XML, Markdown).

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use plumbline_core::atomic::write_atomic;
use plumbline_core::input::{PathPolicy, check_outputs};
use plumbline_core::lint::{FindingKind, LintOptions, lint as lint_level};
use plumbline_core::report::{lint_json, lint_junit, lint_markdown};
use plumbline_core::session::{OpenOptions, open};

use super::EXIT_FAILED;
use super::terminal::{Style, Tone, write_stdout};

/// The options of `plumbline lint`.
#[derive(clap::Args)]
pub struct LintArgs {
    /// A .level.json, .gltf, .glb or .obj file (or a probe set: its level).
    pub level: PathBuf,
    /// Write the findings as JSON here.
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Write a JUnit XML report here.
    #[arg(long)]
    pub junit: Option<PathBuf>,
    /// Write a Markdown summary here.
    #[arg(long)]
    pub markdown: Option<PathBuf>,
    /// Metres two objects may interpenetrate before it is a finding.
    #[arg(long, default_value_t = LintOptions::default().max_overlap, value_parser = super::parse_tolerance)]
    pub max_overlap: f64,
    /// Metres: objects closer than this without touching leave a gap a character can wedge in
    /// (0 turns the check off).
    #[arg(long, default_value_t = LintOptions::default().narrow_gap, value_parser = super::parse_tolerance)]
    pub narrow_gap: f64,
    /// Metres a prop may float above its support.
    #[arg(long, default_value_t = LintOptions::default().max_float, value_parser = super::parse_tolerance)]
    pub max_float: f64,
    /// Metres a prop may sink into its support.
    #[arg(long, default_value_t = LintOptions::default().max_sink, value_parser = super::parse_tolerance)]
    pub max_sink: f64,
    /// Degrees: triangles with a smaller angle are slivers.
    #[arg(long, default_value_t = LintOptions::default().sliver_angle, value_parser = parse_angle)]
    pub sliver_angle: f64,
    /// Let files name paths outside their own folder (absolute, or `..` above it).
    #[arg(long)]
    pub allow_outside_paths: bool,
}

fn parse_angle(text: &str) -> Result<f64, String> {
    match text.parse::<f64>() {
        Ok(v) if (0.0..60.0).contains(&v) => Ok(v),
        _ => Err(format!(
            "\"{text}\" is not an angle in degrees from 0 to 60"
        )),
    }
}

impl LintArgs {
    fn outputs(&self) -> Vec<(&'static str, &Path)> {
        [
            ("findings file (--out)", &self.out),
            ("JUnit report (--junit)", &self.junit),
            ("Markdown summary (--markdown)", &self.markdown),
        ]
        .into_iter()
        .filter_map(|(what, path)| path.as_deref().map(|p| (what, p)))
        .collect()
    }

    fn options(&self) -> LintOptions {
        LintOptions {
            max_overlap: self.max_overlap,
            narrow_gap: self.narrow_gap,
            max_float: self.max_float,
            max_sink: self.max_sink,
            sliver_angle: self.sliver_angle,
        }
    }
}

/// Lints the level; exit 0 when nothing is found, 1 when something is, 2 for unreadable input.
pub fn lint(args: &LintArgs) -> Result<ExitCode, String> {
    let opened = open(
        &args.level,
        &OpenOptions {
            keep_level: true,
            paths: PathPolicy {
                anywhere: args.allow_outside_paths,
            },
            ..OpenOptions::default()
        },
    )
    .map_err(|e| e.to_string())?;
    // Given a probe set, every probe in it is checked as `check` would.
    opened.probes.check_all().map_err(|e| e.to_string())?;
    let level = opened.level;
    let mut inputs = level.files.clone();
    inputs.extend(opened.probes_path.clone());
    check_outputs(&inputs, &args.outputs()).map_err(|e| e.to_string())?;
    let model = level
        .model
        .as_ref()
        .expect("the session keeps the level model when asked");
    let style = Style::detect();
    let report = lint_level(
        model,
        &level.world,
        &level.lint,
        &args.options(),
        &|stage| {
            eprint!("\rlinting: {stage}…{:20}\r", "");
        },
    );
    eprint!("\r{:60}\r", "");
    let name = level.path.display().to_string();
    let mut out = String::new();
    for kind in FindingKind::ALL {
        let found: Vec<_> = report.findings.iter().filter(|f| f.kind == kind).collect();
        if found.is_empty() {
            continue;
        }
        out.push_str(&style.paint(Tone::Bad, &format!("{} ({})\n", kind.word(), found.len())));
        for f in found {
            let p = f.point;
            out.push_str(&format!(
                "  {}\n    at [{:.3}, {:.3}, {:.3}]{}\n",
                f.message,
                p.x,
                p.y,
                p.z,
                triangles_text(f)
            ));
        }
    }
    if !report.allowed.is_empty() {
        out.push_str(&style.paint(
            Tone::Note,
            &format!("accepted by the level file ({})\n", report.allowed.len()),
        ));
        // Counted by kind and reason: the list itself is in --out and --markdown.
        let mut groups: Vec<(FindingKind, &str, usize)> = Vec::new();
        for (f, why) in &report.allowed {
            match groups.iter_mut().find(|g| g.0 == f.kind && g.1 == why) {
                Some(g) => g.2 += 1,
                None => groups.push((f.kind, why, 1)),
            }
        }
        for (kind, why, count) in groups {
            let why = if why.is_empty() {
                "no reason given"
            } else {
                why
            };
            out.push_str(&format!("  {count} {}: {why}\n", kind.word()));
        }
    }
    let total = format!(
        "{} finding(s), {} accepted, in {} objects and {} triangles of {name}\n",
        report.findings.len(),
        report.allowed.len(),
        report.objects,
        report.triangles
    );
    let tone = if report.findings.is_empty() {
        Tone::Good
    } else {
        Tone::Bad
    };
    out.push_str(&style.paint(tone, &total));
    write_stdout(&out);
    let write = |path: &Option<PathBuf>, text: String| -> Result<(), String> {
        match path {
            Some(p) => write_atomic(p, text.as_bytes())
                .map_err(|e| format!("{}: cannot write: {e}", p.display())),
            None => Ok(()),
        }
    };
    write(&args.out, lint_json(&report, &name))?;
    write(&args.junit, lint_junit(&report, &name))?;
    write(&args.markdown, lint_markdown(&report, &name))?;
    Ok(if report.findings.is_empty() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(EXIT_FAILED)
    })
}

/// The triangles of a finding, as `; triangles yard/terrain #12, crate-7 …` (a few of them).
fn triangles_text(f: &plumbline_core::lint::Finding) -> String {
    if f.triangles.is_empty() {
        return String::new();
    }
    let shown: Vec<String> = f
        .triangles
        .iter()
        .take(4)
        .map(|t| format!("{} #{}", t.object, t.number))
        .collect();
    let more = if f.triangles.len() > 4 {
        format!(" and {} more", f.triangles.len() - 4)
    } else {
        String::new()
    };
    format!("; triangle(s) {}{more}", shown.join(", "))
}
