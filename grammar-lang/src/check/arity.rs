//! `arity`: rules longer than the configured maximum.

use crate::config::Config;
use crate::diagnostic::{Code, Diagnostic};
use crate::model::Grammar;

pub fn check(grammar: &Grammar, config: &Config, out: &mut Vec<Diagnostic>) {
    let limit = config.max_arity;
    for id in grammar.rule_ids() {
        let rule = grammar.rule(id);
        let len = rule.rhs.len();
        if len <= limit {
            continue;
        }
        out.push(
            Diagnostic::new(
                Code::Arity,
                rule.location,
                format!(
                    "rule of `{}` has {len} items, more than the limit of {limit}: the parser \
                     splits it into binary rules with {} intermediate symbols, and parsing time \
                     grows with the number of binary rules",
                    grammar.nt_name(rule.lhs),
                    len.saturating_sub(2)
                ),
            )
            .with_label(format!("{len} items"))
            .with_help(
                "factor a part of the right-hand side that belongs together into a named block \
                 of its own and use that name here; or raise `max-arity` in trellis.toml",
            ),
        );
    }
}
