//! `unknown-word`: a word of a test sentence, or a leaf of an expected
//! tree, that no terminal of the grammar contains.
//!
//! Such a sentence can never parse: sentences are split at whitespace and
//! every word must be one of the grammar's words (the words of its
//! terminals, a terminal of several words counting each of them). The
//! finding points at the word inside the quotes and suggests the closest
//! known word, which the editor offers as the preferred quick fix.
//!
//! * In `accept` cases and in expected trees it is a **warning**: the case
//!   is bound to fail.
//! * In `reject` cases it is a **note**, and only when a known word is
//!   close to it (a likely typo): a word far from every known one is taken
//!   to be unknown on purpose, a legitimate reason for a sentence to be
//!   rejected (`reject "a return to atlantis"`). A typo makes the `reject`
//!   hold whatever the rules say, which is worth knowing. A level set in
//!   `trellis.toml` applies to both.
//!
//! A word that is no terminal but that the grammar reads as one of its
//! unseen-word terminals ([`crate::unseen`]) can parse, so it is no
//! mistake: it gets a note only when a known word is close to it.
//!
//! The check reads the test blocks as written (the syntax), because the
//! model keeps no spans of single words. Cost: linear in the length of the
//! sentences, plus one search of the grammar's words per unknown word.

use super::suggest::Suggester;
use crate::diagnostic::{Code, Diagnostic, Location, Severity};
use crate::model::Grammar;
use crate::source::{FileId, SourceMap};
use crate::span::Span;
use crate::syntax::ast::{Decl, Expectation, Str, SyntaxFile, TreeChild, TreeSyntax};
use crate::syntax::lexer::quote;
use crate::unseen;

pub fn check(
    grammar: &Grammar,
    sources: &SourceMap,
    syntax: &[SyntaxFile],
    out: &mut Vec<Diagnostic>,
) {
    let mut checker = Checker {
        grammar,
        suggester: None,
        out,
        broken: Vec::new(),
    };
    for (index, file) in syntax.iter().enumerate() {
        let id = FileId(index as u32);
        if index >= sources.len() {
            break;
        }
        let text = sources.get(id).text.as_str();
        // A string the parser already reported (a bad escape, say) or had to
        // repair gets no second finding: one mistake, one error.
        checker.broken = file
            .errors
            .iter()
            .map(|e| e.span)
            .chain(file.damaged.iter().map(|d| d.span))
            .collect();
        for decl in &file.decls {
            let Decl::Test(test) = decl else {
                continue;
            };
            for case in &test.cases {
                let place = match case.expect {
                    Expectation::Accept => Place::Accept,
                    Expectation::Reject => Place::Reject,
                };
                checker.string(id, text, &case.sentence, place);
                if let Some(tree) = &case.tree {
                    checker.tree(id, text, tree);
                }
            }
        }
    }
}

/// Where a word is written.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Place {
    Accept,
    Reject,
    Leaf,
}

struct Checker<'a, 'o> {
    grammar: &'a Grammar,
    /// Over the grammar's words, built only when a word is unknown.
    suggester: Option<Suggester<'a>>,
    out: &'o mut Vec<Diagnostic>,
    /// Spans of the current file the parser reported or repaired.
    broken: Vec<Span>,
}

