//! Weight checks: blocks must sum to exactly 1, weights must be usable.
//!
//! * `zero-weight` (warning) and `negative-weight` (error) at the weight.
//! * `no-mass-left`: a plain block with unweighted alternatives whose
//!   weighted alternatives already use all the mass; reported at the
//!   unweighted alternatives.
//! * `all-zero`: a `relative` block whose weights are all 0, so its rules
//!   can never be used (reported instead of a `zero-weight` per rule).
//! * `sum-not-one`: a plain block whose resolved probabilities do not add up
//!   to exactly 1, with the exact sum and the exact gap.
//!
//! The sum checks are skipped for `relative` blocks (they are normalised by
//! definition), for blocks with a negative weight (the negative weight is
//! the error to fix first, and any sum would be misleading), for damaged
//! blocks (an unreadable weight or an empty alternative was already
//! reported) and for blocks without rules (reported as `unproductive`).

use super::{grouped, number_text, short_fraction};
use crate::diagnostic::{Code, Diagnostic};
use crate::lower::exact_sum;
use crate::model::{Approximation, Grammar, NtId, Ratio, Rule, EXACT_SUM_BITS};
use num_traits::{One, Signed, Zero};

pub fn check(grammar: &Grammar, out: &mut Vec<Diagnostic>) {
    // One pair of lists for all blocks.
    let mut weights = Vec::new();
    let mut unweighted = Vec::new();
    for nt in grammar.nt_ids() {
        let Some(block) = &grammar.nonterminal(nt).block else {
            continue;
        };
        let name = grammar.nt_name(nt);
        let mut has_negative = false;
        weights.clear();
        unweighted.clear();
        // A relative block with nothing to divide by: one finding for the
        // block rather than one per rule.
        let all_zero = block.relative
            && !grammar.is_damaged(nt)
            && !grammar.nonterminal(nt).rules.is_empty()
            && grammar
                .rules_of(nt)
                .all(|(_, rule)| rule.weight.as_ref().is_some_and(|w| w.value.is_zero()));
        if all_zero {
            out.push(
                Diagnostic::new(
                    Code::AllZero,
                    block.name,
                    format!(
                        "every weight of the relative block `{name}` is 0: there is nothing to \
                         divide by, so none of its {} rules can be used",
                        grammar.nonterminal(nt).rules.len()
                    ),
                )
                .with_label("all weights 0")
                .with_help(format!(
                    "give at least one alternative of `{name}` a positive weight"
                )),
            );
            continue;
        }
        for (id, rule) in grammar.rules_of(nt) {
            let Some(weight) = &rule.weight else {
                unweighted.push(rule);
                continue;
            };
            weights.push(&weight.value);
            if weight.value.is_zero() {
                out.push(
                    Diagnostic::new(
                        Code::ZeroWeight,
                        weight.location,
                        format!(
                            "rule `{}` has weight {} and can never be used",
                            grammar.rule_text(id),
                            weight.text
                        ),
                    )
                    .with_label("weight 0")
                    .with_help("remove the alternative, or give it a positive weight"),
                );
            } else if weight.value.is_negative() {
                has_negative = true;
                out.push(
                    Diagnostic::new(
                        Code::NegativeWeight,
                        weight.location,
                        format!(
                            "rule `{}` has the negative weight {}; weights cannot be below 0",
                            grammar.rule_text(id),
                            number_text(&weight.value)
                        ),
                    )
                    .with_label("negative weight")
                    .with_help(format!(
                        "use a weight of 0 or more; the sum of `{name}` is checked once no weight \
                         is negative"
                    )),
                );
            }
        }
        let rule_count = grammar.nonterminal(nt).rules.len();
        if let Some(approx) = &block.approximate {
            if !has_negative && !grammar.is_damaged(nt) && rule_count > 0 {
                approximate(grammar, nt, approx, &unweighted, out);
            }
            continue;
        }
        if block.relative || has_negative || grammar.is_damaged(nt) || rule_count == 0 {
            continue;
        }
        if let Some((first, rest)) = unweighted.split_first() {
            let weighted = exact_sum(weights.iter().copied());
            if weighted >= Ratio::one() {
                let how_much = if weighted.is_one() {
                    "sum to 1, the whole probability of the block".to_string()
                } else {
                    format!(
                        "sum to {}, more than the whole probability 1 of the block",
                        number_text(&weighted)
                    )
                };
                let alternatives = if unweighted.len() == 1 {
                    "the unweighted alternative gets".to_string()
                } else {
                    format!("the {} unweighted alternatives get", unweighted.len())
                };
                let mut d = Diagnostic::new(
                    Code::NoMassLeft,
                    first.location,
                    format!(
                        "the weighted alternatives of `{name}` already {how_much}, so \
                         {alternatives} probability 0"
                    ),
                )
                .with_label("gets nothing")
                .with_help(format!(
                    "lower the weights so that something is left for the unweighted \
                     alternatives, give them weights of their own, or mark `{name}` `relative`"
                ));
                for rule in rest {
                    d = d.with_related(rule.location, "also gets nothing");
                }
                out.push(d.with_related(block.name, "block defined here"));
                continue;
            }
        }
        if !block.mass.is_one() {
            let gap = &block.mass - Ratio::one();
            let (amount, side) = if gap.is_negative() {
                (-gap, "short")
            } else {
                (gap, "too much")
            };
            out.push(
                Diagnostic::new(
                    Code::SumNotOne,
                    block.name,
                    format!(
                        "block `{name}` sums to {}: {} {side}",
                        number_text(&block.mass),
                        number_text(&amount)
                    ),
                )
                .with_label(format!("sums to {}", short_fraction(&block.mass)))
                .with_help(format!(
                    "make the weights of `{name}` add up to exactly 1 (an unweighted alternative \
                     takes whatever is left), or mark the block `relative` to divide the weights \
                     by their sum"
                )),
            );
        }
    }
}

