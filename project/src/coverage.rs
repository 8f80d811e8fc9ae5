//! Rule coverage: which rules of a grammar the tests exercise.
//!
//! A rule is covered when the most probable tree of some passing `accept`
//! case uses it (a passing `reject` case has no tree; a failing case does
//! not count, since its tree is not what the author expects). Every rule of
//! the grammar counts, those of the files it `use`s included, so a rule no
//! test reaches — unreachable, weight 0, or simply never the best analysis
//! — shows up as uncovered.
//!
//! [`coverage`] counts per block and overall; [`uncovered_diagnostics`]
//! turns the uncovered rules into `uncovered` findings, and
//! [`uncovered_findings`] runs a grammar's tests for them, for the editor.

use crate::test_run::{run, selected, RunOptions, Selection, TestResult};
use grammar_lang::model::{Grammar, NtId, RuleId};
use grammar_lang::{Code, Config, Diagnostic};
use trellis_engine::testing::tree_rules;
use trellis_ide::Analysis;

/// How many rules of one block the tests cover.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BlockCoverage {
    pub block: NtId,
    pub covered: usize,
    pub rules: usize,
}

/// The rule coverage of one grammar's test run.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Coverage {
    /// Rules used by some passing case's most probable tree.
    pub covered: usize,
    /// Every rule of the grammar.
    pub rules: usize,
    /// Each block with rules, in the order the grammar defines them.
    pub blocks: Vec<BlockCoverage>,
    /// The rules no passing case uses, in source order.
    pub uncovered: Vec<RuleId>,
}

impl Coverage {
    /// Covered rules as a percentage of all rules (100 for a grammar
    /// without rules: nothing is left untested).
    pub fn percent(&self) -> f64 {
        percent(self.covered, self.rules)
    }

    /// Whether the coverage reaches `minimum` percent.
    pub fn reaches(&self, minimum: f64) -> bool {
        // Compared in whole rules, so that 2 of 3 rules reach 66.67 % as
        // shown, and never miss by a float rounding.
        self.percent() + 1e-9 >= minimum
    }
}

/// `part` of `whole` as a percentage (100 when `whole` is 0).
pub fn percent(part: usize, whole: usize) -> f64 {
    if whole == 0 {
        100.0
    } else {
        part as f64 * 100.0 / whole as f64
    }
}

/// The coverage of `grammar`'s rules by the passing cases of `results`.
pub fn coverage(grammar: &Grammar, results: &[TestResult]) -> Coverage {
    let mut used = vec![false; grammar.rules.len()];
    for outcome in results.iter().flat_map(|r| &r.cases) {
        if !outcome.passed() {
            continue;
        }
        let Some(best) = outcome.best() else {
            continue;
        };
        // The parser's tree is built from the grammar's rules, so it always
        // maps back; a tree that did not would simply cover nothing.
        if let Ok(rules) = tree_rules(grammar, &best.tree) {
            for rule in rules {
                used[rule.index()] = true;
            }
        }
    }
    let blocks = grammar
        .nt_ids()
        .filter_map(|nt| {
            let ids = &grammar.nonterminal(nt).rules;
            (!ids.is_empty()).then(|| BlockCoverage {
                block: nt,
                covered: ids.iter().filter(|r| used[r.index()]).count(),
                rules: ids.len(),
            })
        })
        .collect();
    let uncovered: Vec<RuleId> = grammar.rule_ids().filter(|r| !used[r.index()]).collect();
    Coverage {
        covered: used.len() - uncovered.len(),
        rules: used.len(),
        blocks,
        uncovered,
    }
}

/// The uncovered rules as `uncovered` findings at the level `config` sets
/// (none when it is off, the default): for the editor, which shows them
/// as hints.
pub fn uncovered_diagnostics(
    grammar: &Grammar,
    coverage: &Coverage,
    config: &Config,
) -> Vec<Diagnostic> {
    let Some(severity) = config.level(Code::Uncovered) else {
        return Vec::new();
    };
    coverage
        .uncovered
        .iter()
        .map(|&id| {
            let mut d = Diagnostic::new(
                Code::Uncovered,
                grammar.rule(id).location,
                format!(
                    "no passing test case uses `{}` in its most probable tree",
                    grammar.rule_text(id)
                ),
            )
            .with_label("not covered by the tests")
            .with_help(
                "add an `accept` case whose most probable tree uses this rule, \
                 or remove the rule if nothing should say it",
            );
            d.severity = severity;
            d
        })
        .collect()
}

