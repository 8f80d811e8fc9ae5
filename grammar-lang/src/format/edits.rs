//! Minimal edits: the replacements that turn a text into its formatted
//! form, so an editor changes only what moved.
//!
//! The texts are compared line by line (Myers' O(ND) difference algorithm,
//! after stripping the common first and last lines). A run of changed lines
//! that replaces as many lines as it removes becomes one edit per line; any
//! other run is one edit. Each edit is then narrowed to the characters that
//! differ. Beyond [`MAX_DISTANCE`] changed lines the search for the
//! shortest script would cost too much, and a linear greedy comparison
//! takes over: it resynchronises after each difference on the nearest
//! matching pair of lines within [`WINDOW`] lines, which finds what a
//! formatter changes (local edits) though not always the fewest lines.

use crate::span::Span;

/// How many inserted plus deleted lines the line comparison searches for
/// before it settles for one edit over the differing middle.
pub const MAX_DISTANCE: usize = 1000;

/// How far ahead the greedy comparison looks to resynchronise.
pub const WINDOW: usize = 16;

/// The replacements, in order and not overlapping, that turn `old` into
/// `new`: each is a byte span of `old` and the text to put there.
pub fn minimal_edits(old: &str, new: &str) -> Vec<(Span, String)> {
    hunks(old, new)
        .into_iter()
        .map(|h| narrow(old, new, &h))
        .collect()
}

/// Like [`minimal_edits`], restricted to the edits that touch the lines
/// `range` (a byte span of `old`) covers; an edit that spans several lines
/// and touches them is returned whole. A range that ends at the start of a
/// line does not cover that line (unless it is empty).
pub fn minimal_edits_in_range(old: &str, new: &str, range: Span) -> Vec<(Span, String)> {
    let starts = line_starts(old);
    let line_of = |offset: usize| starts.partition_point(|&s| s <= offset).saturating_sub(1);
    let first = line_of(range.start as usize);
    let mut last = line_of(range.end as usize);
    if range.end > range.start && last > first && starts[last] == range.end as usize {
        last -= 1;
    }
    hunks(old, new)
        .into_iter()
        .filter(|h| {
            if h.old_lines.0 == h.old_lines.1 {
                // An insertion before line `old_lines.0`.
                (first..=last + 1).contains(&h.old_lines.0)
            } else {
                h.old_lines.0 <= last && h.old_lines.1 > first
            }
        })
        .map(|h| narrow(old, new, &h))
        .collect()
}

/// A replacement of whole lines.
struct Hunk {
    /// Old lines `.0..1`, as line numbers, and as a byte span.
    old_lines: (usize, usize),
    old: Span,
    new: Span,
}

/// Each line with its line break.
fn lines(text: &str) -> Vec<&str> {
    text.split_inclusive('\n').collect()
}

/// The byte offset of each line's start, and the text's length last.
fn line_starts(text: &str) -> Vec<usize> {
    let mut starts = vec![0];
    starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
    if *starts.last().unwrap_or(&0) != text.len() {
        starts.push(text.len());
    }
    starts
}

/// A run of changed lines: old lines `old` (0-based, end exclusive) are
/// replaced by new lines `new`. Between two changes at least one line is
/// the same in both texts.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LineChange {
    pub old: std::ops::Range<usize>,
    pub new: std::ops::Range<usize>,
}

/// The runs of lines that differ between `old` and `new`, in order (lines
/// end after their `\n`; the comparison is the one [`minimal_edits`] uses).
pub fn changed_lines(old: &str, new: &str) -> Vec<LineChange> {
    if old == new {
        return Vec::new();
    }
    let a = lines(old);
    let b = lines(new);
    let prefix = a.iter().zip(&b).take_while(|(x, y)| x == y).count();
    let suffix = a[prefix..]
        .iter()
        .rev()
        .zip(b[prefix..].iter().rev())
        .take_while(|(x, y)| x == y)
        .count();
    let (a_mid, b_mid) = (&a[prefix..a.len() - suffix], &b[prefix..b.len() - suffix]);
    let runs = diff(a_mid, b_mid).unwrap_or_else(|| greedy(a_mid, b_mid));
    let mut changes = Vec::new();
    let (mut i, mut j) = (prefix, prefix);
    for (deleted, inserted, equal) in runs {
        if deleted + inserted > 0 {
            changes.push(LineChange {
                old: i..i + deleted,
                new: j..j + inserted,
            });
        }
        i += deleted + equal;
        j += inserted + equal;
    }
    changes
}

