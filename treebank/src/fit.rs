//! Fitting the weights of an existing grammar to trees written in its own
//! symbols.
//!
//! Every node of a tree is one use of the rule that rewrites its label as
//! its children: the label is a block name of the grammar (as written, or
//! the name `trellis learn` gives a treebank label, see [`crate::names`]),
//! a child node is the non-terminal its label names and a word is a
//! terminal — a terminal of several words (`"fresh water"`) is the
//! sequence of its words, split by the grammar's one rule
//! ([`grammar_lang::model::words`]), so a leaf `fresh water` or the leaves
//! `fresh` `water` match it alike. A tree is checked whole before any of
//! its rules is counted; a node no rule produces is a [`Mismatch`] naming
//! the rule the tree needs.
//!
//! The new probability of a rule of a block seen in the data is
//! `(count + k) / (total + k · n)` for `n` rules in the block and
//! [`Smoothing::Add`]`(k)` (additive smoothing; with `k = 0` the
//! maximum-likelihood estimate of a multinomial — common practice). A block
//! no tree uses keeps its weights whatever the smoothing.

use crate::names::escape;
use grammar_lang::check::suggest::Suggester;
use grammar_lang::model::{words, Grammar, Notation, NtId, Ratio, RuleId, Sym};
use grammar_lang::tree::Tree;
use grammar_lang::weight::block_notation;
use std::collections::HashMap;
use std::fmt;

/// How unseen rules of a seen block get probability.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Smoothing {
    /// Maximum likelihood: an unseen rule of a seen block gets 0.
    None,
    /// Add `k` (positive) to every rule's count of a seen block.
    Add(Ratio),
}

impl Smoothing {
    /// The default, add ½: the estimate under Jeffreys' prior (Dirichlet
    /// with every parameter ½), which Krichevsky and Trofimov's estimator
    /// also uses; a rule written by hand but not seen keeps a small share
    /// instead of vanishing, without the strong pull to uniform of add-1
    /// (Laplace's rule of succession) on the few hundred trees a
    /// hand-written grammar is usually fitted to.
    pub fn default_add() -> Smoothing {
        Smoothing::Add(Ratio::new_i64(1, 2))
    }

    /// Reads `none` or `add-K`, with `K` a positive decimal or fraction
    /// (`add-1`, `add-0.5`, `add-1/3`).
    pub fn parse(text: &str) -> Result<Smoothing, String> {
        let text = text.trim();
        if text == "none" {
            return Ok(Smoothing::None);
        }
        let Some(k) = text.strip_prefix("add-") else {
            return Err(format!(
                "`{text}` is not a smoothing: write `none` or `add-K` with a positive number K, as in `add-1` or `add-0.5`"
            ));
        };
        let (value, notation) = grammar_lang::weight::parse_weight(k)
            .map_err(|why| format!("in `{text}`: {why}; write K as in `add-1` or `add-0.5`"))?;
        if notation == Notation::Percent {
            return Err(format!(
                "in `{text}`: K is a count, not a percentage; write it as in `add-0.5`"
            ));
        }
        if value <= Ratio::from(0) {
            return Err(format!(
                "in `{text}`: K must be positive; for no smoothing write `none`"
            ));
        }
        Ok(Smoothing::Add(value))
    }

    /// The `k` added to every count (0 for none).
    pub fn k(&self) -> Ratio {
        match self {
            Smoothing::None => Ratio::from(0),
            Smoothing::Add(k) => k.clone(),
        }
    }
}

impl fmt::Display for Smoothing {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Smoothing::None => f.write_str("none"),
            Smoothing::Add(k) => match grammar_lang::weight::exact_decimal(k, 6) {
                Some(decimal) => write!(f, "add-{decimal}"),
                None => write!(f, "add-{k}"),
            },
        }
    }
}

/// A node of a tree that no rule of the grammar produces.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Mismatch {
    /// The node, by its index in the tree's pre-order (the order of
    /// [`crate::read::TreeReader::positions`]).
    pub node: usize,
    pub message: String,
    pub help: String,
    /// The block the needed rule would go in, when the label names one,
    /// and the alternative it would need there, in the grammar's syntax.
    pub block: Option<(NtId, String)>,
}

