//! The editor features over the protocol, each checked for the LSP shape of
//! its answer and for positions in UTF-16 code units.
//!
//! Every test states its grammar as a fixture (`trellis_test_support`) of
//! two files, opened in the server: `$0` is where a request is made,
//! `[[…]]` marks an expected range (or, empty, another place a request is
//! made at), named by destructuring the ranges of a file in the order they
//! are written. The grammar is the same in most tests: a terminal with
//! `ä` (one UTF-16 unit, two bytes) and one with `𝄞` (a surrogate pair of
//! two units, four bytes) stand before `Island` on its first line, so that
//! its UTF-16 column (20) differs from its character (19) and byte (23)
//! columns.

mod common;

use common::fixture::range;
use common::{sorted_locations, FixtureWorkspace, TestClient};
use serde_json::{json, Value};

const MAIN: &str = "kiosk.trellis";
const LEXICON: &str = "lexicon.trellis";

/// Opens the fixture's files and checks that the main file is published
/// with exactly its annotations (none, in most tests).
async fn workspace(client: &mut TestClient, fixture: &str) -> FixtureWorkspace {
    let ws = client.open_fixture(fixture).await;
    client.check_diagnostics(&ws, MAIN).await;
    ws
}

#[tokio::test]
async fn capabilities_cover_every_wired_feature() {
    let mut client = TestClient::start();
    let caps = client.initialize().await;
    for key in [
        "hoverProvider",
        "definitionProvider",
        "referencesProvider",
        "documentSymbolProvider",
        "workspaceSymbolProvider",
        "completionProvider",
        "semanticTokensProvider",
        "codeActionProvider",
        "inlayHintProvider",
        "codeLensProvider",
        "foldingRangeProvider",
        "documentLinkProvider",
        "documentHighlightProvider",
        "documentFormattingProvider",
        "documentRangeFormattingProvider",
    ] {
        assert!(!caps[key].is_null(), "{key} missing in {caps}");
    }
    assert_eq!(caps["renameProvider"]["prepareProvider"], true);
    assert_eq!(caps["semanticTokensProvider"]["full"], true);
    client.shutdown().await;
}

#[tokio::test]
async fn hover_on_a_symbol_after_non_ascii_words_covers_it_in_utf16_units() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"
        [[]]
        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" [[Is$0land]]
          0.4  Island
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [blank, island] = ws.ranges(MAIN);
    // `Island` starts at byte 23, character 19, UTF-16 unit 20.
    assert_eq!(ws.file(MAIN).line(6).find("Island"), Some(23));
    assert_eq!(island["start"], json!({"line": 6, "character": 20}));
    let hover = client.request("textDocument/hover", ws.at_cursor()).await;
    assert_eq!(hover["contents"]["kind"], "markdown");
    assert!(
        hover["contents"]["value"]
            .as_str()
            .unwrap()
            .contains("Island"),
        "{hover}"
    );
    assert_eq!(hover["range"], island);
    // Nothing to say on a blank line.
    let nothing = client
        .request("textDocument/hover", ws.at(MAIN, &blank["start"]))
        .await;
    assert_eq!(nothing, Value::Null);
    client.shutdown().await;
}

#[tokio::test]
async fn hover_on_a_rule_shows_the_engines_expected_uses() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Re[[]]quest {
          0$0.6  "Fähre" "𝄞" Island
          0.4  Island
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [request] = ws.places(MAIN);
    // `Request` is used exactly once per sentence and picks its first rule
    // with probability 0.6, so that rule is used 0.6 times per sentence
    // (linearity of expectation).
    let hover = client.request("textDocument/hover", ws.at_cursor()).await;
    let text = hover["contents"]["value"].as_str().unwrap();
    assert!(text.contains("expected uses per sentence: 0.6"), "{text}");
    // A grammar without recursion ends with probability 1.
    let hover = client
        .request("textDocument/hover", ws.at(MAIN, &request))
        .await;
    let text = hover["contents"]["value"].as_str().unwrap();
    assert!(text.contains("termination probability: 1"), "{text}");
    client.shutdown().await;
}

