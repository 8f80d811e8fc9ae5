//! Graph checks over the rules: `unreachable`, `unproductive`, `unary-cycle`.
//!
//! All three run in time linear in the size of the grammar: reachability is
//! a breadth-first search, productivity the classic worklist computation of
//! the least fixed point (each rule keeps a count of right-hand-side
//! non-terminals not yet known to be productive), and unary cycles come from
//! the strongly connected components of the unary-rule graph
//! ([`crate::scc`]).

use super::number_text;
use crate::diagnostic::{Code, Diagnostic, Severity};
use crate::model::{Grammar, NtId, Ratio, RuleId, Sym};
use crate::scc::strongly_connected;
use num_bigint::BigInt;
use num_traits::One;
use std::collections::VecDeque;

pub fn check(grammar: &Grammar, out: &mut Vec<Diagnostic>) {
    let flat = FlatRules::new(grammar);
    unreachable(grammar, &flat, out);
    unproductive(grammar, &flat, out);
    unary_cycles(grammar, &flat, out);
}

/// What the graph analyses need of each rule, read from the rules once and
/// kept in flat arrays: the non-terminals on its right-hand side (rule
/// `r`'s are `nts[offsets[r]..offsets[r + 1]]`, once per occurrence) and,
/// for a unary rule `A → B`, its target `B`.
struct FlatRules {
    /// The left-hand side of each rule.
    lhs: Vec<u32>,
    offsets: Vec<u32>,
    nts: Vec<u32>,
    /// `NONE` for rules that are not unary.
    unary_target: Vec<u32>,
}

impl FlatRules {
    fn new(grammar: &Grammar) -> FlatRules {
        let mut offsets = Vec::with_capacity(grammar.rules.len() + 1);
        let mut nts = Vec::with_capacity(grammar.rules.len() * 2);
        let mut unary_target = Vec::with_capacity(grammar.rules.len());
        let mut lhs = Vec::with_capacity(grammar.rules.len());
        offsets.push(0);
        for rule in &grammar.rules {
            lhs.push(rule.lhs.0);
            for &sym in &rule.rhs {
                if let Sym::N(nt) = sym {
                    nts.push(nt.0);
                }
            }
            offsets.push(nts.len() as u32);
            unary_target.push(match rule.rhs.as_slice() {
                [Sym::N(target)] => target.0,
                _ => NONE,
            });
        }
        FlatRules {
            lhs,
            offsets,
            nts,
            unary_target,
        }
    }

    fn nts_of(&self, rule: usize) -> &[u32] {
        &self.nts[self.offsets[rule] as usize..self.offsets[rule + 1] as usize]
    }
}

/// The non-terminals reachable from `start` (including it).
pub fn reachable_from(grammar: &Grammar, start: NtId) -> Vec<bool> {
    reachable_in(grammar, &FlatRules::new(grammar), start)
}

fn reachable_in(grammar: &Grammar, flat: &FlatRules, start: NtId) -> Vec<bool> {
    reachable_from_all(grammar, flat, &[start])
}

fn reachable_from_all(grammar: &Grammar, flat: &FlatRules, roots: &[NtId]) -> Vec<bool> {
    let mut seen = vec![false; grammar.nonterminals.len()];
    let mut queue = VecDeque::new();
    for root in roots {
        if !seen[root.index()] {
            seen[root.index()] = true;
            queue.push_back(root.0);
        }
    }
    while let Some(nt) = queue.pop_front() {
        for rule in &grammar.nonterminals[nt as usize].rules {
            for &next in flat.nts_of(rule.index()) {
                if !seen[next as usize] {
                    seen[next as usize] = true;
                    queue.push_back(next);
                }
            }
        }
    }
    seen
}

fn unreachable(grammar: &Grammar, flat: &FlatRules, out: &mut Vec<Diagnostic>) {
    let Some(start) = grammar.start else { return };
    if !grammar.nonterminal(start).is_defined() {
        return;
    }
    let start_name = grammar.nt_name(start);
    // Symbols named in text the parser skipped count as reached: the
    // skipped text most likely uses them, and its error comes first.
    let mut roots = vec![start];
    roots.extend_from_slice(grammar.mentioned_in_damage());
    let seen = reachable_from_all(grammar, flat, &roots);
    for nt in grammar.nt_ids() {
        let Some(block) = &grammar.nonterminal(nt).block else {
            continue;
        };
        if seen[nt.index()] {
            continue;
        }
        let name = grammar.nt_name(nt);
        let mut d = Diagnostic::new(
            Code::Unreachable,
            block.name,
            format!("`{name}` cannot be reached from the start symbol `{start_name}`"),
        )
        .with_label("never used in a derivation")
        .with_help(format!(
            "use `{name}` in a rule that is reachable from `{start_name}`, or delete the block"
        ));
        if let Some(at) = grammar.start_location {
            d = d.with_related(at, "start symbol declared here");
        }
        out.push(d);
    }
}