/// For the editor: the `uncovered` findings of `analysis`'s grammar, from
/// running every test block, when `config` turns the code on
/// (`[editor] uncovered-rules = "hint"`). None when it is off (then no test
/// runs), when the grammar has no tests (a library of blocks such as a
/// lexicon, opened on its own) or cannot run (it has errors, shown already).
pub fn uncovered_findings(analysis: &Analysis, config: &Config) -> Vec<Diagnostic> {
    if config.level(Code::Uncovered).is_none() || analysis.grammar.tests.is_empty() {
        return Vec::new();
    }
    let tests = selected(analysis, Selection::All);
    match run(analysis, tests, RunOptions::default(), &|| false) {
        Ok(Some(done)) => {
            let coverage = coverage(&analysis.grammar, &done.tests);
            uncovered_diagnostics(&analysis.grammar, &coverage, config)
        }
        Ok(None) | Err(_) => Vec::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use trellis_test_support::grammars::HARBOUR;

    /// "ferries sail" uses S → NP VP, NP → "ferries", VP → "sail"; the
    /// failing "boats" covers nothing, and the passing reject has no tree.
    const TESTS: &str = "
test \"t\" {
  accept \"ferries sail\"
  reject \"sink boats\"
  accept \"boats\"
}
";

    /// The shared harbour grammar with these tests.
    fn harbour() -> String {
        format!("{HARBOUR}{TESTS}")
    }

    fn coverage_of(text: &str) -> (trellis_ide::Analysis, Coverage) {
        let analysis = trellis_ide::analyze_text(text);
        let tests = selected(&analysis, Selection::All);
        let done = run(&analysis, tests, RunOptions::default(), &|| false)
            .unwrap()
            .unwrap();
        let coverage = coverage(&analysis.grammar, &done.tests);
        (analysis, coverage)
    }

    #[test]
    fn a_rule_is_covered_when_a_passing_case_s_best_tree_uses_it() {
        let (analysis, c) = coverage_of(&harbour());
        let g = &analysis.grammar;
        assert_eq!((c.covered, c.rules), (3, 6));
        assert_eq!(c.percent(), 50.0);
        let uncovered: Vec<String> = c.uncovered.iter().map(|&r| g.rule_text(r)).collect();
        assert_eq!(uncovered, ["S → VP", "NP → \"boats\"", "VP → \"sink\""]);
        let blocks: Vec<(&str, usize, usize)> = c
            .blocks
            .iter()
            .map(|b| (g.nt_name(b.block), b.covered, b.rules))
            .collect();
        assert_eq!(blocks, [("S", 1, 2), ("NP", 1, 2), ("VP", 1, 2)]);
        assert!(c.reaches(50.0));
        assert!(!c.reaches(50.1));
    }

    #[test]
    fn uncovered_rules_become_findings_only_when_configured() {
        let text = harbour();
        let (analysis, c) = coverage_of(&text);
        let g = &analysis.grammar;
        assert!(uncovered_diagnostics(g, &c, &Config::default()).is_empty());
        let config = crate::config::parse("[editor]\nuncovered-rules = \"hint\"\n").unwrap();
        let found = uncovered_diagnostics(g, &c, &config);
        assert_eq!(found.len(), 3);
        let d = &found[0];
        assert_eq!(d.code, Code::Uncovered);
        assert_eq!(d.severity, grammar_lang::Severity::Note);
        assert_eq!(d.location.span.text(&text), "0.4  VP");
        assert!(d.message.contains("`S → VP`"), "{}", d.message);
    }

    #[test]
    fn the_editor_gets_uncovered_findings_only_when_turned_on_and_tests_exist() {
        let on = crate::config::parse("[editor]\nuncovered-rules = \"hint\"\n").unwrap();
        let text = harbour();
        let analysis = trellis_ide::analyze_text(&text);
        assert!(uncovered_findings(&analysis, &Config::default()).is_empty());
        let found = uncovered_findings(&analysis, &on);
        let texts: Vec<&str> = found.iter().map(|d| d.location.span.text(&text)).collect();
        assert_eq!(texts, ["0.4  VP", "1/2 \"boats\"", "0.25 \"sink\""]);
        // A library of blocks without tests: nothing to measure.
        let lexicon = trellis_ide::analyze_text("NP { \"ferries\" | \"boats\" }\n");
        assert!(uncovered_findings(&lexicon, &on).is_empty());
    }
}
