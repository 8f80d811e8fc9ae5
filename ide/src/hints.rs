//! Inlay hints (resolved probabilities) and code lens positions.

use super::locate;
use super::numbers::{exact, float};
use grammar_lang::analysis::Analysis;
use grammar_lang::model::{fraction, Ratio};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::Decl;
use grammar_lang::weight::exact_decimal;

/// A short label shown inside the text at `offset`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct InlayHint {
    pub offset: usize,
    pub label: String,
    /// Put a space before / after the label.
    pub pad_left: bool,
    pub pad_right: bool,
    /// The longer explanation shown on hovering the hint.
    pub tooltip: String,
}

/// Longest fraction written in a hint; longer ones become `≈ decimal`.
const SHORT_FRACTION: usize = 7;

/// The resolved probability of every alternative in `range` of `file` whose
/// probability is not written as such: unweighted alternatives (shown where
/// a weight would be, `= 1/3 `) and alternatives of `relative` blocks
/// (shown after their weight, ` = 3/5`). Blocks with an unreadable weight
/// or an empty alternative get no hints (their numbers mean nothing).
///
/// Labels: `= p/q` for a short fraction, `= 0.0625` for a short exact
/// decimal, `≈ 0.333` otherwise (three significant digits).
///
/// Cost: binary search, then linear in the alternatives of the range.
pub fn inlay_hints(analysis: &Analysis, file: FileId, range: Span) -> Vec<InlayHint> {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Vec::new();
    };
    let grammar = &analysis.grammar;
    let mut out = Vec::new();
    for decl in locate::decls_in(syntax, range) {
        let Decl::Block(block) = decl else { continue };
        let Some(nt) = locate::is_model_block(analysis, file, block) else {
            continue;
        };
        if grammar.is_damaged(nt) {
            continue;
        }
        let relative = block.relative.is_some();
        let from = block
            .alternatives
            .partition_point(|a| a.span.end < range.start);
        for alt in block.alternatives[from..]
            .iter()
            .take_while(|a| a.span.start <= range.end)
        {
            if alt.weight.is_some() && !relative {
                continue;
            }
            let Some(id) = locate::rule_of(analysis, file, block, alt) else {
                continue;
            };
            let rule = grammar.rule(id);
            let label = label(&rule.probability);
            let tooltip = format!(
                "probability of `{}`: {}{}",
                grammar.rule_text(id),
                exact(&rule.probability),
                if relative {
                    " (weight divided by the block's sum)"
                } else {
                    " (an equal share of what the weighted alternatives leave)"
                }
            );
            out.push(match alt.weight {
                Some(w) => InlayHint {
                    offset: w.end as usize,
                    label: label.clone(),
                    pad_left: true,
                    pad_right: false,
                    tooltip,
                },
                None => InlayHint {
                    offset: alt.span.start as usize,
                    label,
                    pad_left: false,
                    pad_right: true,
                    tooltip,
                },
            });
        }
    }
    out
}

fn label(p: &Ratio) -> String {
    let f = fraction(p);
    if f.len() <= SHORT_FRACTION {
        return format!("= {f}");
    }
    match exact_decimal(p, 4) {
        Some(d) => format!("= {d}"),
        None => {
            let x = grammar_lang::model::to_f64(p);
            let digits = if x > 0.0 {
                // Three significant digits.
                (2.0 - x.log10().floor()).clamp(0.0, 12.0) as usize
            } else {
                3
            };
            let s = format!("{x:.digits$}");
            let s = if s.contains('.') {
                s.trim_end_matches('0').trim_end_matches('.').to_string()
            } else {
                s
            };
            if s == "0" || s == "1" {
                format!("≈ {}", float(x))
            } else {
                format!("≈ {s}")
            }
        }
    }
}

/// What a code lens offers.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum CodeLensKind {
    /// Run one test block: its index in `grammar.tests` and its name.
    RunTest { test: usize, name: String },
    /// Parse a sentence from the start symbol.
    ParseSentence,
    /// Sample sentences from the start symbol.
    Sample,
    /// Run every test block of the grammar (`tests` of them).
    RunAllTests { tests: usize },
}

/// A place for a code lens (shown above the line where `span` starts).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CodeLens {
    pub span: Span,
    pub kind: CodeLensKind,
}

/// One lens above each `test` block of `file` (run it), and above its
/// `start` declaration, if it is the grammar's start: parse a sentence,
/// sample, and run every test of the grammar (when it has any). The caller
/// attaches commands.
///
/// Cost: linear in the declarations of the file.
pub fn code_lenses(analysis: &Analysis, file: FileId) -> Vec<CodeLens> {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Vec::new();
    };
    let grammar = &analysis.grammar;
    // Tests of this file, in order, with their indices in the grammar.
    let mut tests = grammar
        .tests
        .iter()
        .enumerate()
        .filter(|(_, t)| t.location.file == file)
        .peekable();
    let mut out = Vec::new();
    for decl in &syntax.decls {
        match decl {
            Decl::Start(d)
                if grammar
                    .start_location
                    .is_some_and(|at| at.file == file && at.span == d.name.span) =>
            {
                out.push(CodeLens {
                    span: d.span,
                    kind: CodeLensKind::ParseSentence,
                });
                out.push(CodeLens {
                    span: d.span,
                    kind: CodeLensKind::Sample,
                });
                if !grammar.tests.is_empty() {
                    out.push(CodeLens {
                        span: d.span,
                        kind: CodeLensKind::RunAllTests {
                            tests: grammar.tests.len(),
                        },
                    });
                }
            }
            Decl::Test(t) => {
                while tests
                    .peek()
                    .is_some_and(|(_, g)| g.location.span.start < t.span.start)
                {
                    tests.next();
                }
                if let Some((i, g)) = tests.peek() {
                    if g.location.span == t.span {
                        out.push(CodeLens {
                            span: t.span,
                            kind: CodeLensKind::RunTest {
                                test: *i,
                                name: g.name.clone(),
                            },
                        });
                    }
                }
            }
            _ => {}
        }
    }
    out
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn inlay_hints(&self, file: FileId, range: Span) -> Vec<InlayHint> {
        inlay_hints(self.core(), file, range)
    }

    pub fn code_lenses(&self, file: FileId) -> Vec<CodeLens> {
        code_lenses(self.core(), file)
    }
}