#[tokio::test]
async fn definition_jumps_into_the_used_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" $0Island
          0.4  Island
        }
        === lexicon.trellis ===
        [[Island]] { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [island] = ws.ranges(LEXICON);
    let found = client
        .request("textDocument/definition", ws.at_cursor())
        .await;
    assert_eq!(found["uri"], ws.uri(LEXICON));
    assert_eq!(found["range"], island);
    client.shutdown().await;
}

#[tokio::test]
async fn references_list_every_use_in_every_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" [[Island]]
          0.4  [[Island]]
        }
        === lexicon.trellis ===
        [[Is$0land]] { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let mut params = ws.at_cursor();
    params["context"] = json!({"includeDeclaration": true});
    let found = client
        .request("textDocument/references", params.clone())
        .await;
    assert_eq!(
        sorted_locations(found.as_array().unwrap().clone()),
        ws.locations()
    );
    params["context"] = json!({"includeDeclaration": false});
    let found = client.request("textDocument/references", params).await;
    let uses: Vec<Value> = ws
        .locations()
        .into_iter()
        .filter(|l| l["uri"] == ws.uri(MAIN))
        .collect();
    assert_eq!(sorted_locations(found.as_array().unwrap().clone()), uses);
    client.shutdown().await;
}

#[tokio::test]
async fn rename_is_prepared_on_names_refused_on_words_and_edits_every_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "F[[]]ähre" "𝄞" [[$0Island]]
          0.4  [[Island]]
        }
        === lexicon.trellis ===
        [[Island]] { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [word, first, second] = ws.ranges(MAIN);
    let [declaration] = ws.ranges(LEXICON);
    let range = client
        .request("textDocument/prepareRename", ws.at_cursor())
        .await;
    assert_eq!(range, first);
    // On the quoted word "Fähre": not a name.
    let refused = client
        .call("textDocument/prepareRename", ws.at(MAIN, &word["start"]))
        .await;
    assert!(
        refused["error"]["message"]
            .as_str()
            .unwrap()
            .contains("terminal"),
        "{refused}"
    );

    let mut params = ws.at_cursor();
    params["newName"] = json!("Harbour");
    let edit = client.request("textDocument/rename", params.clone()).await;
    let changes = edit["changes"].as_object().unwrap();
    let ranges = |uri: String| -> Vec<Value> {
        let mut ranges: Vec<Value> = changes[&uri]
            .as_array()
            .unwrap()
            .iter()
            .map(|e| json!({"uri": uri, "range": e["range"]}))
            .collect();
        ranges = sorted_locations(ranges);
        ranges.into_iter().map(|l| l["range"].clone()).collect()
    };
    assert_eq!(ranges(ws.uri(MAIN)), [first, second]);
    assert_eq!(ranges(ws.uri(LEXICON)), [declaration]);
    assert!(changes
        .values()
        .flat_map(|v| v.as_array().unwrap())
        .all(|e| e["newText"] == "Harbour"));
    // A name that is not a valid symbol is refused with the reason.
    params["newName"] = json!("two words");
    let refused = client.call("textDocument/rename", params).await;
    assert_eq!(refused["error"]["code"], -32803);
    client.shutdown().await;
}

#[tokio::test]
async fn document_and_workspace_symbols_list_the_blocks() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" Island
          0.4  Island
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let symbols = client
        .request(
            "textDocument/documentSymbol",
            json!({"textDocument": {"uri": ws.uri(MAIN)}}),
        )
        .await;
    let names: Vec<&str> = symbols
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["name"].as_str().unwrap())
        .collect();
    assert!(names.contains(&"Request"), "{names:?}");
    // SymbolKind.Class = 5 (LSP 3.17) for a block; its two rules are its
    // children.
    let request = symbols
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["name"] == "Request" && s["kind"] == 5)
        .unwrap_or_else(|| panic!("no block Request in {symbols}"));
    assert_eq!(request["children"].as_array().unwrap().len(), 2);

    let found = client
        .request("workspace/symbol", json!({"query": "isl"}))
        .await;
    let found = found.as_array().unwrap();
    assert_eq!(found[0]["name"], "Island");
    assert_eq!(found[0]["location"]["uri"], ws.uri(LEXICON));
    client.shutdown().await;
}

