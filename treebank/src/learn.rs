//! Maximum-likelihood grammars from counted trees.
//!
//! Every node of every (binarized) tree is one use of the rule that
//! rewrites its label as its children; a rule's probability is its count
//! over the count of its left-hand side (the maximum-likelihood estimate of
//! a multinomial; common practice). The grammar is written with the counts
//! themselves as `relative` weights, so it states exactly what was seen.

use crate::binarize::Markov;
use crate::names::{annotated, escape, is_intermediate};
use grammar_lang::syntax::lexer::quote;
use grammar_lang::tree::Tree;
use std::collections::HashMap;
use std::fmt::Write;

/// One right-hand-side item of a counted rule.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Item {
    Symbol(String),
    Word(String),
}

/// What to say about the learning in the grammar's header.
#[derive(Clone, Debug, Default)]
pub struct LearnOptions {
    /// Lines of the header comment (inputs, options, tree count), without `#`.
    pub header: Vec<String>,
    /// Words seen at most this many times in all (0: none) also count, at
    /// every use, for the unseen-word terminal of their shape class
    /// ([`grammar_lang::unseen`]), so the grammar reads words it never saw.
    pub rare: u64,
}

/// A fast hasher for the counts' keys (the multiply-and-rotate step of the
/// Fx hash, common practice in compilers): ids, and the names interned
/// once each. Not resistant to crafted collisions, which a local tool
/// reading its user's own treebank need not be.
#[derive(Default, Clone, Copy)]
struct IdHasher(u64);

impl std::hash::Hasher for IdHasher {
    fn finish(&self) -> u64 {
        // The multiply leaves its best-mixed bits at the top; the table
        // indexes buckets by the low bits (rotating them down is what
        // rustc-hash 2 does; common practice).
        self.0.rotate_left(26)
    }
    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for chunk in &mut chunks {
            let mut word = [0u8; 8];
            word.copy_from_slice(chunk);
            self.write_u64(u64::from_le_bytes(word));
        }
        for &b in chunks.remainder() {
            self.write_u64(u64::from(b));
        }
    }
    fn write_u32(&mut self, n: u32) {
        self.write_u64(u64::from(n));
    }
    fn write_u64(&mut self, n: u64) {
        self.0 = (self.0.rotate_left(5) ^ n).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
    fn write_usize(&mut self, n: usize) {
        self.write_u64(n as u64);
    }
}

type IdMap<K, V> = HashMap<K, V, std::hash::BuildHasherDefault<IdHasher>>;

/// Rule counts over any number of trees, in memory proportional to the
/// grammar (not to the trees). Symbols and words are interned: a rule is
/// its left-hand side's id and its right-hand side's items, each a symbol
/// id times two or a word id times two plus one.
#[derive(Clone, Debug, Default)]
pub struct Counts {
    symbols: Interner,
    words: Interner,
    /// Rules of more than two items, by left-hand side.
    rules: IdMap<u32, IdMap<Box<[u32]>, u64>>,
    /// Rules of at most two items (every rule of a binarized tree), by
    /// left-hand side and the items packed into one number ([`pack`]): one
    /// flat table of fixed-size keys, the hot path of learning.
    short: IdMap<(u32, u64), u64>,
    roots: IdMap<u32, u64>,
    trees: u64,
    /// For [`Counts::add_binarized`]: names built once each.
    names: Names,
}

/// The derived names [`Counts::add_binarized`] has built, by what they
/// are made of, so each is built (and escaped) once.
#[derive(Clone, Debug, Default)]
struct Names {
    /// Raw treebank labels to dense label ids.
    labels: IdMap<String, u32>,
    /// The escaped name of each label id.
    escaped: Vec<String>,
    /// (label, ancestors' labels up to the vertical order, `u32::MAX`
    /// after) to the node's symbol id.
    nodes: IdMap<[u32; MAX_KEPT + 1], u32>,
    /// (kind, parent symbol, sibling codes) to an intermediate's symbol id.
    intermediates: IdMap<Box<[u32]>, u32>,
}

/// The most ancestors [`Counts::add_binarized`] remembers itself (vertical
/// order 8, the command line's limit); beyond, it binarizes first.
const MAX_KEPT: usize = 7;

/// Names to dense ids and back.
#[derive(Clone, Debug, Default)]
struct Interner {
    ids: IdMap<String, u32>,
    names: Vec<String>,
}

