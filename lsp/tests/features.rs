//! The editor features over the protocol, each checked for the LSP shape of
//! its answer and for positions in UTF-16 code units.

mod common;

use common::{codes, file_uri, TestClient};
use serde_json::{json, Value};
use std::fs;
use std::path::PathBuf;

/// A grammar of two files in a temporary directory, both open.
struct Workspace {
    _dir: tempfile::TempDir,
    main: String,
    lexicon: String,
    main_text: String,
    lexicon_text: String,
}

const MAIN_TEXT: &str = "grammar fähre
start Request
use \"lexicon.trellis\"

## What a passenger asks for.
Request {
  0.6  \"Fähre\" \"𝄞\" Island
  0.4  Island
}
";

const LEXICON_TEXT: &str = "Island { \"tolsey\" | \"oxna\" | \"quillan\" }
";

async fn workspace(client: &mut TestClient) -> Workspace {
    let dir = tempfile::tempdir().unwrap();
    let main: PathBuf = dir.path().join("kiosk.trellis");
    let lexicon: PathBuf = dir.path().join("lexicon.trellis");
    fs::write(&main, MAIN_TEXT).unwrap();
    fs::write(&lexicon, LEXICON_TEXT).unwrap();
    let ws = Workspace {
        main: file_uri(&main),
        lexicon: file_uri(&lexicon),
        main_text: MAIN_TEXT.to_string(),
        lexicon_text: LEXICON_TEXT.to_string(),
        _dir: dir,
    };
    client.open(&ws.main, 1, &ws.main_text).await;
    client.open(&ws.lexicon, 1, &ws.lexicon_text).await;
    assert_eq!(
        codes(&client.diagnostics_for_version(&ws.main, 1).await),
        Vec::<String>::new()
    );
    ws
}

fn at(uri: &str, line: u32, character: u32) -> Value {
    json!({"textDocument": {"uri": uri}, "position": {"line": line, "character": character}})
}

/// Line 6 of MAIN_TEXT is `  0.6  "Fähre" "𝄞" Island`: `Island` starts at
/// byte 23, character 19, UTF-16 unit 20 ("ä" is two bytes and one unit;
/// "𝄞" is four bytes and a surrogate pair of two units).
const ISLAND_LINE: u32 = 6;
const ISLAND_COL: u32 = 20;

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
    let ws = workspace(&mut client).await;
    assert_eq!(
        MAIN_TEXT
            .lines()
            .nth(ISLAND_LINE as usize)
            .unwrap()
            .find("Island"),
        Some(23)
    );
    let hover = client
        .request(
            "textDocument/hover",
            at(&ws.main, ISLAND_LINE, ISLAND_COL + 2),
        )
        .await;
    assert_eq!(hover["contents"]["kind"], "markdown");
    assert!(
        hover["contents"]["value"]
            .as_str()
            .unwrap()
            .contains("Island"),
        "{hover}"
    );
    assert_eq!(
        hover["range"],
        json!({"start": {"line": ISLAND_LINE, "character": ISLAND_COL},
               "end": {"line": ISLAND_LINE, "character": ISLAND_COL + 6}})
    );
    // Nothing to say on a blank line.
    let nothing = client
        .request("textDocument/hover", at(&ws.main, 3, 0))
        .await;
    assert_eq!(nothing, Value::Null);
    client.shutdown().await;
}

#[tokio::test]
async fn hover_on_a_rule_shows_the_engines_expected_uses() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    // `Request` is used exactly once per sentence and picks its first rule
    // with probability 0.6, so that rule is used 0.6 times per sentence
    // (linearity of expectation).
    let hover = client
        .request("textDocument/hover", at(&ws.main, ISLAND_LINE, 3))
        .await;
    let text = hover["contents"]["value"].as_str().unwrap();
    assert!(text.contains("expected uses per sentence: 0.6"), "{text}");
    // A grammar without recursion ends with probability 1.
    let hover = client
        .request("textDocument/hover", at(&ws.main, 5, 2))
        .await;
    let text = hover["contents"]["value"].as_str().unwrap();
    assert!(text.contains("termination probability: 1"), "{text}");
    client.shutdown().await;
}

#[tokio::test]
async fn definition_jumps_into_the_used_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let found = client
        .request(
            "textDocument/definition",
            at(&ws.main, ISLAND_LINE, ISLAND_COL),
        )
        .await;
    assert_eq!(found["uri"], ws.lexicon);
    assert_eq!(
        found["range"],
        json!({"start": {"line": 0, "character": 0}, "end": {"line": 0, "character": 6}})
    );
    client.shutdown().await;
}

