//! The consistency analysis on random grammars against nalgebra's dense
//! eigenvalue and inverse routines.

mod consistency_support;

use grammar_lang::model::{Grammar, Sym};
use nalgebra::DMatrix;
use trellis_engine::consistency::{analyze, leak_finding, leaky_diagnostic};
use trellis_engine::rng::{RandomSource, Xoshiro256StarStar};

/// A random grammar over `n` non-terminals N0…: each gets 1–4 rules of
/// length 1–3 whose items are non-terminals with probability `recursion`,
/// else the word "w"; weights are uniform and normalised per block.
fn random_grammar(rng: &mut Xoshiro256StarStar, n: usize, recursion: f64) -> Grammar {
    let names: Vec<String> = (0..n).map(|i| format!("N{i}")).collect();
    let mut spec: Vec<(String, String, f64)> = Vec::new();
    for name in &names {
        let k = 1 + rng.below(4) as usize;
        let weights: Vec<f64> = (0..k).map(|_| 0.05 + rng.next_f64()).collect();
        let total: f64 = weights.iter().sum();
        for w in weights {
            let len = 1 + rng.below(3) as usize;
            let rhs: Vec<String> = (0..len)
                .map(|_| {
                    if rng.next_f64() < recursion {
                        names[rng.below(n as u64) as usize].clone()
                    } else {
                        "\"w\"".to_string()
                    }
                })
                .collect();
            spec.push((name.clone(), rhs.join(" "), w / total));
        }
    }
    let refs: Vec<(&str, &str, f64)> = spec
        .iter()
        .map(|(a, b, p)| (a.as_str(), b.as_str(), *p))
        .collect();
    consistency_support::grammar("N0", &refs)
}

/// The expected-count matrix on the symbols reachable from the start,
/// built directly from the rules, with the reachable symbols' ids.
fn moment_matrix(g: &Grammar) -> (DMatrix<f64>, Vec<usize>) {
    let n = g.nonterminals.len();
    let mut reach = vec![false; n];
    let mut stack = vec![g.start.unwrap().index()];
    reach[stack[0]] = true;
    while let Some(a) = stack.pop() {
        for r in &g.nonterminals[a].rules {
            for s in &g.rule(*r).rhs {
                if let Sym::N(b) = s {
                    if !reach[b.index()] {
                        reach[b.index()] = true;
                        stack.push(b.index());
                    }
                }
            }
        }
    }
    let ids: Vec<usize> = (0..n).filter(|&a| reach[a]).collect();
    let pos = |a: usize| ids.iter().position(|&b| b == a).unwrap();
    let mut m = DMatrix::<f64>::zeros(ids.len(), ids.len());
    for rule in &g.rules {
        if !reach[rule.lhs.index()] {
            continue;
        }
        for s in &rule.rhs {
            if let Sym::N(b) = s {
                m[(pos(rule.lhs.index()), pos(b.index()))] += rule.p;
            }
        }
    }
    (m, ids)
}

#[test]
fn spectral_radius_matches_nalgebra_eigenvalues_on_random_grammars() {
    // Reference: nalgebra's real Schur decomposition (complex_eigenvalues),
    // the largest modulus among all eigenvalues.
    let mut rng = Xoshiro256StarStar::seed_from_u64(2024);
    let mut regimes = [0usize; 2];
    for case in 0..200 {
        let n = 2 + rng.below(9) as usize;
        let recursion = 0.2 + 0.5 * rng.next_f64();
        let g = random_grammar(&mut rng, n, recursion);
        let report = analyze(&g).unwrap();
        let (m, _) = moment_matrix(&g);
        let reference = m
            .complex_eigenvalues()
            .iter()
            .map(|z| z.norm())
            .fold(0.0, f64::max);
        assert!(
            (report.spectral_radius - reference).abs() <= 1e-9 * reference.max(1.0),
            "case {case}: ours {} vs nalgebra {reference}",
            report.spectral_radius
        );
        regimes[usize::from(reference > 1.0)] += 1;
    }
    // The sample covers both sides of the Booth–Thompson boundary.
    assert!(regimes[0] > 20 && regimes[1] > 20, "{regimes:?}");
}

#[test]
fn expected_counts_match_a_dense_inverse_on_random_subcritical_grammars() {
    // Reference: e = e_start (I − M)⁻¹ with nalgebra's LU inverse.
    let mut rng = Xoshiro256StarStar::seed_from_u64(77);
    let mut checked = 0;
    while checked < 50 {
        let n = 2 + rng.below(9) as usize;
        let g = random_grammar(&mut rng, n, 0.25);
        let (m, ids) = moment_matrix(&g);
        let report = analyze(&g).unwrap();
        if report.spectral_radius >= 0.95 {
            continue;
        }
        let k = ids.len();
        let inv = (DMatrix::<f64>::identity(k, k) - m).try_inverse().unwrap();
        // Row of the start symbol (id 0, first among the reachable ids).
        for (j, &a) in ids.iter().enumerate() {
            let ours = report.symbols[a].expected_uses.unwrap();
            let reference = inv[(0, j)];
            assert!(
                (ours - reference).abs() <= 1e-9 * reference.max(1.0),
                "{}: ours {ours} vs {reference}",
                g.nonterminals[a].name
            );
        }
        // Every rule ends in words, so a subcritical grammar is tight.
        assert!(report.tight);
        checked += 1;
    }
}

