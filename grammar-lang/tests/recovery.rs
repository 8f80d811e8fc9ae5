//! One mistake, one error: the front end's recovery, specified as a table.
//!
//! Each row is a small lighthouse-logbook grammar with one mistake a person
//! writing grammars by hand makes, and the one diagnostic the whole front
//! end (lexer, parser, lowering, every check) must report for it: its code,
//! where it points (1-based line and column in characters), a fragment of
//! its message and a fragment of its help. Nothing else may be reported —
//! no follow-on `undefined`, `sum-not-one` or `unproductive` from a block
//! the parser had to repair.

use grammar_lang::{analyze_text, Analysis, Diagnostic};

struct Row {
    /// What the writer got wrong.
    mistake: &'static str,
    source: &'static str,
    code: &'static str,
    at: (u32, u32),
    message: &'static str,
    help: &'static str,
}

const ROWS: &[Row] = &[
    Row {
        mistake: "a block's `{` is missing",
        source: "start Log\nLog\n  0.5 \"wind\" Sea\n  0.5 \"light\"\n}\nSea { \"calm\" | \"rough\" }\n",
        code: "syntax",
        at: (2, 4),
        message: "block `Log` is missing its `{`",
        help: "write `Log {`",
    },
    Row {
        mistake: "a test's name is not quoted",
        source: "start Log\nLog { \"calm\" }\ntest calm nights {\n  accept \"calm\"\n}\n",
        code: "syntax",
        at: (3, 6),
        message: "a test's name must be quoted",
        help: "test \"calm nights\" {",
    },
    Row {
        mistake: "a word's quotes are forgotten, and the word is known",
        source: "start Log\nLog {\n  0.5 \"wind\" calm\n  0.5 \"calm\"\n}\n",
        code: "undefined",
        at: (3, 14),
        message: "the word \"calm\" is a terminal of the grammar",
        help: "quote it to use the word: \"calm\"",
    },
    Row {
        mistake: "a decimal comma",
        source: "start Log\nLog {\n  0,5 \"wind\"\n  0.5 \"calm\"\n}\n",
        code: "bad-weight",
        at: (3, 3),
        message: "`0,5` has a decimal comma",
        help: "write `0.5`",
    },
    Row {
        mistake: "a decimal comma in a percentage",
        source: "start Log\nLog {\n  50,5% \"wind\"\n  49.5% \"calm\"\n}\n",
        code: "bad-weight",
        at: (3, 3),
        message: "decimal comma",
        help: "write `50.5%`",
    },
    Row {
        mistake: "a weight in scientific notation too large to write out",
        source: "start Log\nLog relative {\n  1e999 \"wind\"\n  1 \"calm\"\n}\n",
        code: "bad-weight",
        at: (3, 3),
        message: "`1e999` is in scientific notation",
        help: "scientific notation is not a weight",
    },
    Row {
        mistake: "a small weight in scientific notation",
        source: "start Log\nLog relative {\n  1e-3 \"wind\"\n  1 \"calm\"\n}\n",
        code: "bad-weight",
        at: (3, 3),
        message: "scientific notation",
        help: "write `0.001`",
    },
    Row {
        mistake: "an unknown escape in a terminal",
        source: "start Log\nLog { \"a\\qb\" }\n",
        code: "syntax",
        at: (2, 9),
        message: "unknown escape `\\q`",
        help: "the only escapes are `\\\"` (a quote) and `\\\\` (a backslash)",
    },
    Row {
        mistake: "an unknown escape in a test sentence",
        source: "start Log\nLog { \"calm\" }\ntest \"t\" {\n  accept \"calm\\n\"\n}\n",
        code: "syntax",
        at: (4, 15),
        message: "unknown escape `\\n`",
        help: "only escapes",
    },
    Row {
        mistake: "a relative block whose weights are all zero",
        source: "start Log\nLog relative {\n  0 \"wind\"\n  0 \"calm\"\n}\n",
        code: "all-zero",
        at: (2, 1),
        message: "every weight of the relative block `Log` is 0",
        help: "positive weight",
    },
    Row {
        mistake: "a block's `}` is missing before the next block",
        source: "start Log\nLog {\n  \"wind\" Sea\nSea { \"calm\" }\n",
        code: "syntax",
        at: (2, 5),
        message: "block `Log` is not closed",
        help: "add `}` after its last alternative",
    },
    Row {
        mistake: "the last block's `}` is missing",
        source: "start Log\nLog {\n  0.5 \"wind\"\n  0.5 \"calm\"\n",
        code: "syntax",
        at: (2, 5),
        message: "block `Log` is not closed",
        help: "add `}`",
    },
    Row {
        mistake: "a `|` between two weighted alternatives is missing",
        source: "start Log\nLog { 0.5 \"wind\" 0.5 \"calm\" }\n",
        code: "syntax",
        at: (2, 18),
        message: "a `|` or a line break is missing before it",
        help: "separate alternatives with `|`",
    },
    Row {
        mistake: "a stray `)` in an alternative",
        source: "start Log\nLog { \"wind\" ) }\n",
        code: "syntax",
        at: (2, 14),
        message: "unexpected `)` in an alternative",
        help: "brackets only appear in the expected trees of tests",
    },
    Row {
        mistake: "a weight written after its alternative",
        source: "start Log\nLog {\n  \"wind\" 0.5\n  0.5 \"calm\"\n}\n",
        code: "syntax",
        at: (3, 10),
        message: "after the alternative's items; a weight comes first",
        help: "move it to the front",
    },
    Row {
        mistake: "an unterminated terminal",
        source: "start Log\nLog {\n  \"wind\n  \"calm\"\n}\n",
        code: "syntax",
        at: (3, 3),
        message: "missing its closing `\"`",
        help: "close the terminal with `\"` on the same line",
    },
    Row {
        mistake: "an arrow inside a name",
        source: "start Log\nLog { Wind→Sea }\nWind { \"wind\" }\n",
        code: "syntax",
        at: (2, 11),
        message: "character `→`",
        help: "symbol names use letters, digits",
    },
    Row {
        mistake: "a no-break space inside a name",
        source: "start Log\nLog { Wind\u{a0}Sea }\nWind { \"wind\" }\n",
        code: "syntax",
        at: (2, 11),
        message: "character `\u{a0}`",
        help: "symbol names use letters, digits",
    },
    Row {
        mistake: "typographic quotes around a word",
        source: "start Log\nLog { “calm” }\n",
        code: "syntax",
        at: (2, 7),
        message: "character `“`",
        help: "straight quotes",
    },
    Row {
        mistake: "a stray `}` after a block",
        source: "start Log\nLog { \"calm\" }\n}\n",
        code: "syntax",
        at: (3, 1),
        message: "this `}` closes no block",
        help: "closed too early",
    },
    Row {
        mistake: "a block closed too early, with alternatives after it",
        source: "start Log\nLog {\n  0.5 \"calm\" }\n  0.5 \"wind\"\n}\n",
        code: "syntax",
        at: (4, 3),
        message: "stands outside any block",
        help: "closing its block too early",
    },
    Row {
        mistake: "`start` without a name",
        source: "start\nLog { \"calm\" }\n",
        code: "syntax",
        at: (1, 6),
        message: "`start` needs a symbol name",
        help: "write `start Name`",
    },
    Row {
        mistake: "a quoted start symbol",
        source: "start \"Log\"\nLog { \"calm\" }\n",
        code: "syntax",
        at: (1, 7),
        message: "`start` takes a symbol name, not a quoted terminal",
        help: "remove the quotes: `start Log`",
    },
    Row {
        mistake: "a second name on the `start` line",
        source: "start Log Sea\nLog { \"calm\" }\n",
        code: "syntax",
        at: (1, 11),
        message: "unexpected symbol name `Sea` after the declaration",
        help: "one line of its own",
    },
    Row {
        mistake: "an unquoted `use` path",
        source: "use lexicon.trellis\nstart Log\nLog { \"calm\" }\n",
        code: "syntax",
        at: (1, 5),
        message: "`use` needs a quoted file path",
        help: "use \"lexicon.trellis\"",
    },
    Row {
        mistake: "a keyword used as a symbol name",
        source: "start Log\nLog { \"light\" accept }\n",
        code: "syntax",
        at: (2, 15),
        message: "`accept` is a keyword and cannot be used as a symbol name",
        help: "quote it if it is a word: \"accept\"",
    },
    Row {
        mistake: "junk between a block's name and its `{`",
        source: "start Log\nLog = { \"calm\" }\n",
        code: "syntax",
        at: (2, 5),
        message: "character `=` between the block name `Log` and its `{`",
        help: "a block is written `Log { alternatives }`",
    },
    Row {
        mistake: "a misspelt `relative`",
        source: "start Log\nLog relativ { 2 \"calm\" | 1 \"wind\" }\n",
        code: "syntax",
        at: (2, 5),
        message: "symbol name `relativ` between the block name `Log` and its `{`",
        help: "`Log relative { … }`",
    },
    Row {
        mistake: "a line of words outside any block",
        source: "start Log\nLog { Sea }\nLonely \"wind\"\nSea { \"rough\" }\n",
        code: "syntax",
        at: (3, 8),
        message: "after `Lonely`; expected `{` to open its block",
        help: "a block is written `Lonely { alternatives }`",
    },
    Row {
        mistake: "a test sentence without quotes",
        source: "start Log\nLog { \"calm\" \"night\" }\ntest \"t\" {\n  accept calm night\n}\n",
        code: "syntax",
        at: (4, 10),
        message: "a test sentence must be quoted",
        help: "write it as \"calm night\"",
    },
    Row {
        mistake: "a test case without `accept` or `reject`",
        source: "start Log\nLog { \"calm\" }\ntest \"t\" {\n  \"calm\"\n  accept \"calm\"\n}\n",
        code: "syntax",
        at: (4, 3),
        message: "a test case starts with `accept` or `reject`",
        help: "accept \"words\"",
    },
    Row {
        mistake: "two sentences in one case",
        source: "start Log\nLog { \"calm\" }\ntest \"t\" {\n  accept \"calm\" \"calm\"\n}\n",
        code: "syntax",
        at: (4, 17),
        message: "a second sentence",
        help: "one pair of quotes",
    },
    Row {
        mistake: "an expected tree on a `reject`",
        source: "start Log\nLog { \"calm\" }\ntest \"t\" {\n  reject \"calm\" as (Log \"calm\")\n}\n",
        code: "syntax",
        at: (4, 3),
        message: "`reject` cannot have an expected tree",
        help: "accept",
    },
    Row {
        mistake: "an expected tree's bracket left open",
        source: "start Log\nLog { Sea }\nSea { \"calm\" }\ntest \"t\" {\n  accept \"calm\" as (Log (Sea \"calm\")\n  reject \"wind\"\n}\n",
        code: "syntax",
        at: (5, 20),
        message: "this bracket of the expected tree is not closed",
        help: "add `)` where the tree ends",
    },
    Row {
        mistake: "a tree node without a label",
        source: "start Log\nLog { \"calm\" }\ntest \"t\" {\n  accept \"calm\" as (\"calm\")\n}\n",
        code: "syntax",
        at: (4, 21),
        message: "expected the label of a tree node",
        help: "(Label child …)",
    },
    Row {
        mistake: "a test block whose `{` is missing",
        source: "start Log\nLog { \"calm\" }\ntest \"t\"\n  accept \"calm\"\n}\n",
        code: "syntax",
        at: (3, 9),
        message: "test \"t\" is missing its `{`",
        help: "write `test \"t\" {`",
    },
    Row {
        mistake: "a test block whose `}` is missing",
        source: "start Log\nLog { \"calm\" }\ntest \"t\" {\n  accept \"calm\"\n",
        code: "syntax",
        at: (3, 10),
        message: "test block is not closed",
        help: "add `}` after its last case",
    },
    Row {
        mistake: "a test case outside a test block",
        source: "start Log\nLog { \"calm\" }\naccept \"calm\"\n",
        code: "syntax",
        at: (3, 1),
        message: "a test case (`accept`) outside a test block",
        help: "test \"name\" { … }",
    },
    Row {
        mistake: "two `|` with nothing between them",
        source: "start Log\nLog { \"calm\" | | \"wind\" }\n",
        code: "empty-rule",
        at: (2, 14),
        message: "empty alternative",
        help: "factor the optional part out",
    },
    Row {
        mistake: "a weight with no items",
        source: "start Log\nLog {\n  0.5\n  0.5 \"calm\"\n}\n",
        code: "empty-rule",
        at: (3, 3),
        message: "has a weight but derives nothing",
        help: "factor the optional part out",
    },
    Row {
        mistake: "a division by zero in a weight",
        source: "start Log\nLog {\n  1/0 \"wind\"\n  1 \"calm\"\n}\n",
        code: "bad-weight",
        at: (3, 3),
        message: "`1/0` divides by zero",
        help: "a fraction `1/4`",
    },
    Row {
        mistake: "a misspelt block name",
        source: "start Log\nLog { Wnid | Wind }\nWind { \"wind\" }\n",
        code: "undefined",
        at: (2, 7),
        message: "did you mean `Wind`?",
        help: "perhaps `Wind`",
    },
    Row {
        mistake: "weights that do not sum to one",
        source: "start Log\nLog {\n  0.5 \"wind\"\n  0.4 \"calm\"\n}\n",
        code: "sum-not-one",
        at: (2, 1),
        message: "1/10 (0.1) short",
        help: "add up to exactly 1",
    },
    Row {
        mistake: "a decimal comma in a file with lone CR line breaks",
        source: "start Log\rLog {\r  0,5 \"wind\"\r  0.5 \"calm\"\r}\r",
        code: "bad-weight",
        at: (3, 3),
        message: "decimal comma",
        help: "write `0.5`",
    },
    Row {
        mistake: "a missing `{` in a file with CRLF line breaks",
        source: "start Log\r\nLog\r\n  \"wind\"\r\n}\r\n",
        code: "syntax",
        at: (2, 4),
        message: "block `Log` is missing its `{`",
        help: "write `Log {`",
    },
];