fn hunks(old: &str, new: &str) -> Vec<Hunk> {
    let offsets = |text: &str| {
        let mut out = vec![0];
        out.extend(text.split_inclusive('\n').scan(0, |at, l| {
            *at += l.len();
            Some(*at)
        }));
        out
    };
    let (a_at, b_at) = (offsets(old), offsets(new));
    let a: Vec<&str> = lines(old);
    let b: Vec<&str> = lines(new);
    let blank = |line: &str| line.trim_end_matches(['\n', '\r']).is_empty();
    let mut hunks = Vec::new();
    let mut push = |o: std::ops::Range<usize>, n: std::ops::Range<usize>| {
        hunks.push(Hunk {
            old_lines: (o.start, o.end),
            old: Span::new(a_at[o.start], a_at[o.end]),
            new: Span::new(b_at[n.start], b_at[n.end]),
        })
    };
    for LineChange {
        old: mut o,
        new: mut n,
    } in changed_lines(old, new)
    {
        // Blank lines added or removed at the start of a change are edits
        // of their own (the usual change: a blank line between blocks), so
        // the lines after them can pair up one to one.
        while o.len() != n.len() {
            if n.len() > o.len() && blank(b[n.start]) && (o.is_empty() || !blank(a[o.start])) {
                push(o.start..o.start, n.start..n.start + 1);
                n.start += 1;
            } else if o.len() > n.len() && blank(a[o.start]) && (n.is_empty() || !blank(b[n.start]))
            {
                push(o.start..o.start + 1, n.start..n.start);
                o.start += 1;
            } else {
                break;
            }
        }
        if o.len() == n.len() {
            for k in 0..o.len() {
                push(o.start + k..o.start + k + 1, n.start + k..n.start + k + 1);
            }
        } else {
            push(o, n);
        }
    }
    hunks
}

/// Myers' greedy algorithm: the shortest edit script from `a` to `b` as
/// runs of (deleted, inserted, then equal) lines, or `None` beyond
/// [`MAX_DISTANCE`].
fn diff(a: &[&str], b: &[&str]) -> Option<Vec<(usize, usize, usize)>> {
    let (n, m) = (a.len() as isize, b.len() as isize);
    let max = ((n + m) as usize).min(MAX_DISTANCE) as isize;
    let offset = max + 1;
    let mut v = vec![0isize; 2 * offset as usize + 1];
    // trace[d]: the furthest x on diagonals -d-1..=d+1 before step d.
    let mut trace: Vec<Vec<isize>> = Vec::new();
    let mut done = false;
    for d in 0..=max {
        trace.push(v[(offset - d - 1) as usize..=(offset + d + 1) as usize].to_vec());
        for k in (-d..=d).step_by(2) {
            let idx = (k + offset) as usize;
            let mut x = if k == -d || (k != d && v[idx - 1] < v[idx + 1]) {
                v[idx + 1]
            } else {
                v[idx - 1] + 1
            };
            let mut y = x - k;
            while x < n && y < m && a[x as usize] == b[y as usize] {
                x += 1;
                y += 1;
            }
            v[idx] = x;
            if x >= n && y >= m {
                done = true;
                break;
            }
        }
        if done {
            break;
        }
    }
    if !done {
        return None;
    }
    #[derive(Clone, Copy, PartialEq)]
    enum Op {
        Del,
        Ins,
        Eq,
    }
    let mut ops = Vec::new();
    let (mut x, mut y) = (n, m);
    for (d, row) in trace.iter().enumerate().rev() {
        let d = d as isize;
        let at = |k: isize| row[(k + d + 1) as usize];
        let k = x - y;
        let prev_k = if k == -d || (k != d && at(k - 1) < at(k + 1)) {
            k + 1
        } else {
            k - 1
        };
        let prev_x = at(prev_k);
        let prev_y = prev_x - prev_k;
        while x > prev_x && y > prev_y {
            ops.push(Op::Eq);
            x -= 1;
            y -= 1;
        }
        if d > 0 {
            if x == prev_x {
                ops.push(Op::Ins);
            } else {
                ops.push(Op::Del);
            }
        }
        x = prev_x;
        y = prev_y;
    }
    ops.reverse();
    let mut runs: Vec<(usize, usize, usize)> = Vec::new();
    let mut current = (0, 0, 0);
    for op in ops {
        if op != Op::Eq && current.2 > 0 {
            runs.push(current);
            current = (0, 0, 0);
        }
        match op {
            Op::Del => current.0 += 1,
            Op::Ins => current.1 += 1,
            Op::Eq => current.2 += 1,
        }
    }
    runs.push(current);
    Some(runs)
}

