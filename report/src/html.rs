//! Page assembly: one self-contained HTML document (inline CSS, inline SVG, no scripts, fonts,
//! images or links to anything outside the file), with a header, a written summary, a caution
//! block, a table of contents and the sections.
//!
//! Every string that comes from the user or the data (titles, column names, subject ids, file
//! names) passes through [`escape`]; `text_html` of a [`Section`] is markup the section
//! builders write themselves, with every such string escaped.

use std::fmt::Write as _;

use serde::Serialize;

use super::svg::escape;

/// A figure: an SVG document and its caption.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Figure {
    /// Identifier, unique in the report (an HTML id).
    pub id: String,
    /// Short title.
    pub title: String,
    /// The SVG document (or, for a table, an HTML table).
    pub svg: String,
    /// What the figure shows and how it was made (plain text, escaped on output).
    pub caption: String,
}

/// One section of the report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Section {
    /// Identifier, unique in the report (an HTML id and the key of its numbers in the JSON).
    pub id: String,
    /// Heading.
    pub title: String,
    /// Paragraphs (markup written by the section builder, user strings escaped).
    pub text_html: String,
    /// Figures, in order.
    pub figures: Vec<Figure>,
    /// Every number the section shows.
    pub numbers: serde_json::Value,
}

/// The fixed caution shown at the top of every report.
pub const CAUTION: &str = "Exploratory analysis only, not clinical advice. Patterns shown here \
are descriptive and may reflect chance, measurement or who stayed in follow-up. Keep patient \
data de-identified and check the use of this file against your local data-governance rules \
before sharing it.";

const CSS: &str = "\
body{font-family:sans-serif;font-size:14px;line-height:1.45;color:#111;max-width:1040px;\
margin:0 auto;padding:16px}\
h1{font-size:22px;margin:8px 0}h2{font-size:18px;border-bottom:1px solid #ccc;\
padding-bottom:2px;margin-top:28px}\
.meta{color:#444;font-size:13px}\
.summary{background:#f4f7fb;border-left:4px solid #0072B2;padding:8px 12px}\
.caution{background:#fff6e5;border-left:4px solid #E69F00;padding:8px 12px}\
figure{margin:16px 0;break-inside:avoid;page-break-inside:avoid}\
figure svg{max-width:100%;height:auto}\
figcaption{font-size:13px;color:#333;max-width:820px}\
table{border-collapse:collapse;font-size:13px;margin:8px 0}\
th,td{border:1px solid #ccc;padding:2px 8px;text-align:right}\
th{background:#f0f0f0}td:first-child,th:first-child{text-align:left}\
nav ol{margin:4px 0}\
@media print{body{max-width:none;padding:0}nav{display:none}h2{break-after:avoid}}";

/// An HTML table; every cell is escaped.
///
/// # Examples
/// ```
/// use trajweave_report::html::table;
/// let t = table(&["name", "n"], &[vec!["<b>".into(), "3".into()]]);
/// assert_eq!(t, "<table><thead><tr><th>name</th><th>n</th></tr></thead><tbody><tr><td>&lt;b&gt;</td><td>3</td></tr></tbody></table>");
/// ```
pub fn table(header: &[&str], rows: &[Vec<String>]) -> String {
    let mut s = String::from("<table><thead><tr>");
    for h in header {
        let _ = write!(s, "<th>{}</th>", escape(h));
    }
    s.push_str("</tr></thead><tbody>");
    for row in rows {
        s.push_str("<tr>");
        for cell in row {
            let _ = write!(s, "<td>{}</td>", escape(cell));
        }
        s.push_str("</tr>");
    }
    s.push_str("</tbody></table>");
    s
}

/// A paragraph of plain text (escaped).
///
/// # Examples
/// ```
/// use trajweave_report::html::paragraph;
/// assert_eq!(paragraph("a < b"), "<p>a &lt; b</p>");
/// ```
pub fn paragraph(text: &str) -> String {
    format!("<p>{}</p>", escape(text))
}

/// The whole page. `meta` lines (source file, data columns) and `summary` are plain text and
/// are escaped.
///
/// # Examples
/// ```
/// use trajweave_report::html::page;
/// let html = page("My <report>", &["Data: a.csv".into()], "Nothing yet.", &[]);
/// assert!(html.starts_with("<!DOCTYPE html>") && html.contains("<h1>My &lt;report&gt;</h1>"));
/// ```
pub fn page(title: &str, meta: &[String], summary: &str, sections: &[Section]) -> String {
    let mut s = String::with_capacity(1 << 16);
    let t = escape(title);
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"/>\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\
         <title>{t}</title><style>{CSS}</style></head><body><header><h1>{t}</h1>"
    );
    for line in meta {
        let _ = write!(s, "<div class=\"meta\">{}</div>", escape(line));
    }
    let _ = write!(
        s,
        "</header><section class=\"summary\" id=\"summary\"><h2>Summary</h2>{}</section>\
         <div class=\"caution\" role=\"note\"><strong>Caution.</strong> {}</div>\
         <nav><h2>Contents</h2><ol>",
        paragraph(summary),
        escape(CAUTION)
    );
    for sec in sections {
        let _ = write!(
            s,
            "<li><a href=\"#{}\">{}</a></li>",
            escape(&sec.id),
            escape(&sec.title)
        );
    }
    s.push_str("</ol></nav>");
    for sec in sections {
        let _ = write!(
            s,
            "<section id=\"{}\"><h2>{}</h2>{}",
            escape(&sec.id),
            escape(&sec.title),
            sec.text_html
        );
        for f in &sec.figures {
            let _ = write!(
                s,
                "<figure id=\"{}\">{}<figcaption><strong>{}.</strong> {}</figcaption></figure>",
                escape(&f.id),
                f.svg,
                escape(&f.title),
                escape(&f.caption)
            );
        }
        s.push_str("</section>");
    }
    s.push_str("</body></html>\n");
    s
}

#[cfg(test)]
mod tests {
    use super::super::svg::tests::well_formed;
    use super::*;

    #[test]
    fn page_is_well_formed_and_escaped() {
        let evil = "<script>alert(1)</script>";
        let sec = Section {
            id: "a".into(),
            title: evil.into(),
            text_html: paragraph(evil),
            figures: vec![Figure {
                id: "f".into(),
                title: evil.into(),
                svg: table(&[evil], &[vec![evil.into()]]),
                caption: evil.into(),
            }],
            numbers: serde_json::Value::Null,
        };
        let html = page(evil, &[format!("file: {evil}.csv")], evil, &[sec]);
        assert!(!html.contains("<script"));
        let body = html.split_once('\n').unwrap().1; // after the doctype line
        let seen = well_formed(body).unwrap();
        for tag in ["html", "head", "style", "nav", "section", "figure", "table"] {
            assert!(seen.iter().any(|s| s == tag), "{tag} missing");
        }
        assert!(html.contains("not clinical advice"));
        // Self-contained: nothing fetched from elsewhere.
        for bad in [
            "http://", "https://", "src=", "<link", "<img", "@import", "url(",
        ] {
            assert!(!html.contains(bad), "{bad} found");
        }
    }
}