#[tokio::test]
async fn completion_offers_symbols_with_an_edit_over_the_typed_prefix() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" Island
          0.4  [[Isl$0]]
                 ^^^ error undefined
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [prefix] = ws.ranges(MAIN);
    let list = client
        .request("textDocument/completion", ws.at_cursor())
        .await;
    let item = list["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["label"] == "Island")
        .unwrap_or_else(|| panic!("no Island in {list}"))
        .clone();
    assert_eq!(item["textEdit"]["range"], prefix);
    assert_eq!(item["textEdit"]["newText"], "Island");
    client.shutdown().await;
}

/// Decodes LSP's relative semantic-token encoding into absolute
/// (line, start, length, type) tuples (LSP 3.17, "Semantic Tokens").
fn decode(data: &[Value]) -> Vec<(u64, u64, u64, u64)> {
    let mut out = Vec::new();
    let (mut line, mut start) = (0, 0);
    for chunk in data.chunks(5) {
        let n: Vec<u64> = chunk.iter().map(|v| v.as_u64().unwrap()).collect();
        if n[0] > 0 {
            line += n[0];
            start = n[1];
        } else {
            start += n[1];
        }
        out.push((line, start, n[2], n[3]));
    }
    out
}

#[tokio::test]
async fn semantic_tokens_are_classified_with_utf16_lengths() {
    let mut client = TestClient::start();
    let caps = client.initialize().await;
    let legend: Vec<String> = caps["semanticTokensProvider"]["legend"]["tokenTypes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t.as_str().unwrap().to_string())
        .collect();
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        [[grammar]] fähre
        start [[Request]]
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          [[0.6]]  [["Fähre"]] [["𝄞"]] [[Island]]
          0.4  Island
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let tokens = client
        .request(
            "textDocument/semanticTokens/full",
            json!({"textDocument": {"uri": ws.uri(MAIN)}}),
        )
        .await;
    let tokens = decode(tokens["data"].as_array().unwrap());
    // The token that starts where `range` starts, as (UTF-16 length, type)
    // next to what the range says its length is.
    let kind = |range: &Value| {
        let n = |v: &Value| v.as_u64().unwrap();
        let (line, start) = (n(&range["start"]["line"]), n(&range["start"]["character"]));
        assert_eq!(range["end"]["line"], range["start"]["line"]);
        let token = tokens
            .iter()
            .find(|t| t.0 == line && t.1 == start)
            .map(|t| (t.2, legend[t.3 as usize].as_str()));
        (token, n(&range["end"]["character"]) - start)
    };
    let [keyword, start, weight, faehre, clef, island] = ws.ranges(MAIN);
    let expected = [
        (keyword, "keyword"),
        (start, "type"),
        (weight, "number"),
        // "Fähre" with quotes: 7 UTF-16 units; "𝄞" with quotes: 4.
        (faehre, "string"),
        (clef, "string"),
        (island, "type"),
    ];
    for (range, kind_name) in &expected {
        let (token, length) = kind(range);
        assert_eq!(token, Some((length, *kind_name)), "at {range}");
    }
    assert_eq!(kind(&expected[3].0).1, 7);
    assert_eq!(kind(&expected[4].0).1, 4);
    client.shutdown().await;
}

/// Applies LSP text edits (non-overlapping) to a text.
fn apply(text: &str, edits: &[Value]) -> String {
    let index = grammar_lang::LineIndex::new(text);
    let mut spans: Vec<(usize, usize, String)> = edits
        .iter()
        .map(|e| {
            let pos = |p: &Value| {
                index.offset_utf16(
                    text,
                    grammar_lang::LineCol {
                        line: p["line"].as_u64().unwrap() as u32,
                        col: p["character"].as_u64().unwrap() as u32,
                    },
                )
            };
            (
                pos(&e["range"]["start"]),
                pos(&e["range"]["end"]),
                e["newText"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    spans.sort_by_key(|s| std::cmp::Reverse(s.0));
    let mut out = text.to_string();
    for (start, end, new) in spans {
        out.replace_range(start..end, &new);
    }
    out
}

#[tokio::test]
async fn the_renormalize_quick_fix_makes_the_block_sum_to_one() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = client
        .open_fixture(
            r#"
            === count.trellis ===
            start Count
            Count {
            ^^^^^ error sum-not-one
              1/2 "one"
              1/3 "two"
            }
            "#,
        )
        .await;
    let (uri, text) = (ws.uri("count.trellis"), ws.text("count.trellis"));
    let published = client.check_diagnostics(&ws, "count.trellis").await;
    let diagnostic = published["diagnostics"][0].clone();
    let actions = client
        .request(
            "textDocument/codeAction",
            json!({"textDocument": {"uri": uri}, "range": diagnostic["range"],
                   "context": {"diagnostics": [diagnostic]}}),
        )
        .await;
    let actions = actions.as_array().unwrap();
    assert!(!actions.is_empty());
    for action in actions {
        assert_eq!(action["diagnostics"][0]["code"], "sum-not-one", "{action}");
    }
    let fix = actions
        .iter()
        .find(|a| a["kind"] == "quickfix" && a["title"].as_str().unwrap().contains("ormali"))
        .unwrap_or_else(|| panic!("no renormalize fix in {actions:?}"));
    let fixed = apply(text, fix["edit"]["changes"][&uri].as_array().unwrap());
    // 1/2 : 1/3 renormalised is 3/5 : 2/5.
    assert!(fixed.contains("3/5") && fixed.contains("2/5"), "{fixed}");
    client.change(&uri, 2, &fixed).await;
    let after = client.diagnostics_for_version(&uri, 2).await;
    assert_eq!(after["diagnostics"], json!([]));
    client.shutdown().await;
}

#[tokio::test]
async fn inlay_hints_show_the_share_of_unweighted_alternatives() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" Island
          0.4  Island
        }
        === lexicon.trellis ===
        Island { [[]]"tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [first] = ws.places(LEXICON);
    let lexicon = ws.file(LEXICON);
    let whole = range(lexicon.utf16_range(&(0..lexicon.text.len())));
    let hints = client
        .request(
            "textDocument/inlayHint",
            json!({"textDocument": {"uri": ws.uri(LEXICON)}, "range": whole}),
        )
        .await;
    // Three unweighted alternatives share the whole mass: 1/3 each (the
    // language specification's `Kind` example).
    let labels: Vec<&str> = hints
        .as_array()
        .unwrap()
        .iter()
        .map(|h| h["label"].as_str().unwrap())
        .collect();
    assert_eq!(labels.len(), 3, "{hints}");
    assert!(labels.iter().all(|l| l.contains("1/3")), "{labels:?}");
    assert_eq!(hints[0]["position"], first);
    client.shutdown().await;
}

#[tokio::test]
async fn code_lenses_above_start_parse_and_sample_through_the_commands() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        [[]]start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" Island
          0.4  Island
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [start] = ws.places(MAIN);
    let lenses = client
        .request(
            "textDocument/codeLens",
            json!({"textDocument": {"uri": ws.uri(MAIN)}}),
        )
        .await;
    let lenses = lenses.as_array().unwrap();
    let commands: Vec<&str> = lenses
        .iter()
        .map(|l| l["command"]["command"].as_str().unwrap())
        .collect();
    assert_eq!(commands, ["trellis.parse", "trellis.sample"]);
    assert!(lenses
        .iter()
        .all(|l| l["range"]["start"]["line"] == start["line"]));
    // Running the sample lens's command shows the sentences to the user.
    let sample = &lenses[1]["command"];
    let result = client
        .request(
            "workspace/executeCommand",
            json!({"command": sample["command"], "arguments": sample["arguments"]}),
        )
        .await;
    assert_eq!(result["samples"].as_array().unwrap().len(), 10);
    let shown = client
        .wait_for(|m| m["method"] == "window/showMessage")
        .await;
    assert_eq!(
        shown["params"]["message"].as_str().unwrap().lines().count(),
        10
    );
    client.shutdown().await;
}

#[tokio::test]
async fn folding_ranges_cover_multi_line_blocks() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        [[Request {
          0.6  "Fähre" "𝄞" Island
          0.4  Island
        }]]
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [block] = ws.ranges(MAIN);
    let ranges = client
        .request(
            "textDocument/foldingRange",
            json!({"textDocument": {"uri": ws.uri(MAIN)}}),
        )
        .await;
    let ranges = ranges.as_array().unwrap();
    assert!(
        ranges
            .iter()
            .any(|r| r["startLine"] == block["start"]["line"]
                && r["endLine"] == block["end"]["line"]
                && r["kind"] == "region"),
        "{ranges:?}"
    );
    client.shutdown().await;
}

#[tokio::test]
async fn use_paths_are_links_to_the_used_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use [["lexicon.trellis"]]

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" Island
          0.4  Island
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [path] = ws.ranges(MAIN);
    let links = client
        .request(
            "textDocument/documentLink",
            json!({"textDocument": {"uri": ws.uri(MAIN)}}),
        )
        .await;
    assert_eq!(links.as_array().unwrap().len(), 1);
    assert_eq!(links[0]["target"], ws.uri(LEXICON));
    assert_eq!(links[0]["range"], path);
    client.shutdown().await;
}

