//! The semantic model: the grammar as a set of weighted rules.
//!
//! Built from the syntax trees of the root file and every file it `use`s by
//! [`crate::lower`]. Names are resolved to ids, weights are exact rationals,
//! and every rule knows its resolved probability. Spans point back into the
//! files so every analysis can report where a fact came from.

use crate::diagnostic::Location;
use crate::tree::Tree;
use num_traits::{ToPrimitive, Zero};
use smol_str::SmolStr;
use std::collections::HashMap;
use std::fmt;

/// An exact probability or weight.
pub use crate::ratio::Ratio;

/// A non-terminal.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct NtId(pub u32);

/// A terminal (a word).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct TermId(pub u32);

/// A rule, numbered in source order across all files.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct RuleId(pub u32);

impl NtId {
    pub fn index(self) -> usize {
        self.0 as usize
    }
}
impl TermId {
    pub fn index(self) -> usize {
        self.0 as usize
    }
}
impl RuleId {
    pub fn index(self) -> usize {
        self.0 as usize
    }
}

/// One right-hand-side item.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Sym {
    N(NtId),
    T(TermId),
}

/// How a weight was written, so rewrites can keep the user's style.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Notation {
    Decimal,
    Fraction,
    Percent,
}

/// A weight as the user wrote it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Weight {
    /// The spelling (stored inline: weights are short).
    pub text: SmolStr,
    pub value: Ratio,
    pub notation: Notation,
    pub location: Location,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Rule {
    pub lhs: NtId,
    pub rhs: Vec<Sym>,
    /// The weight as written; `None` for an alternative that shares the remainder.
    pub weight: Option<Weight>,
    /// The resolved exact probability of the rule given its left-hand side.
    pub probability: Ratio,
    /// `probability` as a float, for the numeric engine.
    pub p: f64,
    /// The whole alternative.
    pub location: Location,
    pub doc: Option<String>,
}

impl Rule {
    pub fn is_unary(&self) -> bool {
        self.rhs.len() == 1 && matches!(self.rhs[0], Sym::N(_))
    }
}

/// The block that defines a non-terminal.
#[derive(Clone, Debug, PartialEq)]
pub struct BlockInfo {
    /// The name at the head of the block.
    pub name: Location,
    /// The whole block.
    pub location: Location,
    pub relative: bool,
    pub doc: Option<String>,
    /// Sum of the resolved probabilities of the block's rules (1 for a sound block).
    pub mass: Ratio,
    /// Set when the block's exact sum was too large to compute (more than
    /// [`EXACT_SUM_BITS`]): its probabilities and `mass` are then the
    /// exact values of floating-point approximations.
    pub approximate: Option<Approximation>,
}

/// The largest exact value, in bits of numerator and denominator together,
/// that a block's sum is computed with: about 19,700 decimal digits, far
/// beyond any hand-written or learned grammar (a thousand weights of six
/// decimal places sum to a few dozen bits). Exact arithmetic on larger
/// values costs time quadratic in their length (a block of 3,000 weights
/// `1/p` over distinct primes has a sum of about 86,000 bits); past the
/// limit the block is resolved in floating point and says so
/// (`approximate-sum`).
pub const EXACT_SUM_BITS: u64 = 1 << 16;

/// How a block resolved in floating point was computed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Approximation {
    /// The sum of the weights the block counts (negative and broken ones
    /// as 0, unweighted ones of a `relative` block as 1), in floating point.
    pub weighted: f64,
    /// A bound on how far `weighted` is from the exact sum.
    pub tolerance: f64,
    /// Whether the block has unweighted alternatives (in a plain block,
    /// they share `1 − weighted`).
    pub unweighted: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub struct NonTerminal {
    pub name: String,
    /// The defining block, or `None` if the symbol is only used.
    pub block: Option<BlockInfo>,
    pub rules: Vec<RuleId>,
    /// Every place the name is referenced (right-hand sides and `start`).
    pub references: Vec<Location>,
}

