//! Name checks: `undefined`, `no-start`, `unknown-start` and `duplicate-rule`.

use super::suggest::Suggester;
use super::FastHash;
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::model::{Grammar, RuleId, Sym};
use crate::source::SourceMap;
use std::collections::HashMap;

pub fn check(grammar: &Grammar, sources: &SourceMap, out: &mut Vec<Diagnostic>) {
    let suggester = Lazy {
        grammar,
        suggester: None,
    };
    let mut suggester = suggester;
    undefined(grammar, &mut suggester, out);
    start(grammar, sources, &mut suggester, out);
    duplicate_rules(grammar, out);
}

/// The suggester over every defined name, built only when a name is wrong.
struct Lazy<'a> {
    grammar: &'a Grammar,
    suggester: Option<Suggester<'a>>,
}

impl<'a> Lazy<'a> {
    fn closest(&mut self, wrong: &str) -> Option<&'a str> {
        let grammar = self.grammar;
        self.suggester
            .get_or_insert_with(|| {
                Suggester::new(defined_in_source_order(grammar).map(|nt| grammar.nt_name(nt)))
            })
            .closest(wrong)
    }
}

/// Defined non-terminals ordered by where their block is written.
fn defined_in_source_order(grammar: &Grammar) -> impl Iterator<Item = crate::model::NtId> {
    let mut defined: Vec<_> = grammar
        .nt_ids()
        .filter_map(|nt| {
            let block = grammar.nonterminal(nt).block.as_ref()?;
            Some((block.name.file, block.name.span.start, nt))
        })
        .collect();
    defined.sort_unstable();
    defined.into_iter().map(|(_, _, nt)| nt)
}

fn did_you_mean(suggestion: Option<&str>) -> String {
    suggestion.map_or(String::new(), |s| format!("; did you mean `{s}`?"))
}

fn undefined(grammar: &Grammar, suggester: &mut Lazy, out: &mut Vec<Diagnostic>) {
    for nt in grammar.nt_ids() {
        let symbol = grammar.nonterminal(nt);
        // A damaged symbol's block could not be read: the syntax error
        // stands for it.
        if symbol.is_defined() || grammar.is_damaged(nt) {
            continue;
        }
        let uses: Vec<Location> = symbol
            .references
            .iter()
            .copied()
            // The `start` declaration has its own check, `unknown-start`.
            .filter(|&at| Some(at) != grammar.start_location || grammar.start != Some(nt))
            .collect();
        if uses.is_empty() {
            continue;
        }
        // A bare name that is a word of the grammar: most likely a
        // terminal whose quotes were forgotten.
        if grammar.term(&symbol.name).is_some() {
            let quoted = crate::syntax::lexer::quote(&symbol.name);
            for at in uses {
                out.push(
                    Diagnostic::new(
                        Code::Undefined,
                        at,
                        format!(
                            "`{}` is used but has no block; the word {quoted} is a terminal of the grammar",
                            symbol.name
                        ),
                    )
                    .with_label("not defined")
                    .with_help(format!(
                        "quote it to use the word: {quoted}; or define a block `{} {{ … }}`",
                        symbol.name
                    ))
                    .with_suggestion(Some(quoted.clone())),
                );
            }
            continue;
        }
        let suggestion = suggester.closest(&symbol.name);
        let help = match suggestion {
            Some(s) => format!(
                "fix the name (perhaps `{s}`), or define it with a block `{} {{ … }}`",
                symbol.name
            ),
            None => format!(
                "define it with a block `{} {{ … }}`, or fix the name",
                symbol.name
            ),
        };
        for at in uses {
            out.push(
                Diagnostic::new(
                    Code::Undefined,
                    at,
                    format!(
                        "`{}` is used but has no block{}",
                        symbol.name,
                        did_you_mean(suggestion)
                    ),
                )
                .with_label("not defined")
                .with_help(help.clone())
                .with_suggestion(suggestion),
            );
        }
    }
}

fn start(grammar: &Grammar, sources: &SourceMap, suggester: &mut Lazy, out: &mut Vec<Diagnostic>) {
    match (grammar.start, grammar.start_location) {
        (Some(start), Some(at)) => {
            let symbol = grammar.nonterminal(start);
            if symbol.is_defined() || grammar.is_damaged(start) {
                return;
            }
            let suggestion = suggester.closest(&symbol.name);
            out.push(
                Diagnostic::new(
                    Code::UnknownStart,
                    at,
                    format!(
                        "the start symbol `{}` has no block{}",
                        symbol.name,
                        did_you_mean(suggestion)
                    ),
                )
                .with_label("no such block")
                .with_help(format!(
                    "start from a symbol that has a block, or define `{} {{ … }}`",
                    symbol.name
                ))
                .with_suggestion(suggestion),
            );
        }
        _ => {
            // A file without `start` is a library (a lexicon, shared
            // blocks): nothing in it needs a start symbol. Test blocks do —
            // every case is parsed from the start — so only a grammar with
            // tests is told to declare one, at its first test.
            let Some(first_test) = grammar.tests.first() else {
                return;
            };
            if sources.is_empty() {
                return;
            }
            let example = defined_in_source_order(grammar)
                .next()
                .map_or("Name", |nt| grammar.nt_name(nt));
            let tests = grammar.tests.len();
            out.push(
                Diagnostic::new(
                    Code::NoStart,
                    first_test.location,
                    format!(
                        "the grammar has {} but no `start` declaration; test sentences are parsed from the start symbol",
                        if tests == 1 {
                            "a test block".to_string()
                        } else {
                            format!("{tests} test blocks")
                        }
                    ),
                )
                .with_label("needs a start symbol")
                .with_help(format!(
                    "declare where derivations begin, e.g. `start {example}` at the top of the file; \
                     a file without tests needs no `start` (it is a library of blocks)"
                )),
            );
        }
    }
}

/// Blocks up to this many rules are searched for duplicates pair by pair,
/// which is cheaper than hashing every right-hand side.
const PAIRWISE_LIMIT: usize = 16;

fn duplicate_rules(grammar: &Grammar, out: &mut Vec<Diagnostic>) {
    let mut seen: HashMap<&[Sym], RuleId, FastHash> = HashMap::default();
    // The right-hand sides of a small block, read once.
    let mut sides: Vec<&[Sym]> = Vec::with_capacity(PAIRWISE_LIMIT);
    for nt in grammar.nt_ids() {
        let ids = &grammar.nonterminal(nt).rules;
        let small = ids.len() <= PAIRWISE_LIMIT;
        seen.clear();
        sides.clear();
        for &id in ids {
            let rule = grammar.rule(id);
            // The first earlier rule with the same right-hand side.
            let earlier = if small {
                let earlier = sides
                    .iter()
                    .position(|&side| side == rule.rhs.as_slice())
                    .map(|k| ids[k]);
                sides.push(&rule.rhs);
                earlier
            } else {
                let earlier = seen.get(rule.rhs.as_slice()).copied();
                if earlier.is_none() {
                    seen.insert(&rule.rhs, id);
                }
                earlier
            };
            match earlier {
                None => {}
                Some(first) => out.push(
                    Diagnostic::new(
                        Code::DuplicateRule,
                        rule.location,
                        format!("rule `{}` is written twice", grammar.rule_text(id)),
                    )
                    .with_label("same right-hand side again")
                    .with_related(grammar.rule(first).location, "first written here")
                    .with_help(
                        "delete one of the two alternatives and, if wanted, add its weight to the \
                         other",
                    ),
                ),
            }
        }
    }
}
