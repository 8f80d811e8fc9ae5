//! Labelled-bracket trees, read one at a time from a stream.
//!
//! What is accepted (the common treebank layout): `(LABEL child …)` where a
//! child is a bracketed node or a word; any number of trees per file, each
//! spread over as many lines as it likes; an optional unlabelled bracket
//! around a tree (`( (S …) )`); `#` comments on lines between trees.
//! Words and labels are runs of characters other than whitespace and
//! brackets; a word may also be written in double quotes (as trellis's own
//! test blocks write them), with `\"` and `\\` inside.
//!
//! A malformed tree is an error at its line and column; the reader then
//! skips to the next line that starts a tree, so a caller can go on.

use grammar_lang::tree::Tree;
use std::fmt;
use std::io::BufRead;

/// Trees nested deeper than this are refused rather than read (every walk
/// over them stays iterative, but no treebank needs more).
pub const MAX_DEPTH: usize = 1000;

/// A malformed tree or an unreadable stream, at a line and column
/// (1-based; columns count characters).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ReadError {
    pub line: usize,
    pub column: usize,
    pub message: String,
}

impl fmt::Display for ReadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}: {}", self.line, self.column, self.message)
    }
}

impl std::error::Error for ReadError {}

/// Reads trees from `input` one at a time.
pub struct TreeReader<R> {
    input: R,
    line: String,
    /// Characters of the current line and the next one to read.
    chars: Vec<char>,
    pos: usize,
    line_no: usize,
    done: bool,
    /// After an error: skip to a line that starts with `(`.
    resync: bool,
    /// Where the tree read last (or being read) starts.
    tree_start: (usize, usize),
    /// Where each node of the tree read last opens, in pre-order.
    positions: Vec<(usize, usize)>,
}

/// An open node while reading.
struct Open {
    label: Option<String>,
    children: Vec<Tree>,
    line: usize,
    column: usize,
}

enum Token {
    Open,
    Close,
    Atom(String),
    /// A word written in double quotes (escapes resolved).
    Quoted(String),
}

impl<R: BufRead> TreeReader<R> {
    pub fn new(input: R) -> TreeReader<R> {
        TreeReader {
            input,
            line: String::new(),
            chars: Vec::new(),
            pos: 0,
            line_no: 0,
            done: false,
            resync: false,
            tree_start: (0, 0),
            positions: Vec::new(),
        }
    }

    /// Where each node of the tree read last opens (its `(`: line and
    /// column, 1-based), in pre-order — the order of
    /// [`Tree`]'s nodes walked parent first, children left to right; words
    /// have no entry. An unlabelled outer bracket is not a node and has none.
    pub fn positions(&self) -> &[(usize, usize)] {
        &self.positions
    }

    /// The line and column where the last tree read (or the malformed one)
    /// starts.
    pub fn tree_start(&self) -> (usize, usize) {
        self.tree_start
    }

    /// The line the reader has reached (1-based).
    pub fn line(&self) -> usize {
        self.line_no
    }

    fn error(&self, line: usize, column: usize, message: impl Into<String>) -> ReadError {
        ReadError {
            line,
            column,
            message: message.into(),
        }
    }

    /// Makes the next line current; false at the end of input.
    fn next_line(&mut self) -> Result<bool, ReadError> {
        self.line.clear();
        match self.input.read_line(&mut self.line) {
            Ok(0) => Ok(false),
            Ok(_) => {
                self.line_no += 1;
                self.chars = self.line.chars().collect();
                self.pos = 0;
                Ok(true)
            }
            Err(e) => Err(self.error(self.line_no + 1, 1, format!("cannot read this line: {e}"))),
        }
    }

    /// The next token with its line and column, skipping blanks and, between
    /// trees (`depth == 0`), comment lines. `None` at the end of input.
    fn token(&mut self, depth: usize) -> Result<Option<(Token, usize, usize)>, ReadError> {
        loop {
            while self.pos < self.chars.len() && self.chars[self.pos].is_whitespace() {
                self.pos += 1;
            }
            if self.pos >= self.chars.len() {
                if !self.next_line()? {
                    return Ok(None);
                }
                if self.resync {
                    let first = self.chars.iter().find(|c| !c.is_whitespace());
                    if first != Some(&'(') {
                        self.pos = self.chars.len();
                        continue;
                    }
                    self.resync = false;
                }
                continue;
            }
            let (line, column) = (self.line_no, self.pos + 1);
            let c = self.chars[self.pos];
            if c == '#' && depth == 0 {
                self.pos = self.chars.len();
                continue;
            }
            match c {
                '(' => {
                    self.pos += 1;
                    return Ok(Some((Token::Open, line, column)));
                }
                ')' => {
                    self.pos += 1;
                    return Ok(Some((Token::Close, line, column)));
                }
                '"' => return self.quoted(line, column).map(Some),
                _ => {
                    let start = self.pos;
                    while self.pos < self.chars.len()
                        && !self.chars[self.pos].is_whitespace()
                        && !matches!(self.chars[self.pos], '(' | ')')
                    {
                        self.pos += 1;
                    }
                    let atom: String = self.chars[start..self.pos].iter().collect();
                    return Ok(Some((Token::Atom(atom), line, column)));
                }
            }
        }
    }