impl Interner {
    fn id(&mut self, name: &str) -> u32 {
        if let Some(&id) = self.ids.get(name) {
            return id;
        }
        let id = self.names.len() as u32;
        self.names.push(name.to_string());
        self.ids.insert(name.to_string(), id);
        id
    }

    fn get(&self, name: &str) -> Option<u32> {
        self.ids.get(name).copied()
    }

    fn name(&self, id: u32) -> &str {
        &self.names[id as usize]
    }
}

/// The start symbol when trees have different root labels: a name with
/// `+`, so debinarization dissolves it and each tree keeps its own root.
pub const SHARED_ROOT: &str = "ROOT+";

impl Counts {
    pub fn new() -> Counts {
        Counts::default()
    }

    /// How many trees were counted.
    pub fn trees(&self) -> u64 {
        self.trees
    }

    /// How many distinct rules were seen.
    pub fn rule_count(&self) -> usize {
        self.rules.values().map(|b| b.len()).sum::<usize>() + self.short.len()
    }

    /// Counts the rules of one tree whose labels are already trellis names
    /// (a tree from [`crate::binarize`]). Allocates only for rules and
    /// names not seen before.
    pub fn add(&mut self, tree: &Tree) {
        self.trees += 1;
        if let Some(root) = tree.label() {
            let id = self.symbols.id(root);
            *self.roots.entry(id).or_default() += 1;
        }
        let mut rhs: Vec<u32> = Vec::with_capacity(4);
        let mut stack = vec![tree];
        while let Some(node) = stack.pop() {
            let Tree::Node { label, children } = node else {
                continue;
            };
            rhs.clear();
            for c in children {
                rhs.push(match c {
                    Tree::Node { label, .. } => self.symbols.id(label) * 2,
                    Tree::Leaf(word) => self.words.id(word) * 2 + 1,
                });
            }
            let lhs = self.symbols.id(label);
            self.count_rule(lhs, &rhs);
            stack.extend(children.iter());
        }
    }

    /// Counts the rules of `tree` (labels as in the treebank) binarized
    /// as `how` says: the same counts as `self.add(&binarize(tree, how))`,
    /// without building the binarized tree or any name more than once.
    pub fn add_binarized(&mut self, tree: &Tree, how: Markov) {
        let keep = how.vertical.saturating_sub(1);
        if keep > MAX_KEPT {
            self.add(&crate::binarize(tree, how));
            return;
        }
        let Tree::Node { label, children } = tree else {
            self.trees += 1;
            return;
        };
        self.trees += 1;
        let root = self.node_symbol(label, is_phrasal(children), &[]);
        *self.roots.entry(root).or_default() += 1;
        // (node, its symbol, its own and its ancestors' label ids, nearest
        // first, as many as its children keep).
        let mut stack: Vec<(&Tree, u32, [u32; MAX_KEPT])> =
            vec![(tree, root, [u32::MAX; MAX_KEPT])];
        let mut rhs: Vec<u32> = Vec::with_capacity(8);
        let mut siblings: Vec<u32> = Vec::with_capacity(8);
        let mut key: Vec<u32> = Vec::with_capacity(8);
        while let Some((node, symbol, above)) = stack.pop() {
            let Tree::Node { label, children } = node else {
                continue;
            };
            // What this node's children remember: its label, then its own
            // nearest ancestors.
            let mut below = [u32::MAX; MAX_KEPT];
            if keep > 0 {
                below[0] = self.label_id(label);
                below[1..keep].copy_from_slice(&above[..keep - 1]);
            }
            rhs.clear();
            siblings.clear();
            for child in children {
                match child {
                    Tree::Node {
                        label: child_label,
                        children: grandchildren,
                    } => {
                        let s = self.node_symbol(
                            child_label,
                            is_phrasal(grandchildren),
                            &below[..keep],
                        );
                        rhs.push(s * 2);
                        siblings.push(self.label_id(child_label) * 2);
                        stack.push((child, s, below));
                    }
                    Tree::Leaf(word) => {
                        let w = self.words.id(word);
                        rhs.push(w * 2 + 1);
                        siblings.push(w * 2 + 1);
                    }
                }
            }
            let n = rhs.len();
            if n <= 2 {
                self.count_rule(symbol, &rhs);
                continue;
            }
            // Factored to the right: symbol → c0 I1, I(k) → ck I(k+1), …,
            // I(n−2) → c(n−2) c(n−1).
            let mut lhs = symbol;
            for k in 1..n - 1 {
                let mid = self.intermediate(symbol, &siblings, k, how, &mut key);
                self.count_rule(lhs, &[rhs[k - 1], mid * 2]);
                lhs = mid;
            }
            self.count_rule(lhs, &rhs[n - 2..]);
        }
    }