impl NonTerminal {
    pub fn is_defined(&self) -> bool {
        self.block.is_some()
    }
}

/// A `test` block of the grammar (run by the test runner).
#[derive(Clone, Debug, PartialEq)]
pub struct GrammarTest {
    pub name: String,
    pub location: Location,
    pub doc: Option<String>,
    pub cases: Vec<TestCase>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Expectation {
    Accept,
    Reject,
}

impl Expectation {
    /// The keyword that writes it: `accept` or `reject`.
    pub fn keyword(self) -> &'static str {
        match self {
            Expectation::Accept => "accept",
            Expectation::Reject => "reject",
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct TestCase {
    pub expect: Expectation,
    pub sentence: String,
    /// The expected most probable tree (`accept S as TREE`).
    pub tree: Option<Tree>,
    pub location: Location,
}

impl TestCase {
    /// The sentence split on whitespace into words ([`words`]).
    pub fn words(&self) -> Vec<&str> {
        words(&self.sentence).collect()
    }
}

/// The words of a text: its pieces between runs of whitespace (Unicode
/// `White_Space`). The one rule for splitting text into words, used for
/// sentences and for terminals alike, so that a terminal written with a
/// space inside (`"fresh water"`) is the sequence of words a sentence
/// containing it is split into.
pub fn words(text: &str) -> std::str::SplitWhitespace<'_> {
    text.split_whitespace()
}

/// `text` with its words joined by single spaces: how a terminal of
/// several words is written without `terminal-spacing`.
pub fn normalized_words(text: &str) -> String {
    words(text).collect::<Vec<_>>().join(" ")
}

/// The case as written in a test block: `accept "…"`, `reject "…"` or
/// `accept "…" as (…)`.
impl fmt::Display for TestCase {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sentence = crate::syntax::lexer::quote(&self.sentence);
        write!(f, "{} {sentence}", self.expect.keyword())?;
        if let Some(tree) = &self.tree {
            write!(f, " as {}", tree.to_brackets())?;
        }
        Ok(())
    }
}

/// A whole grammar: every block of the root file and of the files it uses.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Grammar {
    pub name: Option<String>,
    pub start: Option<NtId>,
    /// Where `start` is declared.
    pub start_location: Option<Location>,
    pub nonterminals: Vec<NonTerminal>,
    pub terminals: Vec<String>,
    pub rules: Vec<Rule>,
    pub tests: Vec<GrammarTest>,
    /// Names to ids; short names are stored inside the table itself.
    nt_index: HashMap<SmolStr, NtId, FastHash>,
    term_index: HashMap<SmolStr, TermId, FastHash>,
    /// Blocks whose probabilities could not be resolved faithfully (a weight
    /// that could not be read, an empty alternative); see [`Grammar::is_damaged`].
    damaged: std::collections::HashSet<NtId>,
    /// Symbols named inside text the parser skipped; see
    /// [`Grammar::mentioned_in_damage`].
    mentioned_in_damage: Vec<NtId>,
}

impl Grammar {
    pub fn new() -> Self {
        Grammar::default()
    }

    /// The id of non-terminal `name`, creating an (undefined) entry if new.
    pub fn intern_nt(&mut self, name: &str) -> NtId {
        if let Some(&id) = self.nt_index.get(name) {
            return id;
        }
        let id = NtId(self.nonterminals.len() as u32);
        self.nonterminals.push(NonTerminal {
            name: name.to_string(),
            block: None,
            rules: Vec::new(),
            references: Vec::new(),
        });
        self.nt_index.insert(SmolStr::new(name), id);
        id
    }

    pub fn intern_term(&mut self, word: &str) -> TermId {
        if let Some(&id) = self.term_index.get(word) {
            return id;
        }
        let id = TermId(self.terminals.len() as u32);
        self.terminals.push(word.to_string());
        self.term_index.insert(SmolStr::new(word), id);
        id
    }

