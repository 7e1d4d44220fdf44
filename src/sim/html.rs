//! A self-contained HTML report: sections of tables, notes and inline SVG
//! figures in one file, with its own style sheet and no script, font or
//! other resource from outside, so it opens from disk in any browser.
//!
//! Commands fill a [`Report`] with [`Section`]s; any analysis can add its own
//! (transient figures, tolerance histograms) without this module knowing it.
//! Every figure is a `<figure class="plot" id="plot-…">` holding one `<svg>`.

use std::fmt::Write as _;

/// A whole report.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Report {
    /// Page title and heading.
    pub title: String,
    /// Sections in order.
    pub sections: Vec<Section>,
    /// Closing note (cautions), plain text.
    pub footer: String,
}

/// One section: a heading and blocks.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Section {
    /// Heading.
    pub heading: String,
    /// Content in order.
    pub blocks: Vec<Block>,
}

/// A piece of a section.
#[derive(Clone, Debug, PartialEq)]
pub enum Block {
    /// A paragraph of plain text.
    Note(String),
    /// A table: header cells, then rows of cells (plain text).
    Table {
        /// Header cells.
        head: Vec<String>,
        /// Rows of cells.
        rows: Vec<Vec<String>>,
    },
    /// A figure: an SVG document inline.
    Figure {
        /// Unique name; the element's id is `plot-<id>`.
        id: String,
        /// Caption, plain text.
        caption: String,
        /// The SVG.
        svg: String,
    },
}

impl Section {
    /// A section with a heading and no blocks yet.
    pub fn new(heading: impl Into<String>) -> Self {
        Self { heading: heading.into(), blocks: Vec::new() }
    }

    /// Add a block.
    pub fn with(mut self, block: Block) -> Self {
        self.blocks.push(block);
        self
    }
}

const STYLE: &str = "
body { margin: 0; background: #f4f3ef; color: #23282b;
  font: 15px/1.45 system-ui, -apple-system, 'Segoe UI', sans-serif; }
header { background: #1b6f6a; color: #fdfcf8; padding: 18px 28px; }
header h1 { margin: 0; font-size: 22px; font-weight: 600; }
main { max-width: 1160px; margin: 0 auto; padding: 8px 28px 32px; }
section { margin-top: 26px; }
h2 { font-size: 17px; font-weight: 600; border-bottom: 2px solid #c86b1f;
  display: inline-block; padding-bottom: 2px; margin: 0 0 12px; }
table { border-collapse: collapse; background: #fdfcf8; margin: 6px 0 12px; }
th, td { text-align: left; padding: 5px 12px; border-bottom: 1px solid #dedbd2;
  vertical-align: top; font-variant-numeric: tabular-nums; }
th { background: #e8e5dc; font-weight: 600; }
figure { margin: 12px 0 20px; background: #fdfcf8; padding: 8px;
  border: 1px solid #dedbd2; }
figure svg { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 13px; color: #5b6166; margin-top: 4px; }
p.note { max-width: 900px; }
footer { max-width: 1160px; margin: 0 auto; padding: 12px 28px 40px;
  font-size: 13px; color: #5b6166; }
";

impl Report {
    /// The page as one HTML document.
    pub fn render(&self) -> String {
        let mut out = String::with_capacity(1 << 20);
        let title = escape(&self.title);
        let _ = write!(
            out,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
             <title>{title}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n\
             <header><h1>{title}</h1></header>\n<main>\n"
        );
        for section in &self.sections {
            render_section(&mut out, section);
        }
        let _ =
            write!(out, "</main>\n<footer>{}</footer>\n</body>\n</html>\n", escape(&self.footer));
        out
    }
}

fn render_section(out: &mut String, section: &Section) {
    let _ = writeln!(out, "<section>\n<h2>{}</h2>", escape(&section.heading));
    for block in &section.blocks {
        match block {
            Block::Note(text) => {
                let _ = writeln!(out, "<p class=\"note\">{}</p>", escape(text));
            }
            Block::Table { head, rows } => render_table(out, head, rows),
            Block::Figure { id, caption, svg } => {
                let _ = writeln!(
                    out,
                    "<figure class=\"plot\" id=\"plot-{}\">\n{}\n<figcaption>{}</figcaption>\n</figure>",
                    escape(id),
                    strip_prolog(svg),
                    escape(caption)
                );
            }
        }
    }
    out.push_str("</section>\n");
}

fn render_table(out: &mut String, head: &[String], rows: &[Vec<String>]) {
    out.push_str("<table>\n");
    if !head.is_empty() {
        out.push_str("<tr>");
        for h in head {
            let _ = write!(out, "<th>{}</th>", escape(h));
        }
        out.push_str("</tr>\n");
    }
    for row in rows {
        out.push_str("<tr>");
        for cell in row {
            let _ = write!(out, "<td>{}</td>", escape(cell));
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</table>\n");
}

/// The SVG element alone, without an XML declaration before it.
fn strip_prolog(svg: &str) -> &str {
    svg.find("<svg").map_or(svg, |k| &svg[k..])
}

/// Text for HTML: `&`, `<`, `>` and `"` escaped.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_and_text_are_placed_and_escaped() {
        let report = Report {
            title: "a < b".into(),
            sections: vec![Section::new("S & T").with(Block::Note("x > y".into())).with(
                Block::Figure {
                    id: "one".into(),
                    caption: "c".into(),
                    svg: "<?xml version=\"1.0\"?>\n<svg></svg>".into(),
                },
            )],
            footer: String::new(),
        };
        let html = report.render();
        assert!(html.contains("<title>a &lt; b</title>"));
        assert!(html.contains("<h2>S &amp; T</h2>"));
        assert!(html.contains("<figure class=\"plot\" id=\"plot-one\">\n<svg></svg>"));
        assert!(!html.contains("<?xml"));
    }
}