/// 1-based line and column (in characters) where `d` points.
fn position(analysis: &Analysis, d: &Diagnostic) -> (u32, u32) {
    let file = analysis.sources.get(d.location.file);
    let lc = file.lines.chars(&file.text, d.location.span.start as usize);
    (lc.line + 1, lc.col + 1)
}

fn show(analysis: &Analysis) -> String {
    analysis
        .diagnostics
        .iter()
        .map(|d| {
            let (line, col) = position(analysis, d);
            format!(
                "  {}:{} {} {:?} help: {:?}\n",
                line,
                col,
                d.code,
                d.message,
                d.help.as_deref().unwrap_or("")
            )
        })
        .collect()
}

#[test]
fn each_mistake_gives_one_error_with_the_right_advice() {
    let mut failures = Vec::new();
    for row in ROWS {
        let analysis = analyze_text(row.source);
        let found = match analysis.diagnostics.as_slice() {
            [d] => d,
            _ => {
                failures.push(format!(
                    "{}: expected one `{}`, got {}:\n{}",
                    row.mistake,
                    row.code,
                    analysis.diagnostics.len(),
                    show(&analysis)
                ));
                continue;
            }
        };
        let help = found.help.as_deref().unwrap_or("");
        if found.code.as_str() != row.code
            || position(&analysis, found) != row.at
            || !found.message.contains(row.message)
            || !help.contains(row.help)
        {
            failures.push(format!(
                "{}: expected {} at {:?} ({:?}; help {:?}), got:\n{}",
                row.mistake,
                row.code,
                row.at,
                row.message,
                row.help,
                show(&analysis)
            ));
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} rows differ:\n{}",
        failures.len(),
        ROWS.len(),
        failures.join("\n")
    );
}