#[tokio::test]
async fn highlights_mark_every_occurrence_in_the_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(
        &mut client,
        r#"
        === kiosk.trellis ===
        grammar fähre
        start Request
        use "lexicon.trellis"

        ## What a passenger asks for.
        Request {
          0.6  "Fähre" "𝄞" [[$0Island]]
          0.4  [[Island]]
        }
        === lexicon.trellis ===
        Island { "tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let found = client
        .request("textDocument/documentHighlight", ws.at_cursor())
        .await;
    let found = found.as_array().unwrap();
    let highlights = sorted_locations(
        found
            .iter()
            .map(|h| json!({"uri": ws.uri(MAIN), "range": h["range"]})),
    );
    assert_eq!(highlights, ws.locations());
    // DocumentHighlightKind.Read = 2 (LSP 3.17): both are uses.
    assert!(found.iter().all(|h| h["kind"] == 2));
    client.shutdown().await;
}

#[tokio::test]
async fn a_leaky_grammar_gets_the_engines_leaky_warning() {
    let mut client = TestClient::start();
    client.initialize().await;
    // S → S S (0.6) | "a" (0.4): the termination probability q solves
    // q = 0.4 + 0.6 q², whose least root is 2/3 (a supercritical branching
    // process; T. E. Harris, "The Theory of Branching Processes", 1963), so
    // 1/3 of the mass leaks. `leaky` is a warning by default
    // (DiagnosticSeverity.Warning = 2).
    let ws = client
        .open_fixture(
            r#"
            === leaky.trellis ===
            start S
                  ^ warning leaky
            S {
              0.6 S S
              0.4 "a"
            }
            "#,
        )
        .await;
    let published = client.check_diagnostics(&ws, "leaky.trellis").await;
    let message = published["diagnostics"][0]["message"].as_str().unwrap();
    assert!(
        message.contains("0.333") || message.contains("1/3"),
        "{message}"
    );
    client.shutdown().await;
}
