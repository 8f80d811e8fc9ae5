//! A tidy layout for parse trees whose words sit on one baseline.
//!
//! The method is Reingold and Tilford's (1981, "Tidier drawings of trees",
//! IEEE Trans. Software Eng. SE-7(2)): lay out each subtree on its own,
//! then push each next sibling subtree right until, on every row the two
//! share, its left contour clears the right contour of the siblings
//! already placed by a fixed gap; centre the parent over its first and
//! last child. Two departures serve a parse tree: the words are drawn on
//! one baseline under the deepest node (so they read as the sentence), and
//! the walk is iterative (trees may be a thousand levels deep).
//!
//! Widths come from the label's length in a monospaced font, so the
//! picture needs no font metrics and the same tree always lays out the
//! same way.

/// A tree to lay out: labelled boxes, each child list in order; leaves
/// (nodes without children) are the words.
#[derive(Clone, Debug, PartialEq)]
pub struct Shape {
    pub label: String,
    pub children: Vec<Shape>,
}

impl Drop for Shape {
    /// Takes deep trees apart without recursing.
    fn drop(&mut self) {
        let mut stack = std::mem::take(&mut self.children);
        while let Some(mut shape) = stack.pop() {
            stack.append(&mut shape.children);
        }
    }
}

/// Where a node was put: its centre, its row and its box width.
#[derive(Clone, Debug, PartialEq)]
pub struct Placed {
    /// Index of the parent in the placement list (`None` for the root).
    pub parent: Option<usize>,
    pub label: String,
    /// Horizontal centre, in pixels from the left edge of the picture.
    pub x: f64,
    /// Row: 0 for the root; every word is on the last row.
    pub row: usize,
    pub width: f64,
    pub is_word: bool,
}

/// A laid-out tree: nodes in pre-order (each parent before its children,
/// the words left to right), and the size of the picture.
#[derive(Clone, Debug, PartialEq)]
pub struct Layout {
    pub nodes: Vec<Placed>,
    pub width: f64,
    pub rows: usize,
}

/// Horizontal advance of one character of the picture's monospaced font,
/// at `FONT_SIZE` (0.6 em is the advance of the common monospaced faces;
/// common practice).
pub const CHAR_WIDTH: f64 = 8.4;
/// Font size of labels and words, in pixels.
pub const FONT_SIZE: f64 = 14.0;
/// Padding inside a node's box, each side.
pub const BOX_PADDING: f64 = 6.0;
/// Narrowest box.
pub const MIN_BOX: f64 = 24.0;
/// Least horizontal space between two boxes on one row.
pub const GAP: f64 = 10.0;

/// The width of the box that holds `label`.
pub fn box_width(label: &str) -> f64 {
    (label.chars().count() as f64 * CHAR_WIDTH + 2.0 * BOX_PADDING).max(MIN_BOX)
}

/// Lays `tree` out; the leftmost box starts at x = 0.
pub fn layout(tree: &Shape) -> Layout {
    // Flatten into pre-order with parent links, iteratively.
    let mut flat: Vec<(&Shape, Option<usize>, usize)> = Vec::new();
    let mut stack = vec![(tree, None, 0usize)];
    while let Some((node, parent, depth)) = stack.pop() {
        let index = flat.len();
        flat.push((node, parent, depth));
        for child in node.children.iter().rev() {
            stack.push((child, Some(index), depth + 1));
        }
    }
    let baseline = flat
        .iter()
        .filter(|(n, _, _)| n.children.is_empty())
        .map(|&(_, _, d)| d)
        .max()
        .unwrap_or(0);
    let row_of = |i: usize| {
        let (node, _, depth) = flat[i];
        if node.children.is_empty() {
            baseline
        } else {
            depth
        }
    };
    let mut children: Vec<Vec<usize>> = vec![Vec::new(); flat.len()];
    for (i, &(_, parent, _)) in flat.iter().enumerate() {
        if let Some(p) = parent {
            children[p].push(i);
        }
    }

    // Bottom-up: each node's children get offsets relative to the node's
    // centre, and each node gets its subtree's contour: for every row from
    // its own down to the baseline, the leftmost and rightmost extent
    // relative to its centre (`None` for a row the subtree skips).
    let mut offset = vec![0.0; flat.len()];
    let mut contours: Vec<Option<Contour>> = vec![None; flat.len()];
    for i in (0..flat.len()).rev() {
        let width = box_width(&flat[i].0.label);
        let row = row_of(i);
        let mut own = Contour::new(row, baseline);
        own.widen(row, -width / 2.0, width / 2.0);
        if children[i].is_empty() {
            contours[i] = Some(own);
            continue;
        }
        // Place the children left to right, relative to the first one.
        let mut forest = Contour::new(row + 1, baseline);
        let mut positions = Vec::with_capacity(children[i].len());
        for (k, &c) in children[i].iter().enumerate() {
            let sub = contours[c]
                .take()
                .unwrap_or_else(|| Contour::new(row + 1, baseline));
            let shift = if k == 0 {
                0.0
            } else {
                forest.clearance(&sub) + GAP
            };
            forest.absorb(&sub, shift);
            positions.push(shift);
        }
        let centre = (positions[0] + positions[positions.len() - 1]) / 2.0;
        for (&c, &p) in children[i].iter().zip(&positions) {
            offset[c] = p - centre;
        }
        own.absorb(&forest, -centre);
        contours[i] = Some(own);
    }

    // Top-down: absolute centres.
    let mut x = vec![0.0; flat.len()];
    for i in 1..flat.len() {
        if let Some(p) = flat[i].1 {
            x[i] = x[p] + offset[i];
        }
    }
    let mut left = f64::INFINITY;
    let mut right = f64::NEG_INFINITY;
    for (i, &(node, _, _)) in flat.iter().enumerate() {
        let half = box_width(&node.label) / 2.0;
        left = left.min(x[i] - half);
        right = right.max(x[i] + half);
    }
    let nodes = flat
        .iter()
        .enumerate()
        .map(|(i, &(node, parent, _))| Placed {
            parent,
            label: node.label.clone(),
            x: x[i] - left,
            row: row_of(i),
            width: box_width(&node.label),
            is_word: node.children.is_empty(),
        })
        .collect();
    Layout {
        nodes,
        width: (right - left).max(0.0),
        rows: baseline + 1,
    }
}