/// The findings on a block resolved in floating point (its exact sum is
/// past [`EXACT_SUM_BITS`]): `sum-not-one` or `no-mass-left` when the
/// floating-point sum is farther from 1 than its error bound, and in every
/// case an `approximate-sum` note saying how the block was computed.
fn approximate(
    grammar: &Grammar,
    nt: NtId,
    approx: &Approximation,
    unweighted: &[&Rule],
    out: &mut Vec<Diagnostic>,
) {
    let Some(block) = &grammar.nonterminal(nt).block else {
        return;
    };
    let name = grammar.nt_name(nt);
    let (sum, tolerance) = (approx.weighted, approx.tolerance);
    let how = format!(
        "checked approximately: the exact sum needs more than {} bits, so it was computed in \
         floating point, within ±{tolerance:.1e}",
        grouped(EXACT_SUM_BITS)
    );
    let decided = !block.relative
        && if approx.unweighted {
            sum - tolerance >= 1.0
        } else {
            (sum - 1.0).abs() > tolerance
        };
    if decided && approx.unweighted {
        if let Some((first, rest)) = unweighted.split_first() {
            let mut d = Diagnostic::new(
                Code::NoMassLeft,
                first.location,
                format!(
                    "the weighted alternatives of `{name}` already sum to ≈{sum:.6e}, at least the \
                     whole probability 1 of the block, so the unweighted alternatives get \
                     probability 0 ({how})"
                ),
            )
            .with_label("gets nothing")
            .with_help(format!(
                "lower the weights so that something is left for the unweighted alternatives, \
                 give them weights of their own, or mark `{name}` `relative`"
            ));
            for rule in rest {
                d = d.with_related(rule.location, "also gets nothing");
            }
            out.push(d.with_related(block.name, "block defined here"));
        }
    } else if decided {
        let gap = sum - 1.0;
        let side = if gap < 0.0 { "short" } else { "too much" };
        out.push(
            Diagnostic::new(
                Code::SumNotOne,
                block.name,
                format!(
                    "block `{name}` sums to ≈{sum:.6e}: ≈{:.6e} {side} ({how})",
                    gap.abs()
                ),
            )
            .with_label(format!("sums to ≈{sum:.6e} (checked approximately)"))
            .with_help(format!(
                "make the weights of `{name}` add up to exactly 1 (an unweighted alternative \
                 takes whatever is left), or mark the block `relative` to divide the weights by \
                 their sum"
            )),
        );
    }
    let what = if block.relative {
        format!(
            "the weights of the relative block `{name}` sum to ≈{sum:.6e} (within \
             ±{tolerance:.1e}); each probability is its weight divided by that sum in floating \
             point"
        )
    } else if decided {
        format!("the sum of `{name}` was {how}")
    } else if !approx.unweighted {
        format!(
            "the sum of `{name}` was {how}: ≈{sum:.6e}, within the error bound of 1, so whether \
             it is exactly 1 cannot be told"
        )
    } else if sum + tolerance < 1.0 {
        format!(
            "the weights of `{name}` sum to ≈{sum:.6e} ({how}); the unweighted alternatives \
             share the rest in floating point"
        )
    } else {
        format!(
            "the weights of `{name}` sum to ≈{sum:.6e} ({how}): too close to 1 to tell whether \
             anything is left for the unweighted alternatives"
        )
    };
    out.push(
        Diagnostic::new(Code::ApproximateSum, block.name, what)
            .with_label("checked approximately")
            .with_help(format!(
                "runs use these floating-point probabilities; to have the sum computed exactly, \
                 write the weights of `{name}` with fewer digits or over fewer distinct \
                 denominators (for example as whole counts in a `relative` block)"
            )),
    );
}
