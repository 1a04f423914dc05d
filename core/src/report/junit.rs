//! JUnit XML: one test case per probe, so CI systems show probe failures like test failures.

use crate::check::{ResultsFile, Verdict};

/// The JUnit XML report of a run. Failing probes carry their reason as the failure message; probes
/// without an expectation are reported as skipped; probes that could not be answered as errors.
pub fn junit_xml(results: &ResultsFile, suite_name: &str) -> String {
    let s = &results.summary;
    let mut out = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    out.push_str(&format!(
        "<testsuites name=\"plumbline\" tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"{}\">\n",
        s.probes, s.fail, s.error, s.unchecked
    ));
    out.push_str(&format!(
        "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"{}\">\n",
        escape(suite_name),
        s.probes,
        s.fail,
        s.error,
        s.unchecked
    ));
    for r in &results.results {
        let open = format!(
            "    <testcase name=\"{}\" classname=\"plumbline.{}\"",
            escape(&r.id),
            escape(r.kind.name())
        );
        match r.verdict {
            Verdict::Pass => out.push_str(&format!("{open}/>\n")),
            Verdict::Fail => out.push_str(&format!(
                "{open}>\n      <failure message=\"{0}\" type=\"expectation\">{0}</failure>\n    </testcase>\n",
                escape(&r.reason)
            )),
            Verdict::Error => out.push_str(&format!(
                "{open}>\n      <error message=\"{0}\" type=\"unanswerable\">{0}</error>\n    </testcase>\n",
                escape(&r.reason)
            )),
            Verdict::Unchecked => out.push_str(&format!(
                "{open}>\n      <skipped message=\"no expectation: {}\"/>\n    </testcase>\n",
                escape(&r.reason)
            )),
        }
    }
    out.push_str("  </testsuite>\n</testsuites>\n");
    out
}

/// Escapes text for XML attributes and content; drops characters XML 1.0 cannot hold.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 => {}
            c => out.push(c),
        }
    }
    out
}
