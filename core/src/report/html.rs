//! A self-contained HTML report: the counts, a table of probes that filters by verdict (failing,
//! erring and changed probes shown at first, passing ones a tick away), each row
//! with its pictures as thumbnails that open large on a click. Pictures are embedded in the file,
//! so it can be passed around alone. Stable: the same run gives the same bytes.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use super::junit::escape;
use crate::atomic::{AtomicFile, Spill};
use crate::check::{ProbeResult, Summary, Verdict};

/// Rows of probes that pass or have no expectation, beyond which they are counted, not listed:
/// every failing, erring or changed probe is always listed. Ours: a page a browser opens at once.
pub const MAX_QUIET_ROWS: usize = 5_000;

/// Writes the HTML report probe by probe: rows go to a scratch file, and [`HtmlWriter::finish`]
/// writes the page around them.
pub struct HtmlWriter {
    path: PathBuf,
    rows: Spill,
    quiet_rows: usize,
    quiet_left_out: usize,
}

impl HtmlWriter {
    /// Starts the report at `path`.
    pub fn create(path: &Path) -> io::Result<HtmlWriter> {
        Ok(HtmlWriter {
            path: path.to_path_buf(),
            rows: Spill::beside(path, "rows")?,
            quiet_rows: 0,
            quiet_left_out: 0,
        })
    }

    /// Adds the row of the next result: its label, whether it changed since the baseline, and its
    /// pictures (caption, PNG bytes).
    pub fn push(
        &mut self,
        label: Option<&str>,
        r: &ProbeResult,
        changed: bool,
        pictures: &[(String, Vec<u8>)],
    ) -> io::Result<()> {
        let quiet = matches!(r.verdict, Verdict::Pass | Verdict::Unchecked) && !changed;
        if quiet {
            if self.quiet_rows == MAX_QUIET_ROWS {
                self.quiet_left_out += 1;
                return Ok(());
            }
            self.quiet_rows += 1;
        }
        let verdict = r.verdict.word();
        let images: String = pictures
            .iter()
            .map(|(caption, png)| {
                format!(
                    "<figure><img class=\"thumb\" alt=\"{0}\" title=\"{0}\" \
                     src=\"{1}\"><figcaption>{0}</figcaption></figure>",
                    escape(caption),
                    png_data_uri(png)
                )
            })
            .collect();
        let label = label.map_or(String::new(), |l| {
            format!("<div class=\"label\">{}</div>", escape(l))
        });
        writeln!(
            self.rows,
            "<tr class=\"{verdict}{changed}\"><td><code>{id}</code>{label}</td><td>{kind}</td>\
             <td class=\"verdict\">{verdict}{mark}</td><td>{reason}</td><td class=\"pictures\">{images}</td></tr>",
            changed = if changed { " changed" } else { "" },
            id = escape(&r.id),
            kind = r.kind,
            mark = if changed {
                " <span class=\"delta\">changed</span>"
            } else {
                ""
            },
            reason = escape(&r.reason),
        )
    }

    /// Writes the page atomically: title and counts for `level`, the filter, the table.
    pub fn finish(self, summary: &Summary, level: &str, changed: usize) -> io::Result<()> {
        let s = summary;
        let mut file = AtomicFile::create(&self.path)?;
        write!(
            file,
            "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n\
             <title>Plumbline check: {pass} of {probes} pass</title>\n<style>{STYLE}</style></head>\n\
             <body>\n<h1>Plumbline check: {pass} of {probes} probes pass</h1>\n\
             <p>{pass} pass · {fail} fail · {error} error · {unchecked} unchecked · {changed} changed \
             since the baseline — level <code>{level}</code></p>\n\
             <p class=\"filter\">Show: <label><input type=\"checkbox\" value=\"fail\" checked> fail</label>\
             <label><input type=\"checkbox\" value=\"error\" checked> error</label>\
             <label><input type=\"checkbox\" value=\"changed\" checked> changed</label>\
             <label><input type=\"checkbox\" value=\"pass\"> pass</label>\
             <label><input type=\"checkbox\" value=\"unchecked\"> unchecked</label></p>\n\
             <table><thead><tr><th>Probe</th><th>Kind</th><th>Verdict</th><th>Reason</th>\
             <th>Pictures</th></tr></thead><tbody>\n",
            pass = s.pass,
            probes = s.probes,
            fail = s.fail,
            error = s.error,
            unchecked = s.unchecked,
            level = escape(level),
        )?;
        self.rows.copy_into(&mut file)?;
        file.write_all(b"</tbody></table>\n")?;
        if self.quiet_left_out > 0 {
            writeln!(
                file,
                "<p>{} more passing or unchecked probes are not listed.</p>",
                self.quiet_left_out
            )?;
        }
        write!(
            file,
            "<div id=\"large\" hidden><img alt=\"\"><p></p></div>\n<script>{SCRIPT}</script>\n</body></html>\n"
        )?;
        file.commit()
    }
}

const STYLE: &str = "body{font:14px/1.4 system-ui,sans-serif;margin:1.5em;color:#1d2229}\
table{border-collapse:collapse;width:100%}th,td{border-bottom:1px solid #d5d9de;padding:6px 8px;\
text-align:left;vertical-align:top}th{background:#eef1f4}.label{color:#5a626c;font-size:12px}\
tr.fail .verdict{color:#b34700;font-weight:600}tr.error .verdict{color:#8f3b76;font-weight:600}\
tr.pass .verdict{color:#00785a}.delta{color:#7a6a00;font-weight:400}\
td.pictures{white-space:nowrap}figure{display:inline-block;margin:0 8px 4px 0}\
figcaption{font-size:11px;color:#5a626c}.thumb{width:192px;cursor:zoom-in;border:1px solid #c5cad0}\
.filter label{margin-right:1em}#large{position:fixed;inset:0;background:rgba(10,12,16,.88);\
display:flex;flex-direction:column;align-items:center;justify-content:center;cursor:zoom-out}\
#large[hidden]{display:none}#large img{max-width:96vw;max-height:88vh}#large p{color:#e1e4e8}";

const SCRIPT: &str = "const boxes=[...document.querySelectorAll('.filter input')];\
function shown(row){return boxes.some(b=>b.checked&&row.classList.contains(b.value));}\
function filter(){for(const row of document.querySelectorAll('tbody tr')){row.hidden=!shown(row);}}\
boxes.forEach(b=>b.addEventListener('change',filter));filter();\
const large=document.getElementById('large');\
for(const t of document.querySelectorAll('.thumb')){t.addEventListener('click',()=>{\
large.querySelector('img').src=t.src;large.querySelector('p').textContent=t.title;large.hidden=false;});}\
large.addEventListener('click',()=>{large.hidden=true;});";

/// A `data:` URI of PNG bytes: standard base64 with padding (RFC 4648 §4; RFC 2397).
fn png_data_uri(png: &[u8]) -> String {
    use base64::Engine;
    format!(
        "data:image/png;base64,{}",
        base64::engine::general_purpose::STANDARD.encode(png)
    )
}

#[cfg(test)]
mod tests {
    use super::png_data_uri;

    /// The test vectors of RFC 4648 §10.
    #[test]
    fn pictures_are_embedded_as_the_rfc_encodes_them() {
        for (text, encoded) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(
                png_data_uri(text.as_bytes()),
                format!("data:image/png;base64,{encoded}")
            );
        }
    }
}