    fn quoted(&mut self, line: usize, column: usize) -> Result<(Token, usize, usize), ReadError> {
        self.pos += 1;
        let mut word = String::new();
        while self.pos < self.chars.len() {
            match self.chars[self.pos] {
                '"' if word.is_empty() => {
                    return Err(self.error(
                        line,
                        column,
                        "`\"\"` is an empty word: a word needs at least one character",
                    ));
                }
                '"' => {
                    self.pos += 1;
                    return Ok((Token::Quoted(word), line, column));
                }
                '\\' if self.pos + 1 < self.chars.len()
                    && matches!(self.chars[self.pos + 1], '"' | '\\') =>
                {
                    word.push(self.chars[self.pos + 1]);
                    self.pos += 2;
                }
                '\n' | '\r' => break,
                c => {
                    word.push(c);
                    self.pos += 1;
                }
            }
        }
        Err(self.error(
            line,
            column,
            "this quoted word has no closing quote on its line",
        ))
    }

    /// Reads the next tree; `Ok(None)` at the end of input.
    fn read_tree(&mut self) -> Result<Option<Tree>, ReadError> {
        let Some((first, line, column)) = self.token(0)? else {
            return Ok(None);
        };
        self.tree_start = (line, column);
        self.positions.clear();
        self.positions.push((line, column));
        match first {
            Token::Open => {}
            Token::Close => {
                return Err(self.error(
                    line,
                    column,
                    "`)` closes nothing: the brackets before it are already balanced",
                ));
            }
            Token::Atom(word) | Token::Quoted(word) => {
                return Err(self.error(
                    line,
                    column,
                    format!(
                        "`{word}` stands outside any bracket; a tree starts with `(` and a label"
                    ),
                ));
            }
        }
        let mut stack = vec![Open {
            label: None,
            children: Vec::new(),
            line,
            column,
        }];
        // Whether the next atom is the label of the node just opened.
        let mut expect_label = true;
        loop {
            let depth = stack.len();
            let Some((token, line, column)) = self.token(depth)? else {
                let open = stack
                    .last()
                    .map(|o| (o.line, o.column))
                    .unwrap_or((line, column));
                return Err(self.error(
                    open.0,
                    open.1,
                    format!(
                        "the input ends inside this tree: {} bracket{} still open",
                        depth,
                        if depth == 1 { " is" } else { "s are" }
                    ),
                ));
            };
            match token {
                Token::Quoted(word) if expect_label => {
                    return Err(self.error(
                        line,
                        column,
                        format!(
                            "the label `{word}` is in quotes: only words may be quoted; write \
                             the label bare, as in `(NP …)`"
                        ),
                    ));
                }
                Token::Atom(atom) | Token::Quoted(atom) => {
                    let top = stack
                        .last_mut()
                        .expect("a node is open while reading a tree");
                    if expect_label {
                        top.label = Some(atom);
                    } else {
                        top.children.push(Tree::leaf(atom));
                    }
                    expect_label = false;
                }
                Token::Open => {
                    if expect_label && stack.len() > 1 {
                        return Err(self.error(
                            line,
                            column,
                            "a bracket opens where a label belongs: every node but the outermost needs a label, as in `(NP …)`",
                        ));
                    }
                    if stack.len() >= MAX_DEPTH {
                        return Err(self.error(
                            line,
                            column,
                            format!("this tree nests deeper than {MAX_DEPTH} levels"),
                        ));
                    }
                    stack.push(Open {
                        label: None,
                        children: Vec::new(),
                        line,
                        column,
                    });
                    self.positions.push((line, column));
                    expect_label = true;
                }
                Token::Close => {
                    let open = stack.pop().expect("a node is open while reading a tree");
                    let tree = match open.label {
                        Some(label) => {
                            if open.children.is_empty() {
                                return Err(self.error(
                                    open.line,
                                    open.column,
                                    format!("the node `{label}` has no children: a node needs a word or a node inside"),
                                ));
                            }
                            Tree::node(label, open.children)
                        }
                        None if stack.is_empty() && open.children.len() == 1 => {
                            // The unlabelled outer bracket: `( (S …) )`.
                            self.positions.remove(0);
                            let mut children = open.children;
                            let only = children.pop().expect("one child");
                            if only.label().is_none() {
                                return Err(self.error(
                                    open.line,
                                    open.column,
                                    "a bare word inside an unlabelled bracket is not a tree",
                                ));
                            }
                            only
                        }
                        None => {
                            return Err(self.error(
                                open.line,
                                open.column,
                                "this bracket has no label: write the category first, as in `(NP …)`",
                            ));
                        }
                    };
                    match stack.last_mut() {
                        Some(parent) => parent.children.push(tree),
                        None => return Ok(Some(tree)),
                    }
                    expect_label = false;
                }
            }
        }
    }
}

