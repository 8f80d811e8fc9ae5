//! Laid-out trees to SVG.
//!
//! Everything is drawn in `currentColor`, so a picture shown inline takes
//! the colour of the text around it (light or dark theme alike); a
//! stand-alone file picks a dark or light ink from the viewer's colour
//! scheme. Every node carries a `<title>` (a tooltip in browsers and
//! editors' webviews) and a class, so a picture can be styled and tested:
//! `node` for a category's box, `word` for a word, `edge` for a line.

use super::layout::{Layout, FONT_SIZE};
use std::fmt::Write;

/// Height of a node's box.
pub const BOX_HEIGHT: f64 = 24.0;
/// Vertical distance from one row to the next.
pub const ROW_HEIGHT: f64 = 52.0;
/// Blank space around the picture.
pub const MARGIN: f64 = 16.0;
/// Space between two trees drawn side by side.
pub const TREE_GAP: f64 = 48.0;
/// Height of the caption line above each tree.
pub const CAPTION_HEIGHT: f64 = 28.0;

/// Where the picture will be shown.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Surface {
    /// A file of its own: chooses its ink from the viewer's colour scheme.
    Standalone,
    /// Inside a page (an editor's webview): takes the page's text colour.
    Inline,
}

/// One tree to draw: its layout, a caption above it, and a tooltip for
/// each node (in the layout's pre-order).
pub struct Drawing {
    pub layout: Layout,
    pub caption: String,
    pub tooltips: Vec<String>,
}

/// Draws `drawings` side by side, left to right, in one SVG document.
pub fn render(drawings: &[Drawing], description: &str, surface: Surface) -> String {
    let rows = drawings.iter().map(|d| d.layout.rows).max().unwrap_or(1);
    let caption = if drawings.iter().any(|d| !d.caption.is_empty()) {
        CAPTION_HEIGHT
    } else {
        0.0
    };
    let captions_width = |d: &Drawing| d.caption.chars().count() as f64 * super::layout::CHAR_WIDTH;
    let widths: Vec<f64> = drawings
        .iter()
        .map(|d| d.layout.width.max(captions_width(d)))
        .collect();
    let content_width: f64 =
        widths.iter().sum::<f64>() + TREE_GAP * drawings.len().saturating_sub(1) as f64;
    let width = (content_width + 2.0 * MARGIN).ceil();
    let height =
        (caption + (rows.saturating_sub(1)) as f64 * ROW_HEIGHT + BOX_HEIGHT + 2.0 * MARGIN).ceil();

    let mut out = String::new();
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"trellis-tree\" \
         width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {width} {height}\" \
         role=\"img\" aria-label=\"{}\" \
         font-family=\"ui-monospace, 'DejaVu Sans Mono', Menlo, Consolas, monospace\" \
         font-size=\"{FONT_SIZE}\">",
        escape(description)
    );
    out.push_str("<style>\n");
    if surface == Surface::Standalone {
        out.push_str(
            ".trellis-tree { color: #1f2328; }\n\
             @media (prefers-color-scheme: dark) { .trellis-tree { color: #e6edf3; } }\n",
        );
    }
    out.push_str(
        ".trellis-tree .edge { stroke: currentColor; stroke-opacity: 0.55; }\n\
         .trellis-tree .node rect { fill: currentColor; fill-opacity: 0.06; stroke: currentColor; stroke-opacity: 0.7; }\n\
         .trellis-tree .word rect { fill: none; stroke: none; }\n\
         .trellis-tree text { fill: currentColor; }\n\
         .trellis-tree .word text { font-style: italic; }\n\
         .trellis-tree .caption { font-weight: bold; }\n",
    );
    out.push_str("</style>\n");
    let _ = writeln!(out, "<title>{}</title>", escape(description));

    let mut left = MARGIN;
    for (drawing, tree_width) in drawings.iter().zip(&widths) {
        let top = MARGIN + caption;
        let shift = left + (tree_width - drawing.layout.width) / 2.0;
        let _ = writeln!(out, "<g class=\"tree\">");
        if !drawing.caption.is_empty() {
            let _ = writeln!(
                out,
                "<text class=\"caption\" x=\"{}\" y=\"{}\">{}</text>",
                fmt(left),
                fmt(MARGIN + FONT_SIZE),
                escape(&drawing.caption)
            );
        }
        let y_of = |row: usize| top + row as f64 * ROW_HEIGHT;
        for node in &drawing.layout.nodes {
            if let Some(p) = node.parent {
                let parent = &drawing.layout.nodes[p];
                let _ = writeln!(
                    out,
                    "<line class=\"edge\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\"/>",
                    fmt(shift + parent.x),
                    fmt(y_of(parent.row) + BOX_HEIGHT),
                    fmt(shift + node.x),
                    fmt(y_of(node.row))
                );
            }
        }
        for (i, node) in drawing.layout.nodes.iter().enumerate() {
            let class = if node.is_word { "word" } else { "node" };
            let x = shift + node.x;
            let y = y_of(node.row);
            let _ = write!(out, "<g class=\"{class}\">");
            if let Some(tip) = drawing.tooltips.get(i).filter(|t| !t.is_empty()) {
                let _ = write!(out, "<title>{}</title>", escape(tip));
            }
            let _ = writeln!(
                out,
                "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" rx=\"4\"/>\
                 <text x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text></g>",
                fmt(x - node.width / 2.0),
                fmt(y),
                fmt(node.width),
                fmt(BOX_HEIGHT),
                fmt(x),
                // The baseline of a 14 px font sits about 0.35 em below the
                // box's middle (common practice for vertical centring).
                fmt(y + BOX_HEIGHT / 2.0 + 0.35 * FONT_SIZE),
                escape(&node.label)
            );
        }
        out.push_str("</g>\n");
        left += tree_width + TREE_GAP;
    }
    out.push_str("</svg>\n");
    out
}

/// A coordinate with at most two decimals.
fn fmt(v: f64) -> String {
    let s = format!("{v:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// Text and attribute values, escaped for XML.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            // Characters XML 1.0 cannot carry at all.
            c if (c as u32) < 0x20 && !matches!(c, '\t' | '\n' | '\r') => out.push('\u{FFFD}'),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn coordinates_are_short() {
        assert_eq!(fmt(12.0), "12");
        assert_eq!(fmt(12.5), "12.5");
        assert_eq!(fmt(1.0 / 3.0), "0.33");
        assert_eq!(fmt(-0.001), "0");
    }

    #[test]
    fn markup_in_labels_is_escaped() {
        assert_eq!(escape("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
        assert_eq!(escape("bell\u{7}"), "bell\u{FFFD}");
    }
}
