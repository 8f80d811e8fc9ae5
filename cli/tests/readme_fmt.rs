//! README.md's "Formatting" section against the real formatter: its
//! before/after example is exactly what `trellis fmt -` prints, and the
//! "after" text is already formatted.

mod common;

use common::trellis_stdin;

/// The first two ```trellis code blocks of README's "Formatting" section.
fn example() -> (String, String) {
    let readme = include_str!("../../README.md");
    let section = readme
        .split("\n## Formatting\n")
        .nth(1)
        .expect("README has a Formatting section");
    let mut blocks: Vec<String> = Vec::new();
    let mut current: Option<String> = None;
    let mut in_other_fence = false;
    for line in section.lines() {
        match (&mut current, line) {
            (Some(block), "```") => {
                blocks.push(std::mem::take(block));
                current = None;
            }
            (Some(block), _) => {
                block.push_str(line);
                block.push('\n');
            }
            (None, "```trellis") if !in_other_fence => current = Some(String::new()),
            (None, _) if line.starts_with("```") => in_other_fence = !in_other_fence,
            // The next section.
            (None, _) if !in_other_fence && line.starts_with("## ") => break,
            (None, _) => {}
        }
    }
    assert!(blocks.len() >= 2, "the section shows a before and an after");
    (blocks[0].clone(), blocks[1].clone())
}

fn fmt_stdin(input: &str, extra: &[&str]) -> (i32, String) {
    let dir = tempfile::tempdir().unwrap();
    let mut args = vec!["fmt", "-"];
    args.extend_from_slice(extra);
    let (code, stdout, _) = trellis_stdin(dir.path(), &args, input);
    (code, stdout)
}

#[test]
fn the_readme_example_is_what_fmt_prints() {
    let (before, after) = example();
    assert_ne!(before, after);
    let (code, out) = fmt_stdin(&before, &[]);
    assert_eq!(code, 0);
    assert_eq!(out, after, "README's formatted example is out of date");
    let (code, _) = fmt_stdin(&after, &["--check"]);
    assert_eq!(code, 0, "the formatted example is formatted");
}
