//! The editor features over the protocol, each checked for the LSP shape of
//! its answer and for positions in UTF-16 code units.
//!
//! Every test states the smallest grammar that shows its feature as a
//! fixture (`trellis_test_support`), opened in the server: `$0` is where a
//! request is made, `[[…]]` marks an expected range (or, empty, another
//! place a request is made at), named by destructuring the ranges of a
//! file in the order they are written. A fixture has two files only where
//! the feature crosses files (`kiosk.trellis` uses `lexicon.trellis`);
//! otherwise it is the one file `grammar.trellis`. Where a test is about
//! positions, a terminal with `ä` (one UTF-16 unit, two bytes) and one
//! with `𝄞` (a surrogate pair of two units, four bytes) stand before what
//! it points at, so that UTF-16, character and byte columns all differ.

mod common;

use common::fixture::range;
use common::{sorted_locations, FixtureWorkspace, TestClient};
use serde_json::{json, Value};
use trellis_test_support::fixture::DEFAULT_PATH;

/// The file that uses another, in the fixtures that cross files.
const MAIN: &str = "kiosk.trellis";
/// The file `MAIN` uses.
const LEXICON: &str = "lexicon.trellis";

/// A started server with every file of the fixture open, each published
/// with exactly its annotations (none, in most tests).
async fn open(fixture: &str) -> (TestClient, FixtureWorkspace) {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = open_in(&mut client, fixture).await;
    (client, ws)
}

/// A request whose only parameter is the document at `uri`.
async fn on_file(client: &mut TestClient, method: &str, uri: String) -> Value {
    client
        .request(method, json!({"textDocument": {"uri": uri}}))
        .await
}

/// Opens the fixture's files in `client` and checks what is published for
/// each against its annotations.
async fn open_in(client: &mut TestClient, fixture: &str) -> FixtureWorkspace {
    let ws = client.open_fixture(fixture).await;
    for file in &ws.fixture.files {
        let path = file.path.to_str().expect("a UTF-8 path");
        client.check_diagnostics(&ws, path).await;
    }
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
    let (mut client, ws) = open(
        r#"
        start S
        [[]]
        S { "Fähre" "𝄞" [[Is$0land]] }
        Island { "tolsey" }
        "#,
    )
    .await;
    let [blank, island] = ws.ranges(DEFAULT_PATH);
    // Before `Island`: `S { ` (4 of each), `"Fähre"` (7 characters, 8
    // bytes, 7 UTF-16 units), a space, `"𝄞"` (3 characters, 6 bytes, 4
    // units) and a space: it starts at byte 20, character 16, unit 17.
    assert_eq!(ws.file(DEFAULT_PATH).line(2).find("Island"), Some(20));
    assert_eq!(island["start"], json!({"line": 2, "character": 17}));
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
        .request("textDocument/hover", ws.at(DEFAULT_PATH, &blank["start"]))
        .await;
    assert_eq!(nothing, Value::Null);
    client.shutdown().await;
}

#[tokio::test]
async fn hover_on_a_rule_shows_the_engines_expected_uses() {
    let (mut client, ws) = open(
        r#"
        start Request
        Re[[]]quest { 0$0.6 "ticket" | 0.4 "pass" }
        "#,
    )
    .await;
    let [request] = ws.places(DEFAULT_PATH);
    // `Request` is used exactly once per sentence and picks its first rule
    // with probability 0.6, so that rule is used 0.6 times per sentence
    // (linearity of expectation).
    let hover = client.request("textDocument/hover", ws.at_cursor()).await;
    let text = hover["contents"]["value"].as_str().unwrap();
    assert!(text.contains("expected uses per sentence: 0.6"), "{text}");
    // A grammar without recursion ends with probability 1.
    let hover = client
        .request("textDocument/hover", ws.at(DEFAULT_PATH, &request))
        .await;
    let text = hover["contents"]["value"].as_str().unwrap();
    assert!(text.contains("termination probability: 1"), "{text}");
    client.shutdown().await;
}