    /// Marks `nt`'s block as damaged: one of its alternatives was dropped or
    /// has an unreadable weight, and an error saying so was already reported.
    pub fn mark_damaged(&mut self, nt: NtId) {
        self.damaged.insert(nt);
    }

    /// Records that `nt` is named inside text the parser skipped (a
    /// syntax error was reported there).
    pub fn mark_mentioned_in_damage(&mut self, nt: NtId) {
        self.mentioned_in_damage.push(nt);
    }

    /// The symbols named inside skipped text: the text may well use them,
    /// so they are not reported as unreachable.
    pub fn mentioned_in_damage(&self) -> &[NtId] {
        &self.mentioned_in_damage
    }

    /// Whether `nt`'s block is damaged (see [`Grammar::mark_damaged`]). Its
    /// resolved probabilities are not meaningful, so its sums are not checked.
    pub fn is_damaged(&self, nt: NtId) -> bool {
        self.damaged.contains(&nt)
    }

    pub fn nt(&self, name: &str) -> Option<NtId> {
        self.nt_index.get(name).copied()
    }

    pub fn term(&self, word: &str) -> Option<TermId> {
        self.term_index.get(word).copied()
    }

    /// The terminal a word of a sentence is read as: the word itself when
    /// it is a terminal, otherwise the first unseen-word terminal of its
    /// shape class chain that the grammar has ([`crate::unseen`]).
    pub fn word_term(&self, word: &str) -> Option<TermId> {
        self.term(word).or_else(|| {
            crate::unseen::resolve(word, |t| self.term_index.contains_key(t))
                .and_then(|t| self.term(t))
        })
    }

    pub fn nt_name(&self, id: NtId) -> &str {
        &self.nonterminals[id.index()].name
    }

    pub fn term_text(&self, id: TermId) -> &str {
        &self.terminals[id.index()]
    }

    pub fn nonterminal(&self, id: NtId) -> &NonTerminal {
        &self.nonterminals[id.index()]
    }

    pub fn rule(&self, id: RuleId) -> &Rule {
        &self.rules[id.index()]
    }

    /// Adds a rule and registers it with its left-hand side.
    pub fn push_rule(&mut self, rule: Rule) -> RuleId {
        let id = RuleId(self.rules.len() as u32);
        self.nonterminals[rule.lhs.index()].rules.push(id);
        self.rules.push(rule);
        id
    }

    pub fn nt_ids(&self) -> impl Iterator<Item = NtId> {
        (0..self.nonterminals.len() as u32).map(NtId)
    }

    pub fn rule_ids(&self) -> impl Iterator<Item = RuleId> {
        (0..self.rules.len() as u32).map(RuleId)
    }

    /// The rules of `nt`.
    pub fn rules_of(&self, nt: NtId) -> impl Iterator<Item = (RuleId, &Rule)> {
        self.nonterminals[nt.index()]
            .rules
            .iter()
            .map(move |&id| (id, &self.rules[id.index()]))
    }

    /// A right-hand-side item written for people: `Name` or `"word"`.
    pub fn sym_text(&self, sym: Sym) -> String {
        match sym {
            Sym::N(n) => self.nt_name(n).to_string(),
            Sym::T(t) => crate::syntax::lexer::quote(self.term_text(t)),
        }
    }

    /// A rule written for people: `A → B "c"`.
    pub fn rule_text(&self, id: RuleId) -> String {
        let rule = self.rule(id);
        let mut out = format!("{} →", self.nt_name(rule.lhs));
        for &sym in &rule.rhs {
            out.push(' ');
            out.push_str(&self.sym_text(sym));
        }
        out
    }
}

/// A fast, non-cryptographic hash for maps keyed by names and ids: the
/// multiply and rotate scheme of the Firefox/rustc "Fx" hasher with a final
/// mix (common practice). Keys come from the grammar, not from an
/// adversary, and a collision only costs time.
pub type FastHash = std::hash::BuildHasherDefault<FxHasher>;

