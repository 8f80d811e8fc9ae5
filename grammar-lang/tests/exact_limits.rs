//! Exact arithmetic has a limit: a block whose exact sum would need more
//! than `EXACT_SUM_BITS` is checked and resolved in floating point, says so
//! (`approximate-sum`), and still reports a sum that is clearly not 1.
//! Below the limit sums stay exact (the other suites hold them to that).
//! These inputs took tens of seconds before the limit and the tree-shaped
//! sums; their speed is measured by `benches/exact.rs`, not here.

use grammar_lang::model::{Ratio, EXACT_SUM_BITS};
use grammar_lang::weight::parse_weight;
use grammar_lang::{analyze_text, Analysis, Code, Diagnostic};
use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, ToPrimitive, Zero};
use trellis_test_support::grammars::{prime_reciprocals, primes};

fn with_code(a: &Analysis, code: Code) -> Vec<&Diagnostic> {
    a.diagnostics.iter().filter(|d| d.code == code).collect()
}

fn block_of<'a>(a: &'a Analysis, name: &str) -> &'a grammar_lang::model::BlockInfo {
    let nt = a.grammar.nt(name).expect("the block exists");
    a.grammar.nonterminal(nt).block.as_ref().expect("a block")
}

#[test]
fn thousands_of_reciprocals_of_primes_are_summed_approximately_and_still_judged() {
    let a = analyze_text(&prime_reciprocals(3_000));
    let block = block_of(&a, "Call");
    let approx = block.approximate.expect("the sum is past the limit");
    // Mertens' second theorem: Σ_{p ≤ x} 1/p = ln ln x + M + O(1/ln x),
    // M = 0.2614972128… (the Meissel–Mertens constant, recalled from
    // memory); the 3,000th prime is 27,449, and the error term there is
    // below 1/(2 ln² x) ≈ 0.005 (Rosser and Schoenfeld, 1962, recalled from
    // memory).
    let mertens = (27_449f64).ln().ln() + 0.261_497_212_8;
    assert_eq!(primes(3_000)[2_999], 27_449);
    assert!(
        (approx.weighted - mertens).abs() < 0.01,
        "{} vs {mertens}",
        approx.weighted
    );
    // The same sum added up independently in the other order, and the
    // bound covering the difference.
    let backwards: f64 = primes(3_000).iter().rev().map(|&p| 1.0 / p as f64).sum();
    assert!((approx.weighted - backwards).abs() <= 2.0 * approx.tolerance);
    assert!(approx.tolerance > 0.0 && approx.tolerance < 1e-10);
    // ≈2.59 is far from 1: the sum is not one, said to be approximate.
    let [not_one] = with_code(&a, Code::SumNotOne)[..] else {
        panic!("one sum-not-one: {:#?}", a.diagnostics)
    };
    assert!(
        not_one.message.contains("≈2.58") && not_one.message.contains("checked approximately"),
        "{}",
        not_one.message
    );
    let [note] = with_code(&a, Code::ApproximateSum)[..] else {
        panic!("one approximate-sum note: {:#?}", a.diagnostics)
    };
    assert!(note.message.contains("65,536 bits"), "{}", note.message);
    // The probabilities are the weights' nearest floats, exactly.
    let rule = &a.grammar.rules[0];
    assert_eq!(rule.p, 0.5);
    assert_eq!(rule.probability, Ratio::new_i64(1, 2));
    let mass = block.mass.to_f64().expect("a float");
    assert!((mass - approx.weighted).abs() <= approx.tolerance);
}

#[test]
fn a_weight_of_200000_digits_is_read_exactly_and_its_block_summed_approximately() {
    let digits = "3".repeat(200_000);
    let text =
        format!("grammar harbour\nstart Call\nCall {{\n  0.{digits} \"ahoy\"\n  \"hail\"\n}}\n");
    let a = analyze_text(&text);
    // The weight as written keeps its exact value: 33…3 / 10^200000 in
    // lowest terms (neither 2 nor 5 divides 33…3).
    let weight = a.grammar.rules[0].weight.as_ref().expect("weighted");
    assert_eq!(weight.value.numer(), digits.parse::<BigInt>().unwrap());
    assert_eq!(weight.value.denom(), BigInt::from(10).pow(200_000));
    let block = block_of(&a, "Call");
    let approx = block
        .approximate
        .expect("the weight alone is past the limit");
    assert!(approx.unweighted);
    assert!((approx.weighted - 1.0 / 3.0).abs() <= approx.tolerance + f64::EPSILON);
    // The unweighted alternative gets the rest, 2/3, in floating point.
    assert!((a.grammar.rules[1].p - 2.0 / 3.0).abs() < 1e-15);
    // Clearly below 1: no error, one note.
    assert!(with_code(&a, Code::SumNotOne).is_empty());
    assert!(with_code(&a, Code::NoMassLeft).is_empty());
    let [note] = with_code(&a, Code::ApproximateSum)[..] else {
        panic!("one approximate-sum note: {:#?}", a.diagnostics)
    };
    assert!(note.message.contains("share the rest"), "{}", note.message);
    assert!(!a.has_errors());
}

