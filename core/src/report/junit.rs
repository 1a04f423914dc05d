//! JUnit XML: one test case per probe, so CI systems show probe failures like test failures. Written
//! as the check goes ([`JunitWriter`]): the test cases to a scratch file, then the counts the suite
//! opens with, then the cases, so a run of any size holds none of them in memory.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use crate::atomic::{AtomicFile, Spill};
use crate::check::{ProbeResult, Summary, Verdict};

/// Writes a JUnit XML report probe by probe. Failing probes carry their reason as the failure
/// message; probes without an expectation are reported as skipped; probes that could not be
/// answered as errors.
pub struct JunitWriter {
    path: PathBuf,
    cases: Spill,
}

impl JunitWriter {
    /// Starts the report at `path`.
    pub fn create(path: &Path) -> io::Result<JunitWriter> {
        Ok(JunitWriter {
            path: path.to_path_buf(),
            cases: Spill::beside(path, "cases")?,
        })
    }

    /// Adds the test case of the next result, with the paths of its pictures as attachments (the
    /// `[[ATTACHMENT|path]]` lines in `system-out` that common CI systems show beside the case).
    pub fn push(&mut self, r: &ProbeResult, attachments: &[String]) -> io::Result<()> {
        let open = format!(
            "    <testcase name=\"{}\" classname=\"plumbline.{}\"",
            escape(&r.id),
            escape(r.kind.name())
        );
        let attached: String = attachments
            .iter()
            .map(|path| format!("[[ATTACHMENT|{}]]\n", escape(path)))
            .collect();
        let out = if attached.is_empty() {
            String::new()
        } else {
            format!("      <system-out>{attached}</system-out>\n")
        };
        let inner = match r.verdict {
            Verdict::Pass if out.is_empty() => {
                return self.cases.write_all(format!("{open}/>\n").as_bytes());
            }
            Verdict::Pass => String::new(),
            Verdict::Fail => format!(
                "      <failure message=\"{0}\" type=\"expectation\">{0}</failure>\n",
                escape(&r.reason)
            ),
            Verdict::Error => format!(
                "      <error message=\"{0}\" type=\"unanswerable\">{0}</error>\n",
                escape(&r.reason)
            ),
            Verdict::Unchecked => format!(
                "      <skipped message=\"no expectation: {}\"/>\n",
                escape(&r.reason)
            ),
        };
        let case = format!("{open}>\n{inner}{out}    </testcase>\n");
        self.cases.write_all(case.as_bytes())
    }

    /// Writes the report atomically with the run's counts, for a suite named `suite` (the probe
    /// set's file name).
    pub fn finish(self, suite: &str, s: &Summary) -> io::Result<()> {
        let mut file = AtomicFile::create(&self.path)?;
        let counts = format!(
            "tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"{}\"",
            s.probes, s.fail, s.error, s.unchecked
        );
        write!(
            file,
            "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"plumbline\" {counts}>\n  \
             <testsuite name=\"{}\" {counts}>\n",
            escape(suite)
        )?;
        self.cases.copy_into(&mut file)?;
        file.write_all(b"  </testsuite>\n</testsuites>\n")?;
        file.commit()
    }
}

/// Escapes text for XML attributes and content; drops characters XML 1.0 cannot hold.
pub(super) fn escape(text: &str) -> String {
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
