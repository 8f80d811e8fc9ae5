//! `trellis parse --format brackets`: labelled brackets with bare words,
//! the form treebank tools read.

use trellis_engine::parser::{ParseOutcome, ParsedTree};

/// The trees of one sentence, one per line: the best, or with `kbest` every
/// ranked tree; an empty line for a sentence without parse.
pub fn sentence(result: &Result<ParseOutcome, String>) -> String {
    let mut out = String::new();
    match result {
        Ok(o) if o.parsed() => {
            let trees: Vec<&ParsedTree> = if o.kbest.is_empty() {
                o.best.iter().collect()
            } else {
                o.kbest.iter().collect()
            };
            for t in trees {
                out.push_str(&t.tree.to_treebank());
                out.push('\n');
            }
        }
        _ => out.push('\n'),
    }
    out
}