#[tokio::test]
async fn references_list_every_use_in_every_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let mut params = at(&ws.lexicon, 0, 2);
    params["context"] = json!({"includeDeclaration": true});
    let found = client
        .request("textDocument/references", params.clone())
        .await;
    let mut places: Vec<(String, u64, u64)> = found
        .as_array()
        .unwrap()
        .iter()
        .map(|l| {
            (
                l["uri"].as_str().unwrap().to_string(),
                l["range"]["start"]["line"].as_u64().unwrap(),
                l["range"]["start"]["character"].as_u64().unwrap(),
            )
        })
        .collect();
    places.sort();
    let mut expected = vec![
        (ws.main.clone(), 6, u64::from(ISLAND_COL)),
        (ws.main.clone(), 7, 7),
        (ws.lexicon.clone(), 0, 0),
    ];
    expected.sort();
    assert_eq!(places, expected);
    params["context"] = json!({"includeDeclaration": false});
    let found = client.request("textDocument/references", params).await;
    assert_eq!(found.as_array().unwrap().len(), 2);
    client.shutdown().await;
}

#[tokio::test]
async fn rename_is_prepared_on_names_refused_on_words_and_edits_every_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let range = client
        .request(
            "textDocument/prepareRename",
            at(&ws.main, ISLAND_LINE, ISLAND_COL),
        )
        .await;
    assert_eq!(range["start"]["character"], ISLAND_COL);
    assert_eq!(range["end"]["character"], ISLAND_COL + 6);
    // On the quoted word "Fähre": not a name.
    let refused = client
        .call("textDocument/prepareRename", at(&ws.main, ISLAND_LINE, 9))
        .await;
    assert!(
        refused["error"]["message"]
            .as_str()
            .unwrap()
            .contains("terminal"),
        "{refused}"
    );

    let mut params = at(&ws.main, ISLAND_LINE, ISLAND_COL);
    params["newName"] = json!("Harbour");
    let edit = client.request("textDocument/rename", params.clone()).await;
    let changes = edit["changes"].as_object().unwrap();
    assert_eq!(changes[&ws.main].as_array().unwrap().len(), 2);
    assert_eq!(changes[&ws.lexicon].as_array().unwrap().len(), 1);
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
    let ws = workspace(&mut client).await;
    let symbols = client
        .request(
            "textDocument/documentSymbol",
            json!({"textDocument": {"uri": ws.main}}),
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
    assert_eq!(found[0]["location"]["uri"], ws.lexicon);
    client.shutdown().await;
}

#[tokio::test]
async fn completion_offers_symbols_with_an_edit_over_the_typed_prefix() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let text = ws.main_text.replace("  0.4  Island\n", "  0.4  Isl\n");
    client.change(&ws.main, 2, &text).await;
    let list = client
        .request("textDocument/completion", at(&ws.main, 7, 10))
        .await;
    let item = list["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["label"] == "Island")
        .unwrap_or_else(|| panic!("no Island in {list}"))
        .clone();
    assert_eq!(
        item["textEdit"]["range"],
        json!({"start": {"line": 7, "character": 7}, "end": {"line": 7, "character": 10}})
    );
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
    let ws = workspace(&mut client).await;
    let tokens = client
        .request(
            "textDocument/semanticTokens/full",
            json!({"textDocument": {"uri": ws.main}}),
        )
        .await;
    let tokens = decode(tokens["data"].as_array().unwrap());
    let kind = |line: u64, start: u64| {
        tokens
            .iter()
            .find(|t| t.0 == line && t.1 == start)
            .map(|t| (t.2, legend[t.3 as usize].as_str()))
    };
    assert_eq!(kind(0, 0), Some((7, "keyword")));
    assert_eq!(kind(1, 6), Some((7, "type")));
    assert_eq!(kind(6, 2), Some((3, "number")));
    // "Fähre" with quotes: 7 UTF-16 units; "𝄞" with quotes: 4.
    assert_eq!(kind(6, 7), Some((7, "string")));
    assert_eq!(kind(6, 15), Some((4, "string")));
    assert_eq!(kind(6, u64::from(ISLAND_COL)), Some((6, "type")));
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
    let uri = "file:///grammars/count.trellis";
    let text = "start Count\nCount {\n  1/2 \"one\"\n  1/3 \"two\"\n}\n";
    client.open(uri, 1, text).await;
    let published = client.diagnostics(uri).await;
    assert_eq!(codes(&published), ["sum-not-one"]);
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
    let fixed = apply(text, fix["edit"]["changes"][uri].as_array().unwrap());
    // 1/2 : 1/3 renormalised is 3/5 : 2/5.
    assert!(fixed.contains("3/5") && fixed.contains("2/5"), "{fixed}");
    client.change(uri, 2, &fixed).await;
    let after = client.diagnostics_for_version(uri, 2).await;
    assert_eq!(after["diagnostics"], json!([]));
    client.shutdown().await;
}