/// Which non-terminals derive at least one string of terminals.
pub fn productive(grammar: &Grammar) -> Vec<bool> {
    productive_in(grammar, &FlatRules::new(grammar), |_| true)
}

/// Which non-terminals derive at least one string of terminals using only
/// the rules that `keep` accepts (the engine keeps rules of positive
/// probability).
pub fn productive_with(grammar: &Grammar, keep: impl Fn(RuleId) -> bool) -> Vec<bool> {
    productive_in(grammar, &FlatRules::new(grammar), keep)
}

fn productive_in(grammar: &Grammar, flat: &FlatRules, keep: impl Fn(RuleId) -> bool) -> Vec<bool> {
    let n = grammar.nonterminals.len();
    let rules = grammar.rules.len();
    // For each rule: how many right-hand-side non-terminals are not yet
    // known to be productive. For each non-terminal: the rules it occurs in
    // (once per occurrence), as a compressed adjacency list.
    let kept: Vec<bool> = grammar.rule_ids().map(&keep).collect();
    let mut pending = vec![0u32; rules];
    let mut offsets = vec![0usize; n + 1];
    for r in 0..rules {
        if !kept[r] {
            continue;
        }
        let nts = flat.nts_of(r);
        pending[r] = nts.len() as u32;
        for &nt in nts {
            offsets[nt as usize + 1] += 1;
        }
    }
    for i in 0..n {
        offsets[i + 1] += offsets[i];
    }
    let mut fill = offsets.clone();
    let mut occurrences = vec![0u32; offsets[n]];
    for (r, _) in kept.iter().enumerate().filter(|(_, &kept)| kept) {
        for &nt in flat.nts_of(r) {
            occurrences[fill[nt as usize]] = r as u32;
            fill[nt as usize] += 1;
        }
    }
    let mut productive = vec![false; n];
    let mut queue = Vec::new();
    for (r, &lhs) in flat.lhs.iter().enumerate() {
        if kept[r] && pending[r] == 0 && !productive[lhs as usize] {
            productive[lhs as usize] = true;
            queue.push(lhs);
        }
    }
    while let Some(nt) = queue.pop() {
        let nt = nt as usize;
        for &r in &occurrences[offsets[nt]..offsets[nt + 1]] {
            let r = r as usize;
            pending[r] -= 1;
            let lhs = flat.lhs[r] as usize;
            if pending[r] == 0 && !productive[lhs] {
                productive[lhs] = true;
                queue.push(lhs as u32);
            }
        }
    }
    productive
}

/// How many failing rules the message spells out (all are related locations).
const LISTED_RULES: usize = 4;

fn unproductive(grammar: &Grammar, flat: &FlatRules, out: &mut Vec<Diagnostic>) {
    let productive = productive_in(grammar, flat, |_| true);
    for nt in grammar.nt_ids() {
        let Some(block) = &grammar.nonterminal(nt).block else {
            continue;
        };
        if productive[nt.index()] || grammar.is_damaged(nt) {
            continue;
        }
        // A block that needs a block the parser had to repair: the repair's
        // error comes first.
        let needs_damaged = grammar.rules_of(nt).any(|(_, rule)| {
            rule.rhs
                .iter()
                .any(|&sym| matches!(sym, Sym::N(dep) if grammar.is_damaged(dep)))
        });
        if needs_damaged {
            continue;
        }
        let name = grammar.nt_name(nt);
        let mut failing = Vec::new();
        for (id, rule) in grammar.rules_of(nt) {
            let mut needs: Vec<NtId> = Vec::new();
            for &sym in &rule.rhs {
                if let Sym::N(dep) = sym {
                    if !productive[dep.index()] && !needs.contains(&dep) {
                        needs.push(dep);
                    }
                }
            }
            let needs: Vec<String> = needs
                .into_iter()
                .map(|dep| {
                    if grammar.nonterminal(dep).is_defined() {
                        format!("`{}`", grammar.nt_name(dep))
                    } else {
                        format!("`{}` (undefined)", grammar.nt_name(dep))
                    }
                })
                .collect();
            failing.push((id, rule.location, needs.join(", ")));
        }
        let message = if failing.is_empty() {
            format!("`{name}` derives no string of words: its block has no rules")
        } else {
            let mut listed: Vec<String> = failing
                .iter()
                .take(LISTED_RULES)
                .map(|(id, _, needs)| format!("`{}` needs {needs}", grammar.rule_text(*id)))
                .collect();
            if failing.len() > LISTED_RULES {
                listed.push(format!("and {} more rules", failing.len() - LISTED_RULES));
            }
            format!(
                "`{name}` derives no string of words: every rule needs a symbol that never \
                 finishes ({})",
                listed.join("; ")
            )
        };
        let mut d = Diagnostic::new(Code::Unproductive, block.name, message)
            .with_label("never finishes")
            .with_help(format!(
                "give `{name}` an alternative that reaches words without going through \
                 these symbols again, e.g. one made of terminals only"
            ));
        for (_, at, needs) in failing {
            d = d.with_related(at, format!("needs {needs}"));
        }
        out.push(d);
    }
}