    fn count_rule(&mut self, lhs: u32, rhs: &[u32]) {
        if rhs.len() <= 2 {
            *self.short.entry((lhs, pack(rhs))).or_default() += 1;
            return;
        }
        let block = self.rules.entry(lhs).or_default();
        match block.get_mut(rhs) {
            Some(n) => *n += 1,
            None => {
                block.insert(rhs.into(), 1);
            }
        }
    }

    /// The dense id of a raw treebank label (its escaped name kept).
    fn label_id(&mut self, label: &str) -> u32 {
        if let Some(&id) = self.names.labels.get(label) {
            return id;
        }
        let id = self.names.escaped.len() as u32;
        self.names.escaped.push(escape(label));
        self.names.labels.insert(label.to_string(), id);
        id
    }

    /// The symbol of a node labelled `label` under ancestors `above`
    /// (label ids, nearest first, as many as the vertical order keeps):
    /// annotated when it is phrasal, as `binarize` names it.
    fn node_symbol(&mut self, label: &str, phrasal: bool, above: &[u32]) -> u32 {
        let l = self.label_id(label);
        let mut key = [u32::MAX; MAX_KEPT + 1];
        key[0] = l;
        if phrasal {
            for (slot, &a) in key[1..].iter_mut().zip(above) {
                *slot = a;
            }
        }
        if let Some(&id) = self.names.nodes.get(&key) {
            return id;
        }
        let escaped = &self.names.escaped;
        let ancestors: Vec<&str> = key[1..]
            .iter()
            .take_while(|&&a| a != u32::MAX)
            .map(|&a| escaped[a as usize].as_str())
            .collect();
        let name = annotated(&escaped[l as usize], &ancestors);
        let id = self.symbols.id(&name);
        self.names.nodes.insert(key, id);
        id
    }

    /// The intermediate symbol covering children `k..` of a node named by
    /// symbol `parent` whose children are `siblings` (label id × 2, or
    /// word id × 2 + 1), as `binarize` names it.
    fn intermediate(
        &mut self,
        parent: u32,
        siblings: &[u32],
        k: usize,
        how: Markov,
        key: &mut Vec<u32>,
    ) -> u32 {
        let window = match how.horizontal {
            None => &siblings[k..],
            Some(h) => &siblings[k.saturating_sub(h)..k],
        };
        key.clear();
        key.push(u32::from(how.horizontal.is_some()));
        key.push(parent);
        key.extend_from_slice(window);
        if let Some(&id) = self.names.intermediates.get(key.as_slice()) {
            return id;
        }
        let mut name = self.symbols.name(parent).to_string();
        if how.horizontal.is_some() {
            name.push('\'');
            if window.is_empty() {
                name.push('+');
            }
        }
        for &code in window {
            name.push('+');
            if code % 2 == 0 {
                name.push_str(&self.names.escaped[(code / 2) as usize]);
            } else {
                name.push_str("_word_");
                name.push_str(&escape(self.words.name(code / 2)));
            }
        }
        let id = self.symbols.id(&name);
        self.names.intermediates.insert(key.as_slice().into(), id);
        id
    }

    /// The count of a rule (`lhs` and `rhs` as trellis names and words).
    pub fn count(&self, lhs: &str, rhs: &[Item]) -> u64 {
        let Some(lhs) = self.symbols.get(lhs) else {
            return 0;
        };
        let key: Option<Vec<u32>> = rhs
            .iter()
            .map(|item| match item {
                Item::Symbol(s) => self.symbols.get(s).map(|id| id * 2),
                Item::Word(w) => self.words.get(w).map(|id| id * 2 + 1),
            })
            .collect();
        key.and_then(|key| {
            if key.len() <= 2 {
                self.short.get(&(lhs, pack(&key))).copied()
            } else {
                self.rules.get(&lhs)?.get(key.as_slice()).copied()
            }
        })
        .unwrap_or(0)
    }

