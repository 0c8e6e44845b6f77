//! A small HTML writer: escaping, the page shell with its print style, tables whose figures carry
//! their field name (so a reader or a test can find each number), and the common sections.

use std::fmt::Write;

use crate::rounding::{Figure, ROUNDING_NOTE};

/// Text with `&`, `<`, `>`, `"` and `'` escaped, safe inside elements and quoted attributes.
pub fn esc(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            _ => o.push(c),
        }
    }
    o
}

/// The print and screen style: one column, A4 and Letter both fit (180 mm of text), tables and
/// figures kept whole across pages, verdicts in words with a colour beside them.
const STYLE: &str = r#"
@page { margin: 14mm 14mm 16mm 14mm; }
html { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; font-size: 10pt; color: #1d2327; }
body { max-width: 180mm; margin: 0 auto; padding: 6mm 0; }
h1 { font-size: 16pt; margin: 0 0 2mm 0; }
h2 { font-size: 12pt; margin: 6mm 0 2mm 0; border-bottom: 1px solid #9aa4ab; padding-bottom: 1mm; }
p { margin: 1.5mm 0; line-height: 1.35; }
.sub { color: #4a555c; margin-bottom: 4mm; }
table { border-collapse: collapse; width: 100%; margin: 2mm 0; page-break-inside: auto; }
tr { page-break-inside: avoid; }
th, td { border-bottom: 1px solid #d3d9dd; padding: 1mm 1.5mm; text-align: left; vertical-align: top; }
th { background: #eef1f3; font-weight: 600; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.kv th { width: 45%; background: none; font-weight: normal; color: #4a555c; }
table.narrow { font-size: 8.5pt; }
table.wide { font-size: 7pt; }
table.wide th, table.wide td { padding: 0.8mm 0.7mm; }
table.wide td:first-child { white-space: nowrap; }
figure { margin: 3mm 0; page-break-inside: avoid; }
figcaption { font-size: 8.5pt; color: #4a555c; }
svg { width: 100%; height: auto; }
.verdict { font-weight: 700; padding: 0 1.5mm; border-radius: 1mm; }
.v-consistent, .v-ok { background: #d9efe1; color: #14532d; }
.v-short, .v-biased, .v-drift, .v-step { background: #f8d7d3; color: #7a1d12; }
.v-excess { background: #fde9c8; color: #6b3d00; }
.v-inconclusive, .v-not-enough-data { background: #e4e7ea; color: #333b40; }
.caution { border-left: 3px solid #b45309; padding-left: 3mm; font-size: 9pt; }
.small { font-size: 8.5pt; color: #4a555c; }
footer { margin-top: 8mm; font-size: 8pt; color: #5b666d; }
@media print { h2 { page-break-after: avoid; } }
"#;

/// A document being written.
pub struct Doc {
    out: String,
}

impl Doc {
    /// A new document with its title (escaped here).
    pub fn new(title: &str) -> Self {
        let mut out = String::with_capacity(64 * 1024);
        let _ = write!(
            out,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta name=\"generator\" content=\"cryoledger {}\">\n<title>{}</title>\n<style>{}</style>\n</head>\n<body>\n",
            env!("CARGO_PKG_VERSION"),
            esc(title),
            STYLE
        );
        Doc { out }
    }

    /// Raw markup (the caller escapes what it interpolates).
    pub fn raw(&mut self, s: &str) {
        self.out.push_str(s);
    }

    /// A heading of level 1 or 2.
    pub fn heading(&mut self, level: u8, text: &str) {
        let _ = writeln!(self.out, "<h{level}>{}</h{level}>", esc(text));
    }

    /// A paragraph of plain text.
    pub fn para(&mut self, text: &str) {
        let _ = writeln!(self.out, "<p>{}</p>", esc(text));
    }

    /// A paragraph with a class.
    pub fn para_class(&mut self, class: &str, text: &str) {
        let _ = writeln!(self.out, "<p class=\"{class}\">{}</p>", esc(text));
    }

    /// A two-column table of label and value cells.
    pub fn key_values(&mut self, rows: &[(&str, Cell)]) {
        self.out.push_str("<table class=\"kv\">\n");
        for (k, v) in rows {
            let _ = writeln!(self.out, "<tr><th>{}</th>{}</tr>", esc(k), v.td());
        }
        self.out.push_str("</table>\n");
    }

    /// A table with a header row.
    pub fn table(&mut self, class: &str, head: &[&str], rows: &[Vec<Cell>]) {
        let _ = write!(self.out, "<table class=\"{class}\">\n<thead><tr>");
        for h in head {
            let _ = write!(self.out, "<th>{}</th>", esc(h));
        }
        self.out.push_str("</tr></thead>\n<tbody>\n");
        for r in rows {
            self.out.push_str("<tr>");
            for c in r {
                self.out.push_str(&c.td());
            }
            self.out.push_str("</tr>\n");
        }
        self.out.push_str("</tbody></table>\n");
    }

    /// A figure: inline SVG and its caption.
    pub fn figure(&mut self, svg: &str, caption: &str) {
        let _ = writeln!(
            self.out,
            "<figure>{svg}<figcaption>{}</figcaption></figure>",
            esc(caption)
        );
    }

    /// The cautions, the rounding note and the footer; closes the document.
    pub fn finish(mut self, generated: &str) -> String {
        self.heading(2, "Cautions");
        for c in tank::CAUTIONS {
            self.para_class("caution", c);
        }
        self.para_class("small", ROUNDING_NOTE);
        let _ = writeln!(
            self.out,
            "<footer>Written by cryoledger {} on {}. Times are UTC.</footer>\n</body>\n</html>",
            env!("CARGO_PKG_VERSION"),
            esc(generated)
        );
        self.out
    }
}

/// One table cell: text, or a figure that names its field and keeps its unrounded value.
pub enum Cell {
    /// Plain text.
    Text(String),
    /// A verdict or status word with its colour class.
    Word(String),
    /// A figure, rounded by its kind, with its field name and unrounded value as data attributes.
    Num {
        /// The field's name (as in the audit's JSON where there is one).
        field: &'static str,
        /// The kind of figure.
        fig: Figure,
        /// The value.
        value: f64,
    },
    /// A figure with no field name.
    Plain(Figure, f64),
}

impl Cell {
    /// A text cell.
    pub fn t(s: impl Into<String>) -> Cell {
        Cell::Text(s.into())
    }
    /// A named figure.
    pub fn n(field: &'static str, fig: Figure, value: f64) -> Cell {
        Cell::Num { field, fig, value }
    }
    /// An optional named figure ("—" when absent).
    pub fn on(field: &'static str, fig: Figure, value: Option<f64>) -> Cell {
        match value {
            Some(v) => Cell::n(field, fig, v),
            None => Cell::t("—"),
        }
    }

    fn td(&self) -> String {
        match self {
            Cell::Text(s) => format!("<td>{}</td>", esc(s)),
            Cell::Word(w) => {
                let class = w.replace(' ', "-");
                format!(
                    "<td><span class=\"verdict v-{}\">{}</span></td>",
                    esc(&class),
                    esc(w)
                )
            }
            Cell::Num { field, fig, value } => format!(
                "<td class=\"n\" data-field=\"{field}\" data-value=\"{}\">{}</td>",
                if value.is_finite() {
                    format!("{value:e}")
                } else {
                    String::new()
                },
                fig.text(*value)
            ),
            Cell::Plain(fig, value) => format!("<td class=\"n\">{}</td>", fig.text(*value)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Escaping per the HTML standard's five special characters: common practice, no source.
    #[test]
    fn text_is_escaped() {
        assert_eq!(
            esc("<a href=\"x\">'&'</a>"),
            "&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;"
        );
    }
}
