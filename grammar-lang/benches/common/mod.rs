//! The benchmarks' generated grammars (shared by `check.rs` and
//! `format.rs`): blocks of 3–12 alternatives mixing terminals and
//! non-terminals, weights in all three notations that sum to exactly 1
//! (some blocks `relative`, some alternatives unweighted), doc comments and
//! comments, every block reachable and productive, no unary cycles.

use std::collections::HashSet;
use std::fmt::Write;

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants),
/// so every run benchmarks the same text.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }

    /// Uniform in `lo..=hi`.
    fn range(&mut self, lo: usize, hi: usize) -> usize {
        lo + (self.next() as usize) % (hi - lo + 1)
    }
}

/// Splits 100 into `k` positive parts (k ≤ 100).
fn parts_of_100(rng: &mut Lcg, k: usize) -> Vec<usize> {
    let mut parts = vec![1; k];
    for _ in 0..(100 - k) {
        let i = rng.range(0, k - 1);
        parts[i] += 1;
    }
    parts
}

/// A grammar text with about `target_rules` rules.
pub fn generate(target_rules: usize) -> String {
    let mut rng = Lcg(0x7e11_1500);
    // Block sizes first, so the number of blocks is known for references.
    let mut sizes = Vec::new();
    let mut total = 0;
    while total < target_rules {
        let k = rng.range(3, 12).min(target_rules - total).max(3);
        sizes.push(k);
        total += k;
    }
    let blocks = sizes.len();
    let vocabulary = 3000;
    let mut out = String::with_capacity(target_rules * 40);
    out.push_str("# Generated benchmark grammar.\ngrammar generated\nstart S0\n");
    for (b, &k) in sizes.iter().enumerate() {
        out.push('\n');
        if b % 4 == 0 {
            let _ = writeln!(out, "## Block {b}: {k} alternatives.");
        }
        let relative = b % 10 == 7;
        let _ = writeln!(out, "S{b}{} {{", if relative { " relative" } else { "" });
        // Some blocks leave mass to unweighted alternatives.
        let unweighted = if !relative && b % 3 == 0 {
            rng.range(1, 2)
        } else {
            0
        };
        let weighted = k - unweighted;
        // The weighted alternatives' shares of 100; the others get none.
        let parts = if unweighted > 0 {
            // weighted parts + one part left for the unweighted ones
            let mut p = parts_of_100(&mut rng, weighted + 1);
            p.pop();
            p
        } else {
            parts_of_100(&mut rng, weighted)
        };
        // Children of block b in a binary-heap layout make every block
        // reachable; references only go to later blocks, so there is no
        // cycle at all.
        let children: Vec<usize> = [2 * b + 1, 2 * b + 2]
            .into_iter()
            .filter(|&c| c < blocks)
            .collect();
        let mut seen = HashSet::new();
        for a in 0..k {
            out.push_str("  ");
            if relative {
                let _ = write!(out, "{} ", rng.range(1, 40));
            } else if let Some(p) = parts.get(a) {
                match rng.range(0, 2) {
                    0 => write!(out, "0.{p:02} "),
                    1 => write!(out, "{p}/100 "),
                    _ => write!(out, "{p}% "),
                }
                .unwrap_or(());
            }
            // Draw right-hand sides until this one is new in the block.
            let rhs = loop {
                let rhs = right_hand_side(&mut rng, a, b, blocks, &children, vocabulary);
                if seen.insert(rhs.clone()) {
                    break rhs;
                }
            };
            out.push_str(&rhs);
            if a == 0 && b % 5 == 0 {
                out.push_str("   # the plain-words alternative");
            }
            out.push('\n');
        }
        out.push_str("}\n");
    }
    out
}

/// The items of alternative `a` of block `b`.
fn right_hand_side(
    rng: &mut Lcg,
    a: usize,
    b: usize,
    blocks: usize,
    children: &[usize],
    vocabulary: usize,
) -> String {
    let mut out = String::new();
    let len = rng.range(1, 5);
    for i in 0..len {
        if i > 0 {
            out.push(' ');
        }
        // The first alternative is all words (so every block is
        // productive); the required children come next.
        let child = if a == 0 {
            None
        } else if a <= children.len() && i == 0 {
            Some(children[a - 1])
        } else if b + 1 < blocks && rng.range(0, 2) == 0 {
            Some(rng.range(b + 1, (b + 200).min(blocks - 1)))
        } else {
            None
        };
        match child {
            Some(c) => {
                let _ = write!(out, "S{c}");
            }
            None => {
                let _ = write!(out, "\"w{}\"", rng.range(0, vocabulary));
            }
        }
    }
    out
}