/// A directed graph in compressed form: the edges leaving node `v` go to
/// `targets[offsets[v]..offsets[v + 1]]` by the rules at the same positions
/// of `rules`.
struct Graph {
    offsets: Vec<usize>,
    targets: Vec<u32>,
    rules: Vec<RuleId>,
}

impl Graph {
    fn out(&self, v: usize) -> std::ops::Range<usize> {
        self.offsets[v]..self.offsets[v + 1]
    }

    fn successors(&self, v: u32) -> &[u32] {
        &self.targets[self.out(v as usize)]
    }

    /// The edges leaving `v` as (target, rule) pairs.
    fn edges(&self, v: u32) -> impl Iterator<Item = (u32, RuleId)> + '_ {
        let range = self.out(v as usize);
        self.targets[range.clone()]
            .iter()
            .copied()
            .zip(self.rules[range].iter().copied())
    }
}

/// The graph of unary rules `A → B`, restricted to the edges `keep` accepts.
fn unary_graph(grammar: &Grammar, flat: &FlatRules, keep: impl Fn(RuleId) -> bool) -> Graph {
    let n = grammar.nonterminals.len();
    let mut offsets = vec![0usize; n + 1];
    let (mut targets, mut rules) = (Vec::new(), Vec::new());
    for (nt, symbol) in grammar.nonterminals.iter().enumerate() {
        for &id in &symbol.rules {
            let target = flat.unary_target[id.index()];
            if target != NONE && keep(id) {
                targets.push(target);
                rules.push(id);
            }
        }
        offsets[nt + 1] = targets.len();
    }
    Graph {
        offsets,
        targets,
        rules,
    }
}

const NONE: u32 = u32::MAX;

/// The component number of each node that lies on an edge (see
/// [`strongly_connected`]; `NONE` for the others, which are on no cycle).
fn components(graph: &Graph) -> Vec<u32> {
    let n = graph.offsets.len() - 1;
    let roots = (0..n as u32).filter(|&v| !graph.out(v as usize).is_empty());
    let mut component = vec![NONE; n];
    for (c, members) in strongly_connected(n, roots, |v| graph.successors(v))
        .iter()
        .enumerate()
    {
        for &v in members {
            component[v as usize] = c as u32;
        }
    }
    component
}

/// The members of each component that contains a cycle (more than one
/// node, or one node with an edge to itself), in order of first member.
fn cyclic_components(graph: &Graph, component: &[u32]) -> Vec<Vec<u32>> {
    let count = component
        .iter()
        .filter(|&&c| c != NONE)
        .map(|&c| c as usize + 1)
        .max()
        .unwrap_or(0);
    let mut members: Vec<Vec<u32>> = vec![Vec::new(); count];
    for (v, &c) in component.iter().enumerate() {
        if c != NONE {
            members[c as usize].push(v as u32);
        }
    }
    members
        .into_iter()
        .filter(|m| match m.as_slice() {
            [] => false,
            [v] => graph.successors(*v).contains(v),
            _ => true,
        })
        .collect()
}

/// A shortest cycle through `from` inside its component (breadth-first
/// search), as the rules taken in order. `parent` must be all `None` and is
/// left that way.
fn cycle_through(
    graph: &Graph,
    component: &[u32],
    from: u32,
    parent: &mut [Option<(u32, RuleId)>],
) -> Vec<RuleId> {
    let c = component[from as usize];
    let mut touched = Vec::new();
    let mut queue = VecDeque::from([from]);
    let mut found = None;
    'search: while let Some(u) = queue.pop_front() {
        for (w, rule) in graph.edges(u) {
            if component[w as usize] != c {
                continue;
            }
            if w == from {
                found = Some((u, rule));
                break 'search;
            }
            if parent[w as usize].is_none() {
                parent[w as usize] = Some((u, rule));
                touched.push(w);
                queue.push_back(w);
            }
        }
    }
    let mut cycle = Vec::new();
    if let Some((mut u, last)) = found {
        cycle.push(last);
        while u != from {
            match parent[u as usize] {
                Some((prev, rule)) => {
                    cycle.push(rule);
                    u = prev;
                }
                None => break,
            }
        }
        cycle.reverse();
    }
    for w in touched {
        parent[w as usize] = None;
    }
    cycle
}