/// One right-hand-side item of a tree node, before it is matched.
enum Child<'t> {
    Node(&'t str),
    Word(&'t str),
}

/// Rule counts of a grammar over trees written in its symbols.
#[derive(Debug)]
pub struct Fit<'g> {
    grammar: &'g Grammar,
    /// Per left-hand side, each right-hand side to its first rule: a rule
    /// written twice in a block (`duplicate-rule`) is credited to the first.
    rules: HashMap<NtId, HashMap<Box<[Sym]>, RuleId>>,
    counts: Vec<u64>,
    trees: u64,
}

impl<'g> Fit<'g> {
    pub fn new(grammar: &'g Grammar) -> Fit<'g> {
        let mut rules: HashMap<NtId, HashMap<Box<[Sym]>, RuleId>> = HashMap::new();
        for id in grammar.rule_ids() {
            let rule = grammar.rule(id);
            rules
                .entry(rule.lhs)
                .or_default()
                .entry(rule.rhs.clone().into_boxed_slice())
                .or_insert(id);
        }
        Fit {
            grammar,
            rules,
            counts: vec![0; grammar.rules.len()],
            trees: 0,
        }
    }

    /// How many trees were counted.
    pub fn trees(&self) -> u64 {
        self.trees
    }

    /// How often `rule` was used.
    pub fn count(&self, rule: RuleId) -> u64 {
        self.counts.get(rule.index()).copied().unwrap_or(0)
    }

    /// The non-terminal a tree label names: a block name as written, or the
    /// name `trellis learn` makes of a treebank label.
    pub fn symbol(&self, label: &str) -> Option<NtId> {
        let defined = |name: &str| {
            self.grammar
                .nt(name)
                .filter(|&nt| self.grammar.nonterminal(nt).is_defined())
        };
        defined(label).or_else(|| defined(&escape(label)))
    }

    /// Checks `tree` against the grammar and, when every node is produced
    /// by a rule, counts the rules it uses. Nothing is counted for a tree
    /// with a mismatch.
    pub fn add(&mut self, tree: &Tree) -> Result<(), Mismatch> {
        let used = self.rules_of(tree)?;
        for rule in used {
            self.counts[rule.index()] += 1;
        }
        self.trees += 1;
        Ok(())
    }

    /// The rules `tree` uses, one per node in pre-order, or the first node
    /// (in pre-order) that no rule produces. Iterative: trees of any depth.
    pub fn rules_of(&self, tree: &Tree) -> Result<Vec<RuleId>, Mismatch> {
        let mut used = Vec::new();
        let mut stack = vec![tree];
        let mut rhs: Vec<Sym> = Vec::new();
        let mut children: Vec<Child> = Vec::new();
        while let Some(node) = stack.pop() {
            let Tree::Node {
                label,
                children: kids,
            } = node
            else {
                continue;
            };
            let at = used.len();
            let lhs = self
                .symbol(label)
                .ok_or_else(|| self.unknown_label(at, label))?;
            children.clear();
            for kid in kids {
                match kid {
                    Tree::Node { label, .. } => children.push(Child::Node(label)),
                    Tree::Leaf(text) => children.extend(words(text).map(Child::Word)),
                }
            }
            rhs.clear();
            let mut matched = true;
            let child_node = at + 1;
            for (child, kid) in children.iter().zip(child_nodes(kids)) {
                match child {
                    Child::Node(label) => match self.symbol(label) {
                        Some(nt) => rhs.push(Sym::N(nt)),
                        // The child is reported at its own place.
                        None => return Err(self.unknown_label(child_node + kid, label)),
                    },
                    Child::Word(word) => match self.grammar.word_term(word) {
                        Some(t) => rhs.push(Sym::T(t)),
                        None => matched = false,
                    },
                }
            }
            let found = if matched {
                self.rules
                    .get(&lhs)
                    .and_then(|by_rhs| by_rhs.get(rhs.as_slice()))
            } else {
                None
            };
            match found {
                Some(&rule) => used.push(rule),
                None => return Err(self.no_rule(at, lhs, &children)),
            }
            stack.extend(kids.iter().rev());
        }
        Ok(used)
    }

    fn unknown_label(&self, node: usize, label: &str) -> Mismatch {
        let names = Suggester::new(
            self.grammar
                .nonterminals
                .iter()
                .filter(|n| n.is_defined())
                .map(|n| n.name.as_str()),
        );
        let help = match names.closest(label) {
            Some(name) => format!(
                "did you mean `{name}`? A node's label is the name of a block of the grammar"
            ),
            None => format!(
                "label the node with the name of a block of the grammar, or add a block `{label} {{ … }}`"
            ),
        };
        Mismatch {
            node,
            message: format!("`{label}` is not a symbol of the grammar: no block has this name"),
            help,
            block: None,
        }
    }

    fn no_rule(&self, node: usize, lhs: NtId, children: &[Child]) -> Mismatch {
        let name = self.grammar.nt_name(lhs);
        let alternative: Vec<String> = children
            .iter()
            .map(|c| match c {
                Child::Node(label) => match self.symbol(label) {
                    Some(nt) => self.grammar.nt_name(nt).to_string(),
                    None => label.to_string(),
                },
                Child::Word(word) => grammar_lang::syntax::lexer::quote(word),
            })
            .collect();
        let alternative = alternative.join(" ");
        let unknown: Vec<String> = children
            .iter()
            .filter_map(|c| match c {
                Child::Word(w) if self.grammar.word_term(w).is_none() => Some(format!("`{w}`")),
                _ => None,
            })
            .collect();
        let mut message =
            format!("no rule produces this node: the tree needs the rule `{name} → {alternative}`");
        if !unknown.is_empty() {
            message.push_str(&format!(
                " ({} {} no terminal of the grammar)",
                unknown.join(", "),
                if unknown.len() == 1 { "is" } else { "are" }
            ));
        }
        Mismatch {
            node,
            message,
            help: format!(
                "add the alternative `{alternative}` to the block `{name}`, or correct the tree"
            ),
            block: Some((lhs, alternative)),
        }
    }

    /// The new weights from the counts (see the module documentation).
    pub fn estimate(&self, smoothing: &Smoothing) -> Estimate {
        let grammar = self.grammar;
        let zero = Ratio::from(0);
        let k = smoothing.k();
        let mut blocks = Vec::new();
        for nt in grammar.nt_ids() {
            let Some(info) = &grammar.nonterminal(nt).block else {
                continue;
            };
            let ids: Vec<RuleId> = grammar.nonterminal(nt).rules.clone();
            if ids.is_empty() || grammar.is_damaged(nt) {
                continue;
            }
            let total: u64 = ids.iter().map(|&r| self.count(r)).sum();
            let old: Vec<Ratio> = ids
                .iter()
                .map(|&r| {
                    let p = &grammar.rule(r).probability;
                    if info.mass == zero || info.mass == Ratio::from(1) {
                        p.clone()
                    } else {
                        p / &info.mass
                    }
                })
                .collect();
            let notations: Vec<Notation> = ids
                .iter()
                .filter_map(|&r| grammar.rule(r).weight.as_ref().map(|w| w.notation))
                .collect();
            // A relative block states counts, unless written in percent
            // (shares of 100): then it states probabilities too.
            let counts_written = info.relative && block_notation(&notations) != Notation::Percent;
            let n = Ratio::from(ids.len() as i64);
            let denominator = Ratio::from(total as i64) + &k * &n;
            let seen = total > 0;
            let rules = ids
                .iter()
                .zip(old)
                .map(|(&rule, old)| {
                    let count = self.count(rule);
                    let (new, weight) = if seen {
                        let smoothed = Ratio::from(count as i64) + &k;
                        let new = &smoothed / &denominator;
                        let weight = if counts_written {
                            smoothed
                        } else {
                            new.clone()
                        };
                        (new, Some(weight))
                    } else {
                        (old.clone(), None)
                    };
                    RuleFit {
                        rule,
                        count,
                        old,
                        new,
                        weight,
                    }
                })
                .collect();
            blocks.push(BlockFit {
                nt,
                total,
                relative: info.relative,
                counts_written: seen && counts_written,
                rules,
            });
        }
        Estimate {
            smoothing: smoothing.clone(),
            trees: self.trees,
            blocks,
        }
    }
}

/// For each child of `kids`, how many nodes of the tree come before it
/// among its earlier siblings' subtrees (its pre-order offset after the
/// parent, minus one), repeated once per word for a leaf of several words.
fn child_nodes(kids: &[Tree]) -> impl Iterator<Item = usize> + '_ {
    let mut before = 0usize;
    kids.iter().flat_map(move |kid| {
        let here = before;
        match kid {
            Tree::Node { .. } => {
                before += nodes_in(kid);
                vec![here]
            }
            Tree::Leaf(text) => vec![here; words(text).count()],
        }
    })
}

