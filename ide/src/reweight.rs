//! Rewriting the weights of blocks: new values written into the weight
//! tokens and nothing else, so every comment, doc comment, test block and
//! the layout survive (the span edits the formatter and the quick fixes
//! make).

use crate::TextEdit;
use grammar_lang::model::{Notation, NtId, Ratio};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::weight::{write_block, NotExact};
use num_traits::{One, Signed};

/// The new weights of one block as edits.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Reweighted {
    pub nt: NtId,
    /// Edits of weight tokens, and insertions before alternatives that had
    /// no weight; empty when the block already says what it should.
    pub edits: Vec<TextEdit>,
    /// Why the block could not keep its notation (then every weight it
    /// writes is an exact fraction).
    pub fallback: Option<NotExact>,
}

/// The edits that give the block of `nt` the weights `values`, one per
/// rule in order: probabilities summing to 1 for a plain block, any
/// non-negative numbers for a `relative` one. `None` when the block cannot
/// take them (no block, a damaged block, a count that does not match, a
/// negative value, or a plain block whose values do not sum to 1).
///
/// What is written ([`write_block`]): the block's notation, exactly, or
/// exact fractions throughout when some value cannot be exact in it.
/// A weight token whose value is unchanged keeps its text (unless the
/// block falls back to fractions). Alternatives written without a weight
/// stay so when leaving them bare gives every one of them its value — in a
/// plain block, equal positive shares of what the weighted ones leave; in a
/// `relative` block, the value 1 — and otherwise each gets its weight
/// inserted before it.
pub fn reweight(
    analysis: &grammar_lang::Analysis,
    nt: NtId,
    values: &[Ratio],
) -> Option<Reweighted> {
    let grammar = &analysis.grammar;
    let info = grammar.nonterminals.get(nt.index())?.block.as_ref()?;
    let rules: Vec<_> = grammar.rules_of(nt).map(|(_, r)| r).collect();
    if grammar.is_damaged(nt)
        || rules.len() != values.len()
        || values.iter().any(|v| v.is_negative())
    {
        return None;
    }
    if !info.relative && values.iter().sum::<Ratio>() != Ratio::one() {
        return None;
    }
    let bare: Vec<&Ratio> = rules
        .iter()
        .zip(values)
        .filter(|(r, _)| r.weight.is_none())
        .map(|(_, v)| v)
        .collect();
    let keep_bare = match bare.first() {
        None => true,
        Some(&first) => {
            bare.iter().all(|v| *v == first)
                && if info.relative {
                    first.is_one()
                } else {
                    first.is_positive()
                }
        }
    };
    let notations: Vec<Notation> = rules
        .iter()
        .filter_map(|r| r.weight.as_ref().map(|w| w.notation))
        .collect();
    // The values actually written, with the rule each belongs to.
    let written_rules: Vec<usize> = (0..rules.len())
        .filter(|&i| rules[i].weight.is_some() || !keep_bare)
        .collect();
    let written_values: Vec<Ratio> = written_rules.iter().map(|&i| values[i].clone()).collect();
    let written = write_block(&written_values, &notations);
    let mut edits = Vec::new();
    for (&i, text) in written_rules.iter().zip(&written.texts) {
        let rule = rules[i];
        match &rule.weight {
            Some(w) => {
                let unchanged = w.value == values[i] && written.fallback.is_none();
                if !unchanged && w.text != text.as_str() {
                    edits.push(TextEdit {
                        file: w.location.file,
                        span: w.location.span,
                        new_text: text.clone(),
                    });
                }
            }
            None => edits.push(TextEdit {
                file: rule.location.file,
                span: Span::point(rule.location.span.start as usize),
                new_text: format!("{text} "),
            }),
        }
    }
    Some(Reweighted {
        nt,
        edits,
        fallback: written.fallback,
    })
}

/// `text` with `edits` (all of one file, not overlapping) applied.
pub fn apply_edits(text: &str, edits: &[&TextEdit]) -> String {
    let mut sorted: Vec<&&TextEdit> = edits.iter().collect();
    sorted.sort_by_key(|e| (e.span.start, e.span.end));
    let mut out = String::with_capacity(text.len() + 16 * edits.len());
    let mut at = 0usize;
    for edit in sorted {
        let start = (edit.span.start as usize).clamp(at, text.len());
        let end = (edit.span.end as usize).clamp(start, text.len());
        out.push_str(&text[at..start]);
        out.push_str(&edit.new_text);
        at = end;
    }
    out.push_str(&text[at..]);
    out
}

impl crate::Analysis {
    /// [`reweight`] for each block of `blocks`, in order (blocks that
    /// cannot take their values are left out).
    pub fn reweight(&self, blocks: &[(NtId, Vec<Ratio>)]) -> Vec<Reweighted> {
        blocks
            .iter()
            .filter_map(|(nt, values)| reweight(self, *nt, values))
            .collect()
    }

    /// The new text of every file that `edits` change, in file order.
    pub fn edited_texts(&self, edits: &[&TextEdit]) -> Vec<(FileId, String)> {
        let mut files: Vec<FileId> = edits.iter().map(|e| e.file).collect();
        files.sort();
        files.dedup();
        files
            .into_iter()
            .filter(|f| (f.0 as usize) < self.sources.len())
            .map(|file| {
                let mine: Vec<&TextEdit> =
                    edits.iter().copied().filter(|e| e.file == file).collect();
                (file, apply_edits(&self.sources.get(file).text, &mine))
            })
            .collect()
    }
}
