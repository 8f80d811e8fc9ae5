//! PARSEVAL over two treebank files read in step: gold trees and the
//! trees a parser predicted for the same sentences, in the same order.

use crate::learn::{open_treebank, TreebankProblem};
use std::path::Path;
use trellis_treebank::eval::{score, EvalOptions, SentenceScore, Totals};
use trellis_treebank::TreeReader;

/// One sentence's score and where its trees are.
#[derive(Clone, Debug)]
pub struct Scored {
    /// 1-based position in the files.
    pub index: usize,
    pub gold_line: usize,
    pub test_line: usize,
    pub score: SentenceScore,
}

/// Every sentence's score and the totals.
#[derive(Clone, Debug, Default)]
pub struct Evaluation {
    pub sentences: Vec<Scored>,
    pub totals: Totals,
}

fn problem(path: &Path, (line, column): (usize, usize), message: String) -> TreebankProblem {
    TreebankProblem {
        path: path.to_path_buf(),
        line,
        column,
        message,
    }
}

/// Scores every predicted tree against its gold tree. A malformed tree, a
/// file with fewer trees than the other, or a pair whose words differ is a
/// located error.
pub fn evaluate(
    gold: &Path,
    test: &Path,
    options: &EvalOptions,
) -> Result<Evaluation, TreebankProblem> {
    let open = |path: &Path| {
        open_treebank(path)
            .map_err(|message| problem(path, (0, 0), format!("cannot read it: {message}")))
    };
    let mut gold_trees = TreeReader::new(open(gold)?);
    let mut test_trees = TreeReader::new(open(test)?);
    let mut out = Evaluation::default();
    for index in 1.. {
        let g = gold_trees.next();
        let t = test_trees.next();
        let (g, t) = match (g, t) {
            (None, None) => break,
            (Some(Err(e)), _) => return Err(problem(gold, (e.line, e.column), e.message)),
            (_, Some(Err(e))) => return Err(problem(test, (e.line, e.column), e.message)),
            (Some(Ok(_)), None) => {
                return Err(problem(
                    test,
                    (test_trees.line().max(1), 1),
                    format!(
                    "it ends after {} trees, but {} has more (its tree {index} starts at line {})",
                    index - 1,
                    gold.display(),
                    gold_trees.tree_start().0
                ),
                ))
            }
            (None, Some(Ok(_))) => {
                return Err(problem(
                    gold,
                    (gold_trees.line().max(1), 1),
                    format!(
                    "it ends after {} trees, but {} has more (its tree {index} starts at line {})",
                    index - 1,
                    test.display(),
                    test_trees.tree_start().0
                ),
                ))
            }
            (Some(Ok(g)), Some(Ok(t))) => (g, t),
        };
        let score = score(&g, &t, options).map_err(|m| {
            problem(
                test,
                test_trees.tree_start(),
                format!(
                    "sentence {index} cannot be compared with its gold tree ({}:{}): {m}",
                    gold.display(),
                    gold_trees.tree_start().0
                ),
            )
        })?;
        out.totals.add(&score);
        out.sentences.push(Scored {
            index,
            gold_line: gold_trees.tree_start().0,
            test_line: test_trees.tree_start().0,
            score,
        });
    }
    Ok(out)
}