#[derive(Default, Clone, Copy)]
pub struct FxHasher(u64);

impl FxHasher {
    #[inline]
    fn add(&mut self, word: u64) {
        self.0 = (self.0.rotate_left(5) ^ word).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
}

impl std::hash::Hasher for FxHasher {
    fn write(&mut self, bytes: &[u8]) {
        // Little-endian words of 8 bytes, the last one padded with zeros;
        // the tail is read in at most three loads instead of a byte copy.
        let mut chunks = bytes.chunks_exact(8);
        for chunk in &mut chunks {
            self.add(u64::from_le_bytes(chunk.try_into().unwrap_or_default()));
        }
        let rest = chunks.remainder();
        if !rest.is_empty() {
            let mut word = 0u64;
            let mut at = 0;
            if rest.len() >= 4 {
                word = u64::from(u32::from_le_bytes(rest[..4].try_into().unwrap_or_default()));
                at = 4;
            }
            if rest.len() - at >= 2 {
                let pair = u16::from_le_bytes(rest[at..at + 2].try_into().unwrap_or_default());
                word |= u64::from(pair) << (8 * at);
                at += 2;
            }
            if let Some(&last) = rest.get(at) {
                word |= u64::from(last) << (8 * at);
            }
            self.add(word);
        }
    }
    fn write_u8(&mut self, i: u8) {
        self.add(u64::from(i));
    }
    fn write_u32(&mut self, i: u32) {
        self.add(u64::from(i));
    }
    fn write_u64(&mut self, i: u64) {
        self.add(i);
    }
    fn write_usize(&mut self, i: usize) {
        self.add(i as u64);
    }
    fn finish(&self) -> u64 {
        // The multiply leaves the low bits, which pick the bucket, depending
        // only on the low bits of the input (e.g. the first letters of a
        // name); fold the high bits down (the 64-bit finaliser of
        // MurmurHash3, recalled from memory).
        let mut h = self.0;
        h ^= h >> 33;
        h = h.wrapping_mul(0xff51_afd7_ed55_8ccd);
        h ^= h >> 33;
        h
    }
}

/// Formats an exact ratio as a fraction `p/q` (or an integer).
pub fn fraction(r: &Ratio) -> String {
    r.to_string()
}

/// A ratio as a float (`NaN`-free: huge values saturate).
pub fn to_f64(r: &Ratio) -> f64 {
    if r.is_zero() {
        return 0.0;
    }
    r.to_f64().unwrap_or(f64::NAN)
}

/// A ratio as a short decimal for messages: exact when it terminates within
/// 12 digits, otherwise rounded with `≈`.
pub struct Decimal<'a>(pub &'a Ratio);

impl fmt::Display for Decimal<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match crate::weight::exact_decimal(self.0, 12) {
            Some(s) => f.write_str(&s),
            None => write!(f, "≈{}", trim_float(to_f64(self.0))),
        }
    }
}

fn trim_float(x: f64) -> String {
    let s = format!("{x:.10}");
    let s = s.trim_end_matches('0');
    s.trim_end_matches('.').to_string()
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::hash::Hasher;

    #[test]
    fn the_fast_hash_reads_bytes_as_zero_padded_little_endian_words() {
        // The definition: every 8 bytes (the last group padded with zeros)
        // are one little-endian word added to the hash.
        let text = b"NP-SBJ.kiosk_ticket+return";
        for len in 0..=text.len() {
            let bytes = &text[..len];
            let mut by_words = FxHasher::default();
            for chunk in bytes.chunks(8) {
                let mut word = [0u8; 8];
                word[..chunk.len()].copy_from_slice(chunk);
                by_words.add(u64::from_le_bytes(word));
            }
            let mut hasher = FxHasher::default();
            hasher.write(bytes);
            assert_eq!(hasher.finish(), by_words.finish(), "{len} bytes");
        }
    }
}