impl<'a> Checker<'a, '_> {
    fn tree(&mut self, file: FileId, text: &str, tree: &TreeSyntax) {
        // Iterative: trees can be deep.
        let mut stack = vec![tree];
        while let Some(node) = stack.pop() {
            for child in &node.children {
                match child {
                    TreeChild::Node(n) => stack.push(n),
                    TreeChild::Leaf(s) => self.string(file, text, s, Place::Leaf),
                }
            }
        }
    }

    fn string(&mut self, file: FileId, text: &str, s: &Str, place: Place) {
        let overlaps = |b: &Span| b.start < s.span.end && s.span.start < b.end;
        if self.broken.iter().any(overlaps) {
            return;
        }
        let token = s.span.text(text);
        for (word, span) in located_words(token, s.span.start as usize) {
            if self.grammar.term(&word).is_some() {
                continue;
            }
            let grammar = self.grammar;
            match unseen::resolve(&word, |t| grammar.term(t).is_some()) {
                Some(class) => self.report_unseen(Location::new(file, span), &word, class),
                None => self.report(Location::new(file, span), &word, place),
            }
        }
    }

    /// The closest known word to `word`, if one is close.
    fn closest(&mut self, word: &str) -> Option<&'a str> {
        let grammar = self.grammar;
        self.suggester
            .get_or_insert_with(|| {
                Suggester::new(
                    grammar
                        .terminals
                        .iter()
                        .map(String::as_str)
                        .filter(|t| !unseen::is_unseen_terminal(t)),
                )
            })
            .closest(word)
    }

    /// A word no terminal contains that the grammar reads as an unseen-word
    /// terminal: the case can hold, so it is not a mistake; a note only
    /// when a known word is close to it (a typo would go unnoticed).
    fn report_unseen(&mut self, at: Location, word: &str, class: &str) {
        let Some(suggestion) = self.closest(word) else {
            return;
        };
        let message = format!(
            "`{word}` is not a word of the grammar; it is read as an unseen word of class \
             `{}` ({}); did you mean `{suggestion}`?",
            unseen::class_name(class),
            quote(class)
        );
        let quoted = quote(suggestion);
        let mut d = Diagnostic::new(Code::UnknownWord, at, message)
            .with_label("read as an unseen word")
            .with_help(format!(
                "if the word is a typo, write `{suggestion}`; if it stands for any unseen \
                 word, leave it"
            ))
            .with_suggestion(Some(quoted[1..quoted.len() - 1].to_string()));
        d.severity = Severity::Note;
        self.out.push(d);
    }

    fn report(&mut self, at: Location, word: &str, place: Place) {
        let suggestion = self.closest(word);
        if place == Place::Reject && suggestion.is_none() {
            // Unknown on purpose, most likely: see the module documentation.
            return;
        }
        let did_you_mean = suggestion.map_or(String::new(), |s| format!("; did you mean `{s}`?"));
        let (message, severity) = match place {
            Place::Accept => (
                format!(
                    "`{word}` is not a word of the grammar (no terminal contains it), so this \
                     sentence can never parse{did_you_mean}"
                ),
                Severity::Warning,
            ),
            Place::Leaf => (
                format!(
                    "`{word}` is not a word of the grammar (no terminal contains it), so no \
                     parse can have this tree{did_you_mean}"
                ),
                Severity::Warning,
            ),
            Place::Reject => (
                format!(
                    "`{word}` is not a word of the grammar (no terminal contains it), so this \
                     sentence can never parse and the `reject` holds whatever the rules \
                     say{did_you_mean}"
                ),
                Severity::Note,
            ),
        };
        let help = match suggestion {
            Some(s) if place == Place::Reject => format!(
                "if the word is a typo, write `{s}`; if it is unknown on purpose, the case \
                 only tests that unknown words are rejected"
            ),
            Some(s) => {
                format!("fix the word (perhaps `{s}`), or add a terminal with it to the grammar")
            }
            None => "fix the word, or add a terminal with it to the grammar".to_string(),
        };
        // The replacement goes inside the quotes: escaped as in a string.
        let replacement = suggestion.map(|s| {
            let quoted = quote(s);
            quoted[1..quoted.len() - 1].to_string()
        });
        let mut d = Diagnostic::new(Code::UnknownWord, at, message)
            .with_label("unknown word")
            .with_help(help)
            .with_suggestion(replacement);
        d.severity = severity;
        self.out.push(d);
    }
}

/// The words of a quoted string token that starts at byte `start`, each
/// with its span in the file: the words of the string's value (escapes
/// resolved) split as [`crate::model::words`] splits, so exactly the words
/// a test case is parsed with. A token without its closing quote (a syntax
/// error of its own) has no words here.
pub fn located_words(token: &str, start: usize) -> Vec<(String, Span)> {
    let mut out = Vec::new();
    let Some(inner) = token
        .strip_prefix('"')
        .and_then(|t| t.strip_suffix('"'))
        .filter(|_| token.len() >= 2)
    else {
        return out;
    };
    // A `"` ending the token after an odd run of backslashes is escaped:
    // the string is not closed.
    let trailing = inner.chars().rev().take_while(|&c| c == '\\').count();
    if trailing % 2 == 1 {
        return out;
    }
    let base = start + 1;
    let mut word = String::new();
    let mut word_start = 0;
    let mut chars = inner.char_indices().peekable();
    while let Some((i, c)) = chars.next() {
        let (value, end) = if c == '\\' {
            match chars.next() {
                Some((j, next)) => (next, j + next.len_utf8()),
                None => break,
            }
        } else {
            (c, i + c.len_utf8())
        };
        if value.is_whitespace() {
            if !word.is_empty() {
                out.push((
                    std::mem::take(&mut word),
                    Span::new(base + word_start, base + i),
                ));
            }
        } else {
            if word.is_empty() {
                word_start = i;
            }
            word.push(value);
            // The end is recorded when the word is closed; keep it here.
            if chars.peek().is_none() {
                out.push((
                    std::mem::take(&mut word),
                    Span::new(base + word_start, base + end),
                ));
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::words;
    use crate::syntax::lexer::unquote;

    #[test]
    fn located_words_are_the_words_of_the_value_at_their_places() {
        let cases = [
            r#""one return ticket""#,
            r#""  fresh   water ""#,
            "\"a\tb\"",
            r#""say \"ahoy\" now""#,
            r#""back\\slash \ split""#,
            r#""Fähre über""#,
            r#""""#,
            r#""   ""#,
        ];
        for token in cases {
            let found = located_words(token, 10);
            let value = unquote(token);
            let expected: Vec<&str> = words(&value).collect();
            let got: Vec<&str> = found.iter().map(|(w, _)| w.as_str()).collect();
            assert_eq!(got, expected, "{token}");
            for (word, span) in &found {
                let written = &token[span.start as usize - 10..span.end as usize - 10];
                assert_eq!(&unquote(&format!("\"{written}\"")), word, "{token}");
            }
        }
    }

    #[test]
    fn an_unclosed_string_has_no_located_words() {
        assert!(located_words(r#""ahoy"#, 0).is_empty());
        assert!(located_words(r#""ahoy\""#, 0).is_empty());
        assert!(located_words("\"", 0).is_empty());
    }
}