/// The member whose first rule comes first in the source, so reports start
/// where a reader would.
fn first_in_source(grammar: &Grammar, members: &[u32]) -> u32 {
    members
        .iter()
        .copied()
        .min_by_key(|&v| {
            grammar.nonterminals[v as usize]
                .rules
                .first()
                .map_or(u32::MAX, |r| r.0)
        })
        .unwrap_or(0)
}

fn unary_cycles(grammar: &Grammar, flat: &FlatRules, out: &mut Vec<Diagnostic>) {
    let all = unary_graph(grammar, flat, |_| true);
    let all_components = components(&all);
    let cyclic = cyclic_components(&all, &all_components);
    if cyclic.is_empty() {
        return;
    }
    // Cycles whose every rule has probability exactly 1: a derivation that
    // enters one never leaves. They lie inside the components above.
    let certain = unary_graph(grammar, flat, |id| grammar.rule(id).probability.is_one());
    let certain_components = components(&certain);
    let mut certain_in: Vec<Option<u32>> = vec![None; grammar.nonterminals.len()];
    for members in cyclic_components(&certain, &certain_components) {
        let rep = first_in_source(grammar, &members);
        let outer = all_components[rep as usize] as usize;
        if certain_in[outer].is_none() {
            certain_in[outer] = Some(rep);
        }
    }
    let mut parent = vec![None; grammar.nonterminals.len()];
    for members in cyclic {
        let outer = all_components[members[0] as usize] as usize;
        let (cycle, is_certain) = match certain_in[outer] {
            Some(rep) => (
                cycle_through(&certain, &certain_components, rep, &mut parent),
                true,
            ),
            None => {
                let rep = first_in_source(grammar, &members);
                (
                    cycle_through(&all, &all_components, rep, &mut parent),
                    false,
                )
            }
        };
        if let Some(d) = cycle_diagnostic(grammar, &cycle, is_certain, members.len()) {
            out.push(d);
        }
    }
}

fn cycle_diagnostic(
    grammar: &Grammar,
    cycle: &[RuleId],
    certain: bool,
    component_size: usize,
) -> Option<Diagnostic> {
    let (&first, rest) = cycle.split_first()?;
    let mut path = vec![grammar.nt_name(grammar.rule(first).lhs)];
    // Numerators and denominators are multiplied separately and reduced
    // once: reducing after every step costs a gcd of ever longer numbers.
    let mut numer = BigInt::one();
    let mut denom = BigInt::one();
    for &id in cycle {
        let rule = grammar.rule(id);
        numer *= rule.probability.numer();
        denom *= rule.probability.denom();
        if let [Sym::N(target)] = rule.rhs.as_slice() {
            path.push(grammar.nt_name(*target));
        }
    }
    let product = Ratio::new(numer, denom);
    let path = path.join(" → ");
    let mut message = format!("unary rules form a cycle: {path}");
    let others = component_size.saturating_sub(cycle.len());
    if others > 0 {
        message.push_str(&format!(
            " ({others} more symbols are caught in cycles with these)"
        ));
    }
    let mut d = if certain {
        message.push_str(
            "; every rule on it has probability 1, so a derivation that enters it never ends",
        );
        let mut d = Diagnostic::new(Code::UnaryCycle, grammar.rule(first).location, message);
        d.severity = Severity::Error;
        d.with_label("loops forever")
    } else {
        message.push_str(&format!(
            "; going round it once has probability {}",
            number_text(&product)
        ));
        Diagnostic::new(Code::UnaryCycle, grammar.rule(first).location, message)
            .with_label("starts a cycle of unary rules")
    };
    for &id in rest {
        d = d.with_related(
            grammar.rule(id).location,
            format!("then `{}`", grammar.rule_text(id)),
        );
    }
    Some(d.with_help(
        "a cycle of single-symbol rules gives a sentence infinitely many parse trees and makes \
         the parser close chains of unary rules; break it by removing one of these rules or by \
         giving it a word of its own",
    ))
}