#[tokio::test]
async fn inlay_hints_show_the_share_of_unweighted_alternatives() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let hints = client
        .request(
            "textDocument/inlayHint",
            json!({"textDocument": {"uri": ws.lexicon},
                   "range": {"start": {"line": 0, "character": 0}, "end": {"line": 1, "character": 0}}}),
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
    let first = &hints[0]["position"];
    assert_eq!(first, &json!({"line": 0, "character": 9}));
    client.shutdown().await;
}

#[tokio::test]
async fn code_lenses_above_start_parse_and_sample_through_the_commands() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let lenses = client
        .request(
            "textDocument/codeLens",
            json!({"textDocument": {"uri": ws.main}}),
        )
        .await;
    let lenses = lenses.as_array().unwrap();
    let commands: Vec<&str> = lenses
        .iter()
        .map(|l| l["command"]["command"].as_str().unwrap())
        .collect();
    assert_eq!(commands, ["trellis.parse", "trellis.sample"]);
    assert!(lenses.iter().all(|l| l["range"]["start"]["line"] == 1));
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
    let ws = workspace(&mut client).await;
    let ranges = client
        .request(
            "textDocument/foldingRange",
            json!({"textDocument": {"uri": ws.main}}),
        )
        .await;
    let ranges = ranges.as_array().unwrap();
    assert!(
        ranges
            .iter()
            .any(|r| r["startLine"] == 5 && r["endLine"] == 8 && r["kind"] == "region"),
        "{ranges:?}"
    );
    client.shutdown().await;
}

#[tokio::test]
async fn use_paths_are_links_to_the_used_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let links = client
        .request(
            "textDocument/documentLink",
            json!({"textDocument": {"uri": ws.main}}),
        )
        .await;
    assert_eq!(links.as_array().unwrap().len(), 1);
    assert_eq!(links[0]["target"], ws.lexicon);
    assert_eq!(
        links[0]["range"],
        json!({"start": {"line": 2, "character": 4}, "end": {"line": 2, "character": 21}})
    );
    client.shutdown().await;
}

#[tokio::test]
async fn highlights_mark_every_occurrence_in_the_file() {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = workspace(&mut client).await;
    let found = client
        .request(
            "textDocument/documentHighlight",
            at(&ws.main, ISLAND_LINE, ISLAND_COL),
        )
        .await;
    let mut lines: Vec<(u64, u64)> = found
        .as_array()
        .unwrap()
        .iter()
        .map(|h| {
            (
                h["range"]["start"]["line"].as_u64().unwrap(),
                h["range"]["start"]["character"].as_u64().unwrap(),
            )
        })
        .collect();
    lines.sort();
    assert_eq!(lines, [(6, u64::from(ISLAND_COL)), (7, 7)]);
    // DocumentHighlightKind.Read = 2 (LSP 3.17): both are uses.
    assert!(found.as_array().unwrap().iter().all(|h| h["kind"] == 2));
    client.shutdown().await;
}

#[tokio::test]
async fn a_leaky_grammar_gets_the_engines_leaky_warning() {
    let mut client = TestClient::start();
    client.initialize().await;
    // S → S S (0.6) | "a" (0.4): the termination probability q solves
    // q = 0.4 + 0.6 q², whose least root is 2/3 (a supercritical branching
    // process; T. E. Harris, "The Theory of Branching Processes", 1963), so
    // 1/3 of the mass leaks.
    let uri = "file:///grammars/leaky.trellis";
    client
        .open(uri, 1, "start S\nS {\n  0.6 S S\n  0.4 \"a\"\n}\n")
        .await;
    let published = client.diagnostics(uri).await;
    assert_eq!(codes(&published), ["leaky"]);
    let d = &published["diagnostics"][0];
    // DiagnosticSeverity.Warning = 2: `leaky` is a warning by default.
    assert_eq!(d["severity"], 2);
    let message = d["message"].as_str().unwrap();
    assert!(
        message.contains("0.333") || message.contains("1/3"),
        "{message}"
    );
    client.shutdown().await;
}
