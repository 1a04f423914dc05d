//! Lint findings written out: JSON for tools, JUnit XML for CI (one test case per finding, and
//! one passing case per kind with none), Markdown for a code-review comment.

use crate::json_text::{Json, round9, round9_vec, write_pretty};
use crate::lint::{Finding, FindingKind, LintReport};

use super::junit::escape;
use super::markdown::cell;

/// The report as JSON (`"plumbline": "lint"`), stable: the same findings give the same bytes.
pub fn lint_json(report: &LintReport, level: &str) -> String {
    let findings: Vec<Json> = report
        .findings
        .iter()
        .map(|f| finding_json(f, None))
        .collect();
    let allowed: Vec<Json> = report
        .allowed
        .iter()
        .map(|(f, why)| finding_json(f, Some(why)))
        .collect();
    let value = Json::Obj(vec![
        ("plumbline", Json::Str("lint")),
        ("version", Json::int(1)),
        ("level", Json::Str(level)),
        ("objects", Json::int(report.objects as u64)),
        ("triangles", Json::int(report.triangles as u64)),
        ("findings", Json::Arr(findings)),
        ("allowed", Json::Arr(allowed)),
    ]);
    let mut out = String::new();
    write_pretty(&value, 0, &mut out);
    out.push('\n');
    out
}

fn finding_json<'a>(f: &'a Finding, why: Option<&'a str>) -> Json<'a> {
    let mut fields = vec![
        ("kind", Json::Str(f.kind.word())),
        (
            "objects",
            Json::Arr(f.objects.iter().map(|o| Json::Str(o)).collect()),
        ),
        (
            "triangles",
            Json::Arr(
                f.triangles
                    .iter()
                    .map(|t| {
                        Json::Obj(vec![
                            ("object", Json::Str(&t.object)),
                            ("number", Json::int(u64::from(t.number))),
                        ])
                    })
                    .collect(),
            ),
        ),
        ("count", Json::int(f.count as u64)),
    ];
    if let Some(m) = f.measure {
        fields.push(("measure", Json::float(round9(m))));
    }
    fields.push(("point", Json::vec3(round9_vec(f.point))));
    if !f.edges.is_empty() {
        fields.push((
            "edges",
            Json::Arr(
                f.edges
                    .iter()
                    .map(|[a, b]| {
                        Json::Arr(vec![Json::vec3(round9_vec(*a)), Json::vec3(round9_vec(*b))])
                    })
                    .collect(),
            ),
        ));
    }
    fields.push(("message", Json::Str(&f.message)));
    if let Some(why) = why {
        fields.push(("why", Json::Str(why)));
    }
    Json::Obj(fields)
}

/// The report as JUnit XML: a suite named after the level, a failing case per finding (named by
/// kind and objects) and a passing case for each kind with no finding.
pub fn lint_junit(report: &LintReport, level: &str) -> String {
    let mut cases = String::new();
    let mut tests = 0;
    for kind in FindingKind::ALL {
        let of_kind: Vec<&Finding> = report.findings.iter().filter(|f| f.kind == kind).collect();
        if of_kind.is_empty() {
            tests += 1;
            cases.push_str(&format!(
                "    <testcase name=\"{}\" classname=\"plumbline.lint\"/>\n",
                kind.word()
            ));
        }
        for f in of_kind {
            tests += 1;
            let name = format!("{} {}", kind.word(), f.objects.join(" "));
            cases.push_str(&format!(
                "    <testcase name=\"{}\" classname=\"plumbline.lint\">\n      <failure \
                 message=\"{1}\" type=\"{2}\">{1}</failure>\n    </testcase>\n",
                escape(&name),
                escape(&f.message),
                kind.word()
            ));
        }
    }
    let counts = format!(
        "tests=\"{tests}\" failures=\"{}\" errors=\"0\" skipped=\"0\"",
        report.findings.len()
    );
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"plumbline lint\" \
         {counts}>\n  <testsuite name=\"{}\" {counts}>\n{cases}  </testsuite>\n</testsuites>\n",
        escape(level)
    )
}

/// The report as Markdown: the counts, then a table of findings and one of accepted ones.
pub fn lint_markdown(report: &LintReport, level: &str) -> String {
    let mut out = format!(
        "### Plumbline lint: {} finding(s)\n\n{} objects, {} triangles — level `{}`\n",
        report.findings.len(),
        report.objects,
        report.triangles,
        cell(level)
    );
    let table = |rows: &mut String, f: &Finding, extra: &str| {
        let at = round9_vec(f.point).map(|c| format!("{c:.2}")).join(", ");
        rows.push_str(&format!(
            "| {} | {} | {} | ({at}) |{extra}\n",
            f.kind.word(),
            cell(&f.objects.join(", ")),
            cell(&f.message)
        ));
    };
    if !report.findings.is_empty() {
        out.push_str("\n| Finding | Objects | What | Where |\n|---|---|---|---|\n");
        for f in &report.findings {
            table(&mut out, f, "");
        }
    }
    if !report.allowed.is_empty() {
        out.push_str(&format!(
            "\n#### Accepted by the level file ({})\n\n| Finding | Objects | What | Where | Why |\n|---|---|---|---|---|\n",
            report.allowed.len()
        ));
        for (f, why) in &report.allowed {
            table(&mut out, f, &format!(" {} |", cell(why)));
        }
    }
    out
}
