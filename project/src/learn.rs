//! Learning weights from treebank files: opening them (plain or gzip),
//! reading their trees one at a time, cleaning, binarizing and counting —
//! the I/O around the pure `trellis-treebank` crate, shared by every shell.

use crate::files::{io_reason, open_regular};
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use trellis_treebank::learn::{Counts, LearnOptions};
use trellis_treebank::{clean, Cleaning, Markov, TreeReader};

/// A treebank file for reading: gzip-compressed files (by their magic
/// bytes, whatever their name) are decompressed as they are read.
pub fn open_treebank(path: &Path) -> Result<Box<dyn BufRead>, String> {
    let (file, _) =
        open_regular(path).map_err(|failure| format!("{}; {}", failure.reason, failure.help))?;
    let mut file = BufReader::new(file);
    let gzip = file
        .fill_buf()
        .map_err(|e| io_reason(&e))?
        .starts_with(&[0x1f, 0x8b]);
    if gzip {
        Ok(Box::new(BufReader::new(
            flate2::bufread::MultiGzDecoder::new(file),
        )))
    } else {
        Ok(Box::new(file))
    }
}

/// How to learn.
#[derive(Clone, Debug)]
pub struct Learning {
    pub markov: Markov,
    pub cleaning: Cleaning,
    /// Skip malformed trees (and count them) instead of stopping at the first.
    pub keep_going: bool,
    /// Words seen at most this many times also feed the unseen-word class
    /// of their shape (0: none); see [`LearnOptions::rare`].
    pub rare: u64,
}

/// A malformed tree or an unreadable file, located.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TreebankProblem {
    pub path: PathBuf,
    pub line: usize,
    pub column: usize,
    pub message: String,
}

impl std::fmt::Display for TreebankProblem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.line == 0 {
            write!(f, "{}: {}", self.path.display(), self.message)
        } else {
            write!(
                f,
                "{}:{}:{}: {}",
                self.path.display(),
                self.line,
                self.column,
                self.message
            )
        }
    }
}

/// What learning produced.
#[derive(Debug)]
pub struct Learned {
    pub counts: Counts,
    /// Malformed trees skipped (only with `keep_going`), in order.
    pub skipped: Vec<TreebankProblem>,
    /// Trees that cleaning left empty (only empty elements).
    pub emptied: u64,
}

/// Counts the rules of every tree in `paths`. `progress` is called after
/// each tree with the number read so far. Without `keep_going`, the first
/// malformed tree stops the run with its location.
pub fn learn_from_files(
    paths: &[PathBuf],
    how: &Learning,
    mut progress: impl FnMut(u64),
) -> Result<Learned, TreebankProblem> {
    let mut counts = Counts::new();
    let mut skipped = Vec::new();
    let mut emptied = 0;
    let mut read = 0u64;
    for path in paths {
        let input = open_treebank(path).map_err(|message| TreebankProblem {
            path: path.clone(),
            line: 0,
            column: 0,
            message: format!("cannot read it: {message}"),
        })?;
        for tree in TreeReader::new(input) {
            read += 1;
            progress(read);
            let tree = match tree {
                Ok(tree) => tree,
                Err(e) => {
                    let problem = TreebankProblem {
                        path: path.clone(),
                        line: e.line,
                        column: e.column,
                        message: e.message,
                    };
                    if how.keep_going {
                        skipped.push(problem);
                        continue;
                    }
                    return Err(problem);
                }
            };
            match clean(tree, &how.cleaning) {
                Some(tree) => counts.add_binarized(&tree, how.markov),
                None => emptied += 1,
            }
        }
    }
    Ok(Learned {
        counts,
        skipped,
        emptied,
    })
}

/// The learned grammar's text, with a header saying how it was learned.
pub fn learned_source(learned: &Learned, paths: &[PathBuf], how: &Learning) -> String {
    let inputs: Vec<String> = paths.iter().map(|p| p.display().to_string()).collect();
    let markov = match how.markov.horizontal {
        None => "lossless binarization".to_string(),
        Some(h) => format!("horizontal markovization of order {h}"),
    };
    let mut cleaning = Vec::new();
    if how.cleaning.strip_functions {
        cleaning.push("function tags stripped");
    }
    if how.cleaning.drop_empty {
        cleaning.push("empty elements dropped");
    }
    if how.cleaning.collapse_unary {
        cleaning.push("same-label unary chains collapsed");
    }
    let mut header = vec![
        "Learned by `trellis learn`: maximum-likelihood weights (each".to_string(),
        "alternative's count among its block's) from annotated trees.".to_string(),
        String::new(),
        format!("inputs: {}", inputs.join(", ")),
        format!(
            "trees: {} ({} distinct rules)",
            learned.counts.trees(),
            learned.counts.rule_count()
        ),
        format!(
            "binarization: {markov}, vertical order {}",
            how.markov.vertical
        ),
    ];
    if !cleaning.is_empty() {
        header.push(format!("cleaning: {}", cleaning.join(", ")));
    }
    if !learned.skipped.is_empty() {
        header.push(format!(
            "skipped: {} malformed trees",
            learned.skipped.len()
        ));
    }
    if how.rare > 0 {
        header.push(format!(
            "unseen words: words seen at most {} time{} also count for their",
            how.rare,
            if how.rare == 1 { "" } else { "s" }
        ));
        header.push("shape class's \"<unseen:…>\" terminal (README, \"Unseen words\")".to_string());
    }
    header.push(String::new());
    header.push("Symbols with `+` are binarization's intermediate symbols and `.`".to_string());
    header.push("marks a parent annotation (see README, \"Learning from trees\");".to_string());
    header.push(
        "`trellis parse --treebank-labels` prints trees in the treebank's labels.".to_string(),
    );
    learned.counts.to_source(&LearnOptions {
        header,
        rare: how.rare,
    })
}