/// The horizontal extent of a subtree on each row it may occupy.
#[derive(Clone, Debug)]
struct Contour {
    top: usize,
    extents: Vec<Option<(f64, f64)>>,
}

impl Contour {
    fn new(top: usize, bottom: usize) -> Contour {
        Contour {
            top,
            extents: vec![None; bottom.saturating_sub(top) + 1],
        }
    }

    fn widen(&mut self, row: usize, left: f64, right: f64) {
        let Some(slot) = row
            .checked_sub(self.top)
            .and_then(|r| self.extents.get_mut(r))
        else {
            return;
        };
        *slot = Some(match *slot {
            Some((l, r)) => (l.min(left), r.max(right)),
            None => (left, right),
        });
    }

    /// How far right `other` (in its own coordinates) must move so that on
    /// every shared row its left edge is at or right of this contour's
    /// right edge.
    fn clearance(&self, other: &Contour) -> f64 {
        let mut need = f64::NEG_INFINITY;
        for (r, extent) in other.extents.iter().enumerate() {
            let row = other.top + r;
            let (Some((theirs_left, _)), Some(Some((_, ours_right)))) = (
                extent,
                row.checked_sub(self.top).and_then(|k| self.extents.get(k)),
            ) else {
                continue;
            };
            need = need.max(ours_right - theirs_left);
        }
        if need.is_finite() {
            need
        } else {
            0.0
        }
    }

    /// Adds `other`, moved right by `shift`, to this contour.
    fn absorb(&mut self, other: &Contour, shift: f64) {
        for (r, extent) in other.extents.iter().enumerate() {
            if let Some((l, rt)) = extent {
                self.widen(other.top + r, l + shift, rt + shift);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn leaf(w: &str) -> Shape {
        Shape {
            label: w.into(),
            children: vec![],
        }
    }

    fn node(l: &str, children: Vec<Shape>) -> Shape {
        Shape {
            label: l.into(),
            children,
        }
    }

    #[test]
    fn a_parent_is_centred_over_its_first_and_last_child() {
        let t = node(
            "S",
            vec![node("A", vec![leaf("x")]), node("B", vec![leaf("y")])],
        );
        let l = layout(&t);
        let (a, b) = (&l.nodes[1], &l.nodes[3]);
        assert_eq!(l.nodes[0].x, (a.x + b.x) / 2.0);
        // Words share the last row.
        assert_eq!(l.nodes[2].row, l.rows - 1);
        assert_eq!(l.nodes[4].row, l.rows - 1);
    }

    #[test]
    fn a_wide_label_pushes_its_sibling_subtree_aside() {
        let t = node(
            "S",
            vec![
                node("AVeryLongCategoryName", vec![leaf("a")]),
                node("B", vec![leaf("b")]),
            ],
        );
        let l = layout(&t);
        let (a, b) = (&l.nodes[1], &l.nodes[3]);
        assert!(a.x + a.width / 2.0 + GAP <= b.x - b.width / 2.0 + 1e-9);
    }

    #[test]
    fn two_thousand_levels_lay_out_without_recursion() {
        let mut t = leaf("deep");
        for _ in 0..2_000 {
            t = node("N", vec![t]);
        }
        let l = layout(&t);
        assert_eq!(l.rows, 2_001);
        assert!(l.nodes.iter().all(|n| n.x == l.nodes[0].x));
    }
}