#[tokio::test]
async fn definition_jumps_into_the_used_file() {
    let (mut client, ws) = open(
        r#"
        === kiosk.trellis ===
        start S
        use "lexicon.trellis"
        S { $0Island }
        === lexicon.trellis ===
        [[Island]] { "tolsey" }
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
    let (mut client, ws) = open(
        r#"
        === kiosk.trellis ===
        start S
        use "lexicon.trellis"
        S { [[Island]] [[Island]] }
        === lexicon.trellis ===
        [[Is$0land]] { "tolsey" }
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
    let (mut client, ws) = open(
        r#"
        === kiosk.trellis ===
        start S
        use "lexicon.trellis"
        S { "F[[]]ähre" [[$0Island]] [[Island]] }
        === lexicon.trellis ===
        [[Island]] { "tolsey" }
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
    let (mut client, ws) = open(
        r#"
        === kiosk.trellis ===
        start Request
        use "lexicon.trellis"
        Request { Island | "ticket" }
        === lexicon.trellis ===
        Island { "tolsey" }
        "#,
    )
    .await;
    let symbols = on_file(&mut client, "textDocument/documentSymbol", ws.uri(MAIN)).await;
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
    let (mut client, ws) = open(
        r#"
        start S
        S { Island | [[Isl$0]] }
                       ^^^ error undefined
        Island { "tolsey" }
        "#,
    )
    .await;
    let [prefix] = ws.ranges(DEFAULT_PATH);
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
    let ws = open_in(
        &mut client,
        r#"
        [[start]] [[S]]
        S { [[0.6]] [["Fähre"]] [["𝄞"]] [[Island]] | 0.4 "pass" }
        Island { "tolsey" }
        "#,
    )
    .await;
    let tokens = on_file(
        &mut client,
        "textDocument/semanticTokens/full",
        ws.uri(DEFAULT_PATH),
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
    let [keyword, start, weight, faehre, clef, island] = ws.ranges(DEFAULT_PATH);
    let expected = [
        (keyword, "keyword"),
        (start, "type"),
        (weight, "number"),
        // "Fähre" with quotes: 7 UTF-16 units; "𝄞" with quotes: 4.
        (faehre, "string"),
        (clef, "string"),
        // After both: at UTF-16 column 4 + 4 + 8 + 5 = 21 (character 20).
        (island, "type"),
    ];
    for (range, kind_name) in &expected {
        let (token, length) = kind(range);
        assert_eq!(token, Some((length, *kind_name)), "at {range}");
    }
    assert_eq!(kind(&expected[3].0).1, 7);
    assert_eq!(kind(&expected[4].0).1, 4);
    assert_eq!(expected[5].0["start"]["character"], 21);
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

/// The diagnostics last published for `uri` (already received).
fn last_published(client: &TestClient, uri: &str) -> Value {
    let published = client.published(uri);
    let last = published.last().expect("diagnostics published");
    last["diagnostics"].clone()
}

/// The code actions offered for `diagnostic`, asked for over its range.
async fn actions_for(client: &mut TestClient, uri: &str, diagnostic: Value) -> Vec<Value> {
    let actions = client
        .request(
            "textDocument/codeAction",
            json!({"textDocument": {"uri": uri}, "range": diagnostic["range"],
                   "context": {"diagnostics": [diagnostic]}}),
        )
        .await;
    actions.as_array().unwrap().clone()
}

/// Applies `fix`'s edits to `text`, sends the result as version 2 and
/// checks that the server publishes no diagnostic for it; the fixed text.
async fn apply_fix(client: &mut TestClient, uri: &str, text: &str, fix: &Value) -> String {
    let fixed = apply(text, fix["edit"]["changes"][uri].as_array().unwrap());
    client.change(uri, 2, &fixed).await;
    let after = client.diagnostics_for_version(uri, 2).await;
    assert_eq!(after["diagnostics"], json!([]), "{fixed}");
    fixed
}

#[tokio::test]
async fn the_renormalize_quick_fix_makes_the_block_sum_to_one() {
    let (mut client, ws) = open(
        r#"
        start Count
        Count {
        ^^^^^ error sum-not-one
          1/2 "one"
          1/3 "two"
        }
        "#,
    )
    .await;
    let (uri, text) = (ws.uri(DEFAULT_PATH), ws.text(DEFAULT_PATH));
    let diagnostic = last_published(&client, &uri)[0].clone();
    let actions = actions_for(&mut client, &uri, diagnostic).await;
    assert!(!actions.is_empty());
    for action in &actions {
        assert_eq!(action["diagnostics"][0]["code"], "sum-not-one", "{action}");
    }
    let fix = actions
        .iter()
        .find(|a| a["kind"] == "quickfix" && a["title"].as_str().unwrap().contains("ormali"))
        .unwrap_or_else(|| panic!("no renormalize fix in {actions:?}"));
    let fixed = apply_fix(&mut client, &uri, text, fix).await;
    // 1/2 : 1/3 renormalised is 3/5 : 2/5.
    assert!(fixed.contains("3/5") && fixed.contains("2/5"), "{fixed}");
    client.shutdown().await;
}

#[tokio::test]
async fn a_misspelt_name_comes_with_its_replacement_as_the_preferred_fix() {
    let (mut client, ws) = open(
        r#"
        start Log
        Log { Obsrvation }
        ^^^ error unproductive
              ^^^^^^^^^^ error undefined
        Observation { "calm" }
        ^^^^^^^^^^^ warning unreachable
        "#,
    )
    .await;
    let (uri, text) = (ws.uri(DEFAULT_PATH), ws.text(DEFAULT_PATH));
    let diagnostic = last_published(&client, &uri)
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["code"] == "undefined")
        .cloned()
        .unwrap();
    let actions = actions_for(&mut client, &uri, diagnostic).await;
    let preferred: Vec<_> = actions
        .iter()
        .filter(|a| a["isPreferred"] == true)
        .collect();
    assert_eq!(preferred.len(), 1, "{actions:?}");
    let fix = preferred[0];
    assert_eq!(fix["title"], "Replace `Obsrvation` with `Observation`");
    assert_eq!(fix["kind"], "quickfix");
    assert_eq!(fix["diagnostics"][0]["code"], "undefined");
    let fixed = apply_fix(&mut client, &uri, text, fix).await;
    assert!(fixed.contains("Log { Observation }"), "{fixed}");
    client.shutdown().await;
}

#[tokio::test]
async fn inlay_hints_show_the_share_of_unweighted_alternatives() {
    let (mut client, ws) = open(
        r#"
        start Kind
        Kind { [[]]"tolsey" | "oxna" | "quillan" }
        "#,
    )
    .await;
    let [first] = ws.places(DEFAULT_PATH);
    let file = ws.file(DEFAULT_PATH);
    let whole = range(file.utf16_range(&(0..file.text.len())));
    let hints = client
        .request(
            "textDocument/inlayHint",
            json!({"textDocument": {"uri": ws.uri(DEFAULT_PATH)}, "range": whole}),
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
    // `start` on the second line, so that lenses on the first line fail.
    let (mut client, ws) = open(
        r#"
        S { "tolsey" }
        [[]]start S
        "#,
    )
    .await;
    let [start] = ws.places(DEFAULT_PATH);
    let lenses = on_file(&mut client, "textDocument/codeLens", ws.uri(DEFAULT_PATH)).await;
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
    let (mut client, ws) = open(
        r#"
        start S
        [[S {
          "tolsey"
        }]]
        "#,
    )
    .await;
    let [block] = ws.ranges(DEFAULT_PATH);
    let ranges = on_file(
        &mut client,
        "textDocument/foldingRange",
        ws.uri(DEFAULT_PATH),
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
    let (mut client, ws) = open(
        r#"
        === kiosk.trellis ===
        start S
        use [["lexicon.trellis"]]
        S { Island }
        === lexicon.trellis ===
        Island { "tolsey" }
        "#,
    )
    .await;
    let [path] = ws.ranges(MAIN);
    let links = on_file(&mut client, "textDocument/documentLink", ws.uri(MAIN)).await;
    assert_eq!(links.as_array().unwrap().len(), 1);
    assert_eq!(links[0]["target"], ws.uri(LEXICON));
    assert_eq!(links[0]["range"], path);
    client.shutdown().await;
}

#[tokio::test]
async fn highlights_mark_every_occurrence_in_the_file() {
    let (mut client, ws) = open(
        r#"
        start S
        S { [[$0Island]] [[Island]] }
        [[Island]] { "tolsey" }
        "#,
    )
    .await;
    let [first, second, declaration] = ws.ranges(DEFAULT_PATH);
    let found = client
        .request("textDocument/documentHighlight", ws.at_cursor())
        .await;
    let found = found.as_array().unwrap();
    let highlights = sorted_locations(
        found
            .iter()
            .map(|h| json!({"uri": ws.uri(DEFAULT_PATH), "range": h["range"]})),
    );
    assert_eq!(highlights, ws.locations());
    // DocumentHighlightKind (LSP 3.17): the two uses are Read = 2, the
    // block that defines `Island` is Write = 3.
    let kind = |range: &Value| {
        let h = found.iter().find(|h| h["range"] == *range);
        h.map(|h| h["kind"].clone())
    };
    assert_eq!(kind(&first), Some(json!(2)));
    assert_eq!(kind(&second), Some(json!(2)));
    assert_eq!(kind(&declaration), Some(json!(3)));
    client.shutdown().await;
}

#[tokio::test]
async fn a_leaky_grammar_gets_the_engines_leaky_warning() {
    // S → S S (0.6) | "a" (0.4): the termination probability q solves
    // q = 0.4 + 0.6 q², whose least root is 2/3 (a supercritical branching
    // process; T. E. Harris, "The Theory of Branching Processes", 1963), so
    // 1/3 of the mass leaks. `leaky` is a warning by default
    // (DiagnosticSeverity.Warning = 2).
    let (client, ws) = open(
        r#"
        start S
              ^ warning leaky
        S { 0.6 S S | 0.4 "a" }
        "#,
    )
    .await;
    let diagnostics = last_published(&client, &ws.uri(DEFAULT_PATH));
    let message = diagnostics[0]["message"].as_str().unwrap();
    assert!(
        message.contains("0.333") || message.contains("1/3"),
        "{message}"
    );
    client.shutdown().await;
}