/// A linear comparison for texts too different for [`diff`]: runs of
/// (deleted, inserted, then equal) lines. After the equal lines, the
/// nearest pair of equal lines within [`WINDOW`] lines ahead (fewest lines
/// skipped first) ends the difference; when there is none, one line of each
/// side is taken as changed.
fn greedy(a: &[&str], b: &[&str]) -> Vec<(usize, usize, usize)> {
    let (n, m) = (a.len(), b.len());
    let mut runs = Vec::new();
    let (mut i, mut j) = (0, 0);
    let mut current = (0, 0, 0);
    while i < n || j < m {
        if i < n && j < m && a[i] == b[j] {
            current.2 += 1;
            i += 1;
            j += 1;
            continue;
        }
        if current.2 > 0 {
            runs.push(current);
            current = (0, 0, 0);
        }
        let resync = (1..=2 * WINDOW).find_map(|skipped| {
            (0..=skipped.min(WINDOW)).find_map(|di| {
                let dj = skipped - di;
                (dj <= WINDOW && i + di < n && j + dj < m && a[i + di] == b[j + dj])
                    .then_some((di, dj))
            })
        });
        let (di, dj) = match resync {
            Some(step) => step,
            None if i >= n => (0, m - j),
            None if j >= m => (n - i, 0),
            None => (1, 1),
        };
        current.0 += di;
        current.1 += dj;
        i += di;
        j += dj;
    }
    runs.push(current);
    runs
}

/// The hunk as one replacement narrowed to the characters that differ.
fn narrow(old: &str, new: &str, hunk: &Hunk) -> (Span, String) {
    let o = hunk.old.text(old);
    let n = hunk.new.text(new);
    let prefix: usize = o
        .chars()
        .zip(n.chars())
        .take_while(|(x, y)| x == y)
        .map(|(c, _)| c.len_utf8())
        .sum();
    let suffix: usize = o[prefix..]
        .chars()
        .rev()
        .zip(n[prefix..].chars().rev())
        .take_while(|(x, y)| x == y)
        .map(|(c, _)| c.len_utf8())
        .sum();
    let start = hunk.old.start as usize + prefix;
    let end = hunk.old.end as usize - suffix;
    (
        Span::new(start, end),
        n[prefix..n.len() - suffix].to_string(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn apply(text: &str, edits: &[(Span, String)]) -> String {
        let mut out = text.to_string();
        for (span, new) in edits.iter().rev() {
            out.replace_range(span.range(), new);
        }
        out
    }

    #[test]
    fn edits_turn_the_old_text_into_the_new_one() {
        let cases = [
            ("", ""),
            ("a\n", ""),
            ("", "a\n"),
            ("a\nb\nc\n", "a\nx\nc\n"),
            ("a\nb\nc\n", "a\nc\n"),
            ("a\nc\n", "a\nb\nb\nc\n"),
            ("x\na\nb\ny\nc\nz", "a\nq\nb\nc\nw\n"),
            ("A { \"x\" | \"y\" }\n", "A {\n  \"x\"\n  \"y\"\n}\n"),
            ("1\n2\n3\n4\n5\n6\n", "6\n5\n4\n3\n2\n1\n"),
        ];
        for (old, new) in cases {
            let edits = minimal_edits(old, new);
            assert_eq!(apply(old, &edits), new, "{old:?} → {new:?}: {edits:?}");
            assert!(edits.windows(2).all(|w| w[0].0.end <= w[1].0.start));
        }
    }

    #[test]
    fn texts_too_different_for_the_shortest_script_still_get_line_edits() {
        let old: String = (0..3000).map(|i| format!("line {i}\n")).collect();
        // Every other line changes, some lines go, some come: far more than
        // MAX_DISTANCE lines differ.
        let new: String = (0..3000)
            .filter(|i| i % 7 != 3)
            .map(|i| match i % 2 {
                0 => format!("line {i}\n"),
                _ => format!("line  {i}\n\n"),
            })
            .collect();
        let edits = minimal_edits(&old, &new);
        assert_eq!(apply(&old, &edits), new);
        assert!(edits.len() > 1000, "{} edits", edits.len());
        let largest = edits.iter().map(|(s, t)| s.len().max(t.len())).max();
        assert!(largest < Some(40), "{largest:?}");
    }

    #[test]
    fn an_unchanged_line_is_not_in_any_edit() {
        let old = "a\n  b\nc\nd  \ne\n";
        let new = "a\nb\nc\nd\ne\n";
        let edits = minimal_edits(old, new);
        assert_eq!(
            edits,
            vec![
                (Span::new(2, 4), String::new()),
                (Span::new(9, 11), String::new())
            ]
        );
    }

    #[test]
    fn a_blank_line_added_before_a_changed_line_is_an_edit_of_its_own() {
        let old = "}\nA {\"x\"}\n";
        let new = "}\n\nA { \"x\" }\n";
        assert_eq!(
            minimal_edits(old, new),
            vec![
                (Span::new(2, 2), "\n".to_string()),
                (Span::new(5, 8), " \"x\" ".to_string()),
            ]
        );
    }

    #[test]
    fn a_range_keeps_only_the_edits_on_its_lines() {
        let old = "a \nb \nc \n";
        let new = "a\nb\nc\n";
        // The middle line only.
        let edits = minimal_edits_in_range(old, new, Span::new(3, 6));
        assert_eq!(edits, vec![(Span::new(4, 5), String::new())]);
        assert_eq!(minimal_edits_in_range(old, new, Span::new(0, 9)).len(), 3);
    }
}