impl<R: BufRead> Iterator for TreeReader<R> {
    type Item = Result<Tree, ReadError>;

    fn next(&mut self) -> Option<Self::Item> {
        if self.done {
            return None;
        }
        match self.read_tree() {
            Ok(Some(tree)) => Some(Ok(tree)),
            Ok(None) => {
                self.done = true;
                None
            }
            Err(e) => {
                // Go on at the next line that starts a tree.
                self.pos = self.chars.len();
                self.resync = true;
                Some(Err(e))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Vec<Result<String, String>> {
        TreeReader::new(text.as_bytes())
            .map(|r| r.map(|t| t.to_treebank()).map_err(|e| e.to_string()))
            .collect()
    }

    #[test]
    fn trees_spread_over_lines_with_comments_between_them() {
        let text = "# two trees\n(S (NP (DT the)\n   (NN ferry))\n (VP (VBZ sails)))\n\n# next\n( (S (VP (VB go))) )\n";
        assert_eq!(
            read(text),
            [
                Ok("(S (NP (DT the) (NN ferry)) (VP (VBZ sails)))".to_string()),
                Ok("(S (VP (VB go)))".to_string()),
            ]
        );
    }

    #[test]
    fn quoted_words_and_several_trees_on_a_line() {
        assert_eq!(
            read("(A \"day ticket\") (B \"say \\\"hi\\\"\")"),
            [
                Ok("(A day ticket)".to_string()),
                Ok("(B say \"hi\")".to_string())
            ]
        );
    }

    #[test]
    fn labels_cannot_be_quoted_and_words_cannot_be_empty() {
        // Found by the `treebank` fuzz target: a quoted label (`"S "`) was
        // read as a label holding a space, which no bracket notation can
        // print back, and `""` as an empty word.
        let got = read("(\"S \" NV x)\n(S \"\")\n(S \"a b\")\n");
        assert_eq!(
            got,
            [
                Err(
                    "1:2: the label `S ` is in quotes: only words may be quoted; write the \
                     label bare, as in `(NP …)`"
                        .to_string()
                ),
                Err(
                    "2:4: `\"\"` is an empty word: a word needs at least one character".to_string()
                ),
                Ok("(S a b)".to_string()),
            ]
        );
    }

    #[test]
    fn malformed_trees_are_located_and_reading_goes_on() {
        let text = "(S (NP x)\n(S (VP y))\n(S ())\nword\n(S z))\n(S (A b)) )\n(T u)\n";
        let got = read(text);
        // Unbalanced: `(S (NP x)` swallows the next line and fails where
        // `(S ()` has no label.
        assert!(
            got[0]
                .as_ref()
                .is_err_and(|e| e.starts_with("3:4: this bracket has no label")),
            "{got:?}"
        );
        // After an error the reader skips to a line that starts a tree, so
        // the stray `word` on line 4 goes unread.
        assert_eq!(got[1], Ok("(S z)".to_string()));
        assert!(
            got[2]
                .as_ref()
                .is_err_and(|e| e.starts_with("5:6: `)` closes nothing")),
            "{got:?}"
        );
        assert_eq!(got[3], Ok("(S (A b))".to_string()));
        assert!(
            got[4]
                .as_ref()
                .is_err_and(|e| e.starts_with("6:11: `)` closes nothing")),
            "{got:?}"
        );
        assert_eq!(got[5], Ok("(T u)".to_string()));
        assert_eq!(got.len(), 6);
        let got = read(
            "word (S x)
",
        );
        assert!(
            got[0]
                .as_ref()
                .is_err_and(|e| e.starts_with("1:1: `word` stands outside")),
            "{got:?}"
        );
    }

    #[test]
    fn every_node_is_located_in_pre_order() {
        let mut reader = TreeReader::new("( (S (NP (DT the)\n  (NN ferry)) (VP x)) )\n".as_bytes());
        assert!(reader.next().is_some_and(|t| t.is_ok()));
        // S, NP, DT, NN, VP; the unlabelled outer bracket is not a node.
        assert_eq!(
            reader.positions(),
            [(1, 3), (1, 6), (1, 10), (2, 3), (2, 15)]
        );
    }

    #[test]
    fn an_unclosed_tree_at_the_end_names_where_it_opened() {
        let got = read("(S (NP x)\n");
        assert_eq!(
            got,
            [Err(
                "1:1: the input ends inside this tree: 1 bracket is still open".to_string()
            )]
        );
        let got = read("(S (NP)\n)");
        assert_eq!(
            got[0],
            Err(
                "1:4: the node `NP` has no children: a node needs a word or a node inside"
                    .to_string()
            )
        );
    }
}
