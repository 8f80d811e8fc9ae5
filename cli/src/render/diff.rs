//! Unified diffs (`trellis fmt --diff`): `---`/`+++` headers, then hunks
//! `@@ -a,b +c,d @@` with three lines of context, as `diff -u` and `patch`
//! read them. The changed lines come from the formatter's own line
//! comparison (`grammar_lang::format::changed_lines`).

use grammar_lang::format::{changed_lines, LineChange};

/// Lines of context around each change.
const CONTEXT: usize = 3;

/// The unified diff from `old` to `new`, both named `path` (with `a/` and
/// `b/` before a relative path, as `patch -p1` expects); empty when the
/// texts are the same.
pub fn unified(path: &str, old: &str, new: &str) -> String {
    let changes = changed_lines(old, new);
    if changes.is_empty() {
        return String::new();
    }
    let a: Vec<&str> = old.split_inclusive('\n').collect();
    let b: Vec<&str> = new.split_inclusive('\n').collect();
    let relative = !path.starts_with(['/', '<']) && !path.contains(':');
    let mut out = if relative {
        format!("--- a/{path}\n+++ b/{path}\n")
    } else {
        format!("--- {path}\n+++ {path}\n")
    };
    // Group changes whose contexts touch into one hunk.
    let mut groups: Vec<Vec<&LineChange>> = Vec::new();
    for change in &changes {
        match groups.last_mut() {
            Some(group)
                if change.old.start <= group.last().map_or(0, |c| c.old.end) + 2 * CONTEXT =>
            {
                group.push(change)
            }
            _ => groups.push(vec![change]),
        }
    }
    for group in groups {
        let (first, last) = (group[0], group[group.len() - 1]);
        let before = first.old.start.min(CONTEXT);
        let after = (a.len() - last.old.end).min(CONTEXT);
        let old_start = first.old.start - before;
        let new_start = first.new.start - before;
        let old_len = last.old.end + after - old_start;
        let new_len = last.new.end + after - new_start;
        out.push_str(&format!(
            "@@ -{} +{} @@\n",
            range(old_start, old_len),
            range(new_start, new_len)
        ));
        let mut at = old_start;
        for change in group {
            for line in &a[at..change.old.start] {
                push_line(&mut out, ' ', line);
            }
            for line in &a[change.old.clone()] {
                push_line(&mut out, '-', line);
            }
            for line in &b[change.new.clone()] {
                push_line(&mut out, '+', line);
            }
            at = change.old.end;
        }
        for line in &a[at..last.old.end + after] {
            push_line(&mut out, ' ', line);
        }
    }
    out
}

/// `start,len` with 1-based `start` (the line before, for an empty range).
fn range(start: usize, len: usize) -> String {
    match len {
        0 => format!("{start},0"),
        1 => format!("{}", start + 1),
        _ => format!("{},{len}", start + 1),
    }
}

fn push_line(out: &mut String, mark: char, line: &str) {
    out.push(mark);
    out.push_str(line);
    if !line.ends_with('\n') {
        out.push_str("\n\\ No newline at end of file\n");
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_change_is_shown_with_three_lines_of_context() {
        let old = "1\n2\n3\n4\n5\n6\n7\n8\n9\n";
        let new = "1\n2\n3\n4\nfive\n6\n7\n8\n9\n";
        assert_eq!(
            unified("g.trellis", old, new),
            "--- a/g.trellis\n+++ b/g.trellis\n@@ -2,7 +2,7 @@\n 2\n 3\n 4\n-5\n+five\n 6\n 7\n 8\n"
        );
    }

    #[test]
    fn nearby_changes_share_a_hunk_and_far_ones_do_not() {
        let lines: Vec<String> = (1..=20).map(|i| format!("{i}\n")).collect();
        let old = lines.concat();
        let mut changed = lines.clone();
        changed[1] = "two\n".into();
        changed[4] = "five\n".into();
        changed.remove(17);
        let new = changed.concat();
        let diff = unified("g", &old, &new);
        assert_eq!(diff.matches("@@ -").count(), 2, "{diff}");
        assert!(diff.contains("@@ -1,8 +1,8 @@"), "{diff}");
        assert!(diff.contains("@@ -15,6 +15,5 @@"), "{diff}");
    }

    #[test]
    fn inserting_into_an_empty_file_and_a_missing_final_newline() {
        assert_eq!(
            unified("g", "", "A\n"),
            "--- a/g\n+++ b/g\n@@ -0,0 +1 @@\n+A\n"
        );
        assert_eq!(
            unified("g", "A", "A\n"),
            "--- a/g\n+++ b/g\n@@ -1 +1 @@\n-A\n\\ No newline at end of file\n+A\n"
        );
        assert_eq!(unified("g", "same\n", "same\n"), "");
    }
}