    /// An item of an interned right-hand side.
    fn item(&self, code: u32) -> Item {
        if code.is_multiple_of(2) {
            Item::Symbol(self.symbols.name(code / 2).to_string())
        } else {
            Item::Word(self.words.name(code / 2).to_string())
        }
    }

    /// The start symbol: the one root label, or [`SHARED_ROOT`] over all.
    pub fn start(&self) -> Option<String> {
        match self.roots.len() {
            0 => None,
            1 => self
                .roots
                .keys()
                .next()
                .map(|&id| self.symbols.name(id).to_string()),
            _ => Some(SHARED_ROOT.to_string()),
        }
    }

    /// The learned grammar as trellis source in canonical layout (the
    /// formatter's, as `trellis fmt` writes it): the header comment, the
    /// start symbol, then one `relative` block per symbol — the start
    /// first, the others by name, intermediate symbols after the symbols
    /// they serve — with alternatives by falling count.
    pub fn to_source(&self, options: &LearnOptions) -> String {
        let raw = self.unformatted(options);
        grammar_lang::format(&raw, &grammar_lang::FormatOptions::default()).unwrap_or(raw)
    }

    fn unformatted(&self, options: &LearnOptions) -> String {
        let mut out = String::new();
        for line in &options.header {
            if line.is_empty() {
                out.push_str("#\n");
            } else {
                let _ = writeln!(out, "# {line}");
            }
        }
        if !options.header.is_empty() {
            out.push('\n');
        }
        let Some(start) = self.start() else {
            return out;
        };
        let _ = writeln!(out, "start {start}");
        if start == SHARED_ROOT {
            let mut roots: Vec<(&str, u64)> = self
                .roots
                .iter()
                .map(|(&id, &n)| (self.symbols.name(id), n))
                .collect();
            roots.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(b.0)));
            let _ = writeln!(
                out,
                "\n## Trees of every root label.\n{SHARED_ROOT} relative {{"
            );
            for (root, n) in roots {
                let _ = writeln!(out, "  {n} {root}");
            }
            out.push_str("}\n");
        }
        let grouped = self.grouped();
        let mut names: Vec<(&str, u32)> = grouped
            .keys()
            .map(|&id| (self.symbols.name(id), id))
            .collect();
        names.sort_by(|a, b| {
            let key = |n: &str| {
                (
                    n != start,
                    is_intermediate(n),
                    n.split('+').next().unwrap_or(n).to_string(),
                )
            };
            key(a.0).cmp(&key(b.0)).then(a.0.cmp(b.0))
        });
        let rare = self.rare_words(options.rare);
        for (name, id) in names {
            let mut rules = self.block(&grouped[&id], &rare);
            rules.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
            let _ = writeln!(out, "\n{name} relative {{");
            for (rhs, n) in &rules {
                let _ = write!(out, "  {n}");
                for item in rhs {
                    match item {
                        Item::Symbol(s) => {
                            out.push(' ');
                            out.push_str(s);
                        }
                        Item::Word(w) => {
                            out.push(' ');
                            out.push_str(&quote(w));
                        }
                    }
                }
                out.push('\n');
            }
            out.push_str("}\n");
        }
        out
    }
}