/// How many nodes (not words) `tree` holds, iteratively.
fn nodes_in(tree: &Tree) -> usize {
    let mut n = 0;
    let mut stack = vec![tree];
    while let Some(t) = stack.pop() {
        if let Tree::Node { children, .. } = t {
            n += 1;
            stack.extend(children.iter());
        }
    }
    n
}

/// The fitted weights of one block.
#[derive(Clone, Debug, PartialEq)]
pub struct BlockFit {
    pub nt: NtId,
    /// How many nodes the trees have with this label.
    pub total: u64,
    pub relative: bool,
    /// Whether the new weights to write are smoothed counts (a seen
    /// `relative` block not written in percent) rather than probabilities.
    pub counts_written: bool,
    /// Every rule of the block, in order.
    pub rules: Vec<RuleFit>,
}

impl BlockFit {
    /// Whether any tree uses the block (otherwise it keeps its weights).
    pub fn seen(&self) -> bool {
        self.total > 0
    }

    /// The weights to write, one per rule, for a seen block.
    pub fn weights(&self) -> Option<Vec<Ratio>> {
        self.rules.iter().map(|r| r.weight.clone()).collect()
    }
}

/// The fitted weight of one rule.
#[derive(Clone, Debug, PartialEq)]
pub struct RuleFit {
    pub rule: RuleId,
    /// How often the trees use it.
    pub count: u64,
    /// Its probability before (its block's weights divided by their sum).
    pub old: Ratio,
    /// Its probability after fitting (`old` for a block no tree uses).
    pub new: Ratio,
    /// The weight to write: the smoothed count in a block of counts, the
    /// new probability otherwise; `None` in a block no tree uses.
    pub weight: Option<Ratio>,
}