#[test]
fn a_sum_within_the_error_bound_of_one_is_not_called_wrong() {
    // 1/3 with 30,000 digits, twice, and 1/3 exactly: the decimals are each
    // 10^-30000/3 short, so the exact sum is 1 − 2·10^-30000/3, which no
    // float can tell from 1.
    let third = format!("0.{}", "3".repeat(30_000));
    let text = format!(
        "grammar harbour\nstart Call\nCall {{\n  {third} \"ahoy\"\n  {third} \"hail\"\n  1/3 \"hello\"\n}}\n"
    );
    let a = analyze_text(&text);
    assert!(block_of(&a, "Call").approximate.is_some());
    assert!(
        with_code(&a, Code::SumNotOne).is_empty(),
        "{:#?}",
        a.diagnostics
    );
    let [note] = with_code(&a, Code::ApproximateSum)[..] else {
        panic!("one approximate-sum note: {:#?}", a.diagnostics)
    };
    assert!(note.message.contains("cannot be told"), "{}", note.message);
}

#[test]
fn relative_blocks_past_the_limit_divide_in_floating_point() {
    let mut text = String::from("grammar harbour\nstart Call\nCall relative {\n");
    for p in primes(3_000) {
        text.push_str(&format!("  1/{p} \"ahoy\"\n"));
    }
    text.push_str("}\n");
    let a = analyze_text(&text);
    let block = block_of(&a, "Call");
    assert!(block.approximate.is_some());
    // Each probability is (1/p) / Σ 1/q: the first is 1/2 over ≈2.586.
    let total: f64 = primes(3_000).iter().map(|&p| 1.0 / p as f64).sum();
    assert!((a.grammar.rules[0].p - 0.5 / total).abs() < 1e-15);
    let sum: f64 = a.grammar.rules.iter().map(|r| r.p).sum();
    assert!((sum - 1.0).abs() < 1e-12);
    assert_eq!(with_code(&a, Code::ApproximateSum).len(), 1);
    assert!(!a.has_errors());
}

#[test]
fn below_the_limit_a_sum_of_prime_reciprocals_stays_exact() {
    // 300 primes: a denominator of about 3,000 bits, well under the limit.
    let a = analyze_text(&prime_reciprocals(300));
    let block = block_of(&a, "Call");
    assert!(block.approximate.is_none());
    assert!(with_code(&a, Code::ApproximateSum).is_empty());
    // num-rational's left-to-right sum is the reference.
    let expected: BigRational = primes(300)
        .iter()
        .map(|&p| BigRational::new(BigInt::one(), BigInt::from(p)))
        .fold(BigRational::zero(), |acc, t| acc + t);
    assert_eq!(block.mass.to_big(), expected);
    assert!(block.mass.bits() < EXACT_SUM_BITS);
    assert_eq!(with_code(&a, Code::SumNotOne).len(), 1);
}

#[test]
fn decimals_are_reduced_exactly_without_a_general_gcd() {
    // num-rational's `BigRational::new` (which reduces by gcd) is the
    // reference for each spelling.
    for (text, numer, denom) in [
        ("0.5", 5i64, 10i64),
        ("0.500", 500, 1000),
        ("0.0000390625", 390_625, 10_000_000_000),
        ("0.125", 125, 1000),
        ("0.2", 2, 10),
        ("0.04", 4, 100),
        ("12.5", 125, 10),
        ("3", 3, 1),
        ("0.0", 0, 10),
        ("7.000", 7000, 1000),
        ("0.333", 333, 1000),
        ("-0.75", -75, 100),
    ] {
        let (value, _) = parse_weight(text).expect("a weight");
        let reference = BigRational::new(BigInt::from(numer), BigInt::from(denom));
        assert_eq!(value.to_big(), reference, "{text}");
        // The one representation: equal to the same value built any way.
        assert_eq!(value, Ratio::from_big(reference), "{text}");
    }
    // 5^40 / 10^40 = 1 / 2^40: forty factors of 5 removed in chunks.
    let text = format!("0.{:0>40}", BigInt::from(5).pow(40));
    let (value, _) = parse_weight(&text).expect("a weight");
    assert_eq!(
        value.to_big(),
        BigRational::new(BigInt::one(), BigInt::one() << 40)
    );
}