impl Counts {
    /// Which words (by id) are seen at most `rare` times in all, each with
    /// the unseen-word terminal of its shape class; empty when `rare` is 0.
    fn rare_words(&self, rare: u64) -> IdMap<u32, &'static str> {
        let mut out = IdMap::default();
        if rare == 0 {
            return out;
        }
        let mut seen = vec![0u64; self.words.names.len()];
        for (_, rhs, n) in self.all_rules() {
            for &code in rhs.iter() {
                if code % 2 == 1 {
                    seen[(code / 2) as usize] += n;
                }
            }
        }
        for (id, &n) in seen.iter().enumerate() {
            if n <= rare {
                let class = grammar_lang::unseen::class_of(self.words.name(id as u32));
                out.insert(id as u32, class);
            }
        }
        out
    }

    /// Every counted rule as (left-hand side, items, count).
    fn all_rules(&self) -> impl Iterator<Item = (u32, Vec<u32>, u64)> + '_ {
        let short = self
            .short
            .iter()
            .map(|(&(lhs, packed), &n)| (lhs, unpack(packed), n));
        let long = self
            .rules
            .iter()
            .flat_map(|(&lhs, block)| block.iter().map(move |(rhs, &n)| (lhs, rhs.to_vec(), n)));
        short.chain(long)
    }

    /// The counted rules grouped by left-hand side.
    fn grouped(&self) -> IdMap<u32, Vec<(Vec<u32>, u64)>> {
        let mut out: IdMap<u32, Vec<(Vec<u32>, u64)>> = IdMap::default();
        for (lhs, rhs, n) in self.all_rules() {
            out.entry(lhs).or_default().push((rhs, n));
        }
        out
    }

    /// The alternatives of a block (its counted rules given) with their counts: each counted
    /// rule, and for each rule with a rare word the same rule with every
    /// rare word replaced by its class terminal, counted as often (rules
    /// that come out the same are summed).
    fn block(
        &self,
        counted: &[(Vec<u32>, u64)],
        rare: &IdMap<u32, &'static str>,
    ) -> Vec<(Vec<Item>, u64)> {
        let mut rules: Vec<(Vec<Item>, u64)> = Vec::new();
        let mut classes: std::collections::BTreeMap<Vec<Item>, u64> = Default::default();
        for &(ref rhs, n) in counted {
            rules.push((rhs.iter().map(|&code| self.item(code)).collect(), n));
            let has_rare = rhs
                .iter()
                .any(|&code| code % 2 == 1 && rare.contains_key(&(code / 2)));
            if has_rare {
                let class_rhs = rhs
                    .iter()
                    .map(|&code| match rare.get(&(code / 2)) {
                        Some(class) if code % 2 == 1 => Item::Word((*class).to_string()),
                        _ => self.item(code),
                    })
                    .collect();
                *classes.entry(class_rhs).or_default() += n;
            }
        }
        for (rhs, n) in classes {
            match rules.iter_mut().find(|(r, _)| *r == rhs) {
                Some((_, m)) => *m += n,
                None => rules.push((rhs, n)),
            }
        }
        rules
    }
}

/// At most two item codes packed into one number: 0 for none, the first
/// plus one in the high half (0 when there is one item), the last plus one
/// in the low half.
fn pack(rhs: &[u32]) -> u64 {
    match *rhs {
        [] => 0,
        [a] => u64::from(a) + 1,
        [a, b] => ((u64::from(a) + 1) << 32) | (u64::from(b) + 1),
        _ => unreachable!("only rules of at most two items are packed"),
    }
}

/// The item codes of a [`pack`]ed number.
fn unpack(packed: u64) -> Vec<u32> {
    let (high, low) = ((packed >> 32) as u32, packed as u32);
    match (high, low) {
        (_, 0) => Vec::new(),
        (0, b) => vec![b - 1],
        (a, b) => vec![a - 1, b - 1],
    }
}

/// Whether a node with these children is phrasal (has a node among them).
fn is_phrasal(children: &[Tree]) -> bool {
    children.iter().any(|c| matches!(c, Tree::Node { .. }))
}

/// A plain treebank label as a trellis name (for callers that count trees
/// they did not binarize).
pub fn name_of(label: &str) -> String {
    escape(label)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::read::TreeReader;

    fn trees(text: &str) -> Vec<Tree> {
        TreeReader::new(text.as_bytes())
            .map(Result::unwrap)
            .collect()
    }

    #[test]
    fn counts_become_relative_weights_by_falling_count() {
        let mut counts = Counts::new();
        for t in trees("(S (A x) (B y)) (S (A x) (B y)) (S (A x)) (S (A x) (B y))") {
            counts.add(&t);
        }
        assert_eq!(counts.trees(), 4);
        let text = counts.to_source(&LearnOptions {
            header: vec!["learned from 4 trees".into()],
            rare: 0,
        });
        assert_eq!(
            text,
            "# learned from 4 trees\n\nstart S\n\nS relative {\n  3  A B\n  1  A\n}\n\n\
             A relative {\n  4  \"x\"\n}\n\nB relative {\n  3  \"y\"\n}\n"
        );
    }

    #[test]
    fn trees_with_different_roots_share_a_start_that_dissolves() {
        let mut counts = Counts::new();
        for t in trees("(S (A x)) (FRAG (A x)) (S (A y))") {
            counts.add(&t);
        }
        assert_eq!(counts.start().as_deref(), Some(SHARED_ROOT));
        let text = counts.to_source(&LearnOptions::default());
        assert!(
            text.contains("ROOT+ relative {\n  2  S\n  1  FRAG\n}"),
            "{text}"
        );
    }
}