#[test]
fn termination_probabilities_are_fixed_points_of_the_grammar_on_random_grammars() {
    // The least fixed point x* satisfies x = f(x) with f(x)_A = Σ p · Π x_B,
    // and the Kleene iterates fᵏ(0) increase to x* from below (Kleene's
    // fixed-point theorem for the monotone f; Etessami & Yannakakis 2009):
    // each iterate must stay below ours, and 20,000 of them come close.
    let mut rng = Xoshiro256StarStar::seed_from_u64(5);
    for _ in 0..100 {
        let n = 2 + rng.below(7) as usize;
        let recursion = 0.3 + 0.4 * rng.next_f64();
        let g = random_grammar(&mut rng, n, recursion);
        let report = analyze(&g).unwrap();
        let x: Vec<f64> = report
            .symbols
            .iter()
            .map(|s| s.termination_probability)
            .collect();
        let f = |x: &[f64]| -> Vec<f64> {
            let mut out = vec![0.0; x.len()];
            for r in &g.rules {
                out[r.lhs.index()] += r.rhs.iter().fold(r.p, |acc, s| match s {
                    Sym::N(b) => acc * x[b.index()],
                    Sym::T(_) => acc,
                });
            }
            out
        };
        let fx = f(&x);
        for (a, (xa, fa)) in x.iter().zip(&fx).enumerate() {
            assert!((xa - fa).abs() < 1e-12, "N{a}: x {xa} vs f(x) {fa}");
        }
        let mut kleene = vec![0.0; x.len()];
        for _ in 0..20_000 {
            kleene = f(&kleene);
        }
        for (a, (xa, ka)) in x.iter().zip(&kleene).enumerate() {
            assert!(*ka <= xa + 1e-12, "N{a}: Kleene iterate {ka} above {xa}");
            // Kleene converges linearly away from criticality; these random
            // grammars are not critical, so 20,000 steps get close.
            assert!(xa - ka < 1e-6, "N{a}: {xa} vs Kleene {ka}");
        }
    }
}

#[test]
fn spectral_radius_of_a_large_component_is_invariant_under_diagonal_similarity() {
    // A circulant M with every row summing to c has ρ(M) = c (Perron–
    // Frobenius: a non-negative matrix with constant row sums has that sum
    // as its spectral radius), and D⁻¹ M D has the same eigenvalues for any
    // invertible diagonal D (similarity). Its rows no longer sum to c, so
    // the iteration has real work to do. Built as unary rules
    // N_i → N_j with probability (D⁻¹ M D)[i][j] plus N_i → "w" for the rest;
    // 600 symbols in one component take the large-matrix path.
    let n = 600;
    let c = 0.9;
    let mut rng = Xoshiro256StarStar::seed_from_u64(31);
    let d: Vec<f64> = (0..n).map(|_| 1.0 + 0.05 * rng.next_f64()).collect();
    let names: Vec<String> = (0..n).map(|i| format!("N{i}")).collect();
    let mut spec: Vec<(String, String, f64)> = Vec::new();
    for i in 0..n {
        let mut used = 0.0;
        for step in [1, 7, 31] {
            let j = (i + step) % n;
            let p = c / 3.0 * d[j] / d[i];
            used += p;
            spec.push((names[i].clone(), names[j].clone(), p));
        }
        spec.push((names[i].clone(), "\"w\"".to_string(), 1.0 - used));
    }
    let refs: Vec<(&str, &str, f64)> = spec
        .iter()
        .map(|(a, b, p)| (a.as_str(), b.as_str(), *p))
        .collect();
    let g = consistency_support::grammar("N0", &refs);
    let report = analyze(&g).unwrap();
    assert!(
        (report.spectral_radius - c).abs() < 1e-9,
        "ρ = {}",
        report.spectral_radius
    );
    assert!(report.tight);
}

#[test]
fn the_quick_leak_check_agrees_with_the_full_report_on_random_grammars() {
    // `leak_finding` skips the full report for tight grammars; on leaky and
    // tight grammars alike it must say exactly what the full report says.
    let mut rng = Xoshiro256StarStar::seed_from_u64(17);
    let (mut leaky, mut tight) = (0, 0);
    for _ in 0..200 {
        let n = 2 + rng.below(7) as usize;
        let recursion = 0.2 + 0.6 * rng.next_f64();
        let g = random_grammar(&mut rng, n, recursion);
        let full = leaky_diagnostic(&g, &analyze(&g).unwrap());
        let quick = leak_finding(&g);
        assert_eq!(quick, full);
        if full.is_some() {
            leaky += 1;
        } else {
            tight += 1;
        }
    }
    assert!(
        leaky >= 20 && tight >= 20,
        "coverage: {leaky} leaky, {tight} tight"
    );
}