/// Every block's fitted weights.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    pub smoothing: Smoothing,
    /// How many trees were counted.
    pub trees: u64,
    /// Every block of the grammar that lowering resolved, in symbol order.
    ///
    /// No symbol loses its way to words, even without smoothing: a symbol
    /// some tree uses derives that tree's words through rules the trees
    /// use (each counted at least once, so of positive probability), and
    /// a block no tree uses keeps its weights. A weight of 0 can still
    /// make a rule useless (`zero-weight`) or a test fail; the project
    /// layer analyses the fitted grammar again to say so.
    pub blocks: Vec<BlockFit>,
}

impl Estimate {
    /// The blocks the trees use.
    pub fn seen(&self) -> impl Iterator<Item = &BlockFit> {
        self.blocks.iter().filter(|b| b.seen())
    }

    /// The blocks no tree uses (they keep their weights).
    pub fn unseen(&self) -> impl Iterator<Item = &BlockFit> {
        self.blocks.iter().filter(|b| !b.seen())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::read::TreeReader;

    fn grammar(text: &str) -> Grammar {
        let analysis = grammar_lang::analyze_text(text);
        assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
        analysis.grammar
    }

    fn fit<'g>(g: &'g Grammar, trees: &str) -> Fit<'g> {
        let mut fit = Fit::new(g);
        for tree in TreeReader::new(trees.as_bytes()) {
            fit.add(&tree.unwrap()).unwrap();
        }
        fit
    }

    const FERRY: &str = "start Trip\nTrip {\n  0.5 Kind \"ticket\"\n  0.5 \"ticket\"\n}\nKind {\n  \"day\" | \"fresh water\" | \"single\"\n}\n";

    #[test]
    fn three_uses_against_one_give_three_quarters_without_smoothing() {
        let g = grammar(FERRY);
        let f = fit(
            &g,
            "(Trip (Kind day) ticket) (Trip (Kind fresh water) ticket) (Trip (Kind \"fresh water\") ticket) (Trip ticket)",
        );
        assert_eq!(f.trees(), 4);
        let e = f.estimate(&Smoothing::None);
        let trip = &e.blocks[0];
        // Maximum likelihood for a multinomial (common practice): 3/4, 1/4.
        assert_eq!(trip.total, 4);
        assert_eq!(trip.rules[0].new, Ratio::new_i64(3, 4));
        assert_eq!(trip.rules[1].new, Ratio::new_i64(1, 4));
        // Kind: day 1, fresh water 2, single 0 → 1/3, 2/3, 0.
        let kind = &e.blocks[1];
        let news: Vec<Ratio> = kind.rules.iter().map(|r| r.new.clone()).collect();
        assert_eq!(
            news,
            [Ratio::new_i64(1, 3), Ratio::new_i64(2, 3), Ratio::from(0)]
        );
        // Add-1 (Laplace): (3+1)/(4+2) = 4/6, (1+1)/(4+2) = 2/6.
        let e = f.estimate(&Smoothing::parse("add-1").unwrap());
        assert_eq!(e.blocks[0].rules[0].new, Ratio::new_i64(4, 6));
        assert_eq!(e.blocks[0].rules[1].new, Ratio::new_i64(2, 6));
    }

    #[test]
    fn a_word_the_grammar_lacks_counts_for_its_unseen_word_class() {
        // As the parser reads it: a capitalised word no terminal spells is
        // read as "<unseen:capitalised>" when the grammar has that terminal.
        let g = grammar(
            "start Trip\nTrip {\n  0.5 \"to\" Port\n  0.5 \"ticket\"\n}\nPort {\n  0.5 \"Ardmore\"\n  0.5 \"<unseen:capitalised>\"\n}\n",
        );
        let f = fit(
            &g,
            "(Trip to (Port Zorbo)) (Trip to (Port Ardmore)) (Trip to (Port Quayle))",
        );
        let e = f.estimate(&Smoothing::None);
        // Port: Ardmore 1, the capitalised class 2 → 1/3, 2/3 (maximum likelihood).
        let news: Vec<Ratio> = e.blocks[1].rules.iter().map(|r| r.new.clone()).collect();
        assert_eq!(news, [Ratio::new_i64(1, 3), Ratio::new_i64(2, 3)]);
    }

    #[test]
    fn unseen_blocks_keep_their_weights_and_relative_blocks_get_counts() {
        let g = grammar(
            "start S\nS relative {\n  2 A\n  1 B\n}\nA { \"a\" }\nB {\n  0.25 \"b\"\n  0.75 \"c\"\n}\n",
        );
        let f = fit(&g, "(S (A a)) (S (A a)) (S (A a))");
        let e = f.estimate(&Smoothing::default_add());
        let s = &e.blocks[0];
        assert!(s.counts_written);
        // Counts 3 and 0, plus one half each.
        assert_eq!(
            s.weights().unwrap(),
            [Ratio::new_i64(7, 2), Ratio::new_i64(1, 2)]
        );
        assert_eq!(s.rules[0].new, Ratio::new_i64(7, 8));
        let b = e.blocks.iter().find(|b| g.nt_name(b.nt) == "B").unwrap();
        assert!(!b.seen() && b.weights().is_none());
        assert_eq!(b.rules[1].new, Ratio::new_i64(3, 4));
    }

    #[test]
    fn a_relative_block_in_percent_states_probabilities() {
        let g = grammar("start S\nS relative {\n  60% \"a\"\n  60% \"b\"\n}\n");
        let f = fit(&g, "(S a) (S a) (S a) (S b)");
        let e = f.estimate(&Smoothing::None);
        assert!(!e.blocks[0].counts_written);
        // Shares of 100, not counts: 3/4 and 1/4.
        assert_eq!(
            e.blocks[0].weights().unwrap(),
            [Ratio::new_i64(3, 4), Ratio::new_i64(1, 4)]
        );
    }

    #[test]
    fn a_node_no_rule_produces_names_the_rule_needed() {
        let g = grammar(FERRY);
        let f = Fit::new(&g);
        let tree = |t: &str| TreeReader::new(t.as_bytes()).next().unwrap().unwrap();
        let e = f
            .rules_of(&tree("(Trip (Kind day) \"ticket\" (Kind single))"))
            .unwrap_err();
        assert_eq!(e.node, 0);
        assert_eq!(
            e.message,
            "no rule produces this node: the tree needs the rule `Trip → Kind \"ticket\" Kind`"
        );
        let e = f.rules_of(&tree("(Trip (Kind dya) ticket)")).unwrap_err();
        assert_eq!(e.node, 1);
        assert!(
            e.message.ends_with("(`dya` is no terminal of the grammar)"),
            "{}",
            e.message
        );
        let e = f
            .rules_of(&tree("(Trip (Kind day) (Knid day) ticket)"))
            .unwrap_err();
        assert_eq!(
            (e.node, e.help.as_str()),
            (
                2,
                "did you mean `Kind`? A node's label is the name of a block of the grammar"
            )
        );
    }

    #[test]
    fn smoothing_reads_none_and_add_k() {
        assert_eq!(Smoothing::parse("none"), Ok(Smoothing::None));
        assert_eq!(
            Smoothing::parse("add-1/3").unwrap().k(),
            Ratio::new_i64(1, 3)
        );
        assert_eq!(Smoothing::default_add().to_string(), "add-0.5");
        assert!(Smoothing::parse("add-0").is_err());
        assert!(Smoothing::parse("laplace").is_err());
    }
}