#[test]
fn the_table_covers_thirty_mistakes_and_every_row_is_a_mistake() {
    assert!(ROWS.len() >= 30, "{} rows", ROWS.len());
    // Each source without its mistake would be a different grammar: no two
    // rows share a source.
    let mut sources: Vec<&str> = ROWS.iter().map(|r| r.source).collect();
    sources.sort_unstable();
    sources.dedup();
    assert_eq!(sources.len(), ROWS.len());
}

#[test]
fn a_forgotten_quote_is_fixed_by_the_suggested_quoted_word() {
    let text = "start Log\nLog {\n  0.5 \"wind\" calm\n  0.5 \"calm\"\n}\n";
    let analysis = analyze_text(text);
    let [d] = analysis.diagnostics.as_slice() else {
        panic!("{}", show(&analysis))
    };
    assert_eq!(d.suggestion.as_deref(), Some("\"calm\""));
    // Applying the suggestion gives a clean grammar.
    let fixed = format!(
        "{}{}{}",
        &text[..d.location.span.start as usize],
        "\"calm\"",
        &text[d.location.span.end as usize..]
    );
    assert!(analyze_text(&fixed).diagnostics.is_empty());
}

#[test]
fn the_damaged_stretches_are_recorded_in_the_syntax() {
    let text = "start Log\nLog { \"wind\" ) }\nSea\n  \"calm\"\n}\n";
    let file = grammar_lang::syntax::parse(text);
    let damaged: Vec<&str> = file.damaged.iter().map(|d| d.span.text(text)).collect();
    // The dropped alternative, and the name of the block missing its `{`.
    assert_eq!(damaged, ["\"wind\" )", "Sea"]);
    assert_eq!(
        file.damaged[1].block.map(|n| n.span.text(text)),
        Some("Sea")
    );
}

#[test]
fn lone_cr_crlf_and_lf_are_line_breaks_alike() {
    let lf = "start Log\nLog {\n  \"wind\"\n  \"calm\"\n}\n";
    for text in [
        lf.to_string(),
        lf.replace('\n', "\r"),
        lf.replace('\n', "\r\n"),
    ] {
        let analysis = analyze_text(&text);
        assert!(
            analysis.diagnostics.is_empty(),
            "{:?}: {}",
            text,
            show(&analysis)
        );
        assert_eq!(analysis.grammar.rules.len(), 2, "{text:?}");
        let file = analysis.sources.get(grammar_lang::FileId(0));
        assert_eq!(file.lines.line_count(), 6, "{text:?}");
        let calm = text.find("\"calm\"").unwrap_or_default();
        let lc = file.lines.utf16(&text, calm);
        assert_eq!((lc.line, lc.col), (3, 2), "{text:?}");
    }
}
