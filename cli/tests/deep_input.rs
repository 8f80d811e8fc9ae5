//! Input nested deeper than any walk may go is a located error, never a
//! crash: the command line and the real language server process both
//! survive an expected tree nested tens of thousands of brackets deep.

mod common;

use common::trellis;
use grammar_lang::tree::MAX_TREE_DEPTH;
use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::process::{Child, ChildStdin, ChildStdout, Command, Stdio};

/// A grammar whose test block expects a tree nested `depth` brackets deep,
/// on line 8.
fn deep_test_tree(depth: usize) -> String {
    format!(
        "grammar harbour_log\nstart Entry\n\nEntry {{\n  0.5  Entry \"calm\"\n  0.5  \"calm\"\n}}\n\
         test \"a deep entry\" {{\n  accept \"calm\" as {}\"calm\"{}\n}}\n",
        "(Entry ".repeat(depth),
        ")".repeat(depth)
    )
}

/// The column (1-based, in characters) of the bracket that opens level
/// `MAX_TREE_DEPTH + 1` on the tree's line.
fn first_too_deep_column() -> usize {
    let prefix = "  accept \"calm\" as ";
    prefix.len() + MAX_TREE_DEPTH * "(Entry ".len() + 1
}

#[test]
fn check_reports_a_tree_nested_thirty_thousand_deep_at_its_first_bracket_too_deep() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("log.trellis"), deep_test_tree(30_000)).unwrap();
    let run = trellis(dir.path(), &["check", "--format", "json", "log.trellis"]);
    assert_eq!(run.code, 1, "stderr: {}", run.stderr);
    let report: Value = serde_json::from_str(&run.stdout).unwrap();
    let found = report.to_string();
    assert!(
        found.contains(&format!("nests deeper than {MAX_TREE_DEPTH} levels")),
        "{found}"
    );
    let diagnostics = report["diagnostics"]
        .as_array()
        .expect("a list of diagnostics");
    assert_eq!(diagnostics.len(), 1, "{found}");
    assert_eq!(diagnostics[0]["code"], "syntax");
    assert_eq!(diagnostics[0]["line"], 9);
    assert_eq!(diagnostics[0]["column"], first_too_deep_column());
}

#[test]
fn a_tree_exactly_as_deep_as_allowed_is_read_and_judged() {
    let dir = tempfile::tempdir().unwrap();
    // A chain of unary rules Level0 → Level1 → … → Level999 → "calm": the
    // one tree of "calm" nests exactly MAX_TREE_DEPTH brackets deep.
    let depth = MAX_TREE_DEPTH;
    let mut text = String::from("grammar harbour_log\nstart Level0\n");
    for level in 0..depth - 1 {
        text.push_str(&format!("Level{level} {{ Level{} }}\n", level + 1));
    }
    text.push_str(&format!("Level{} {{ \"calm\" }}\n", depth - 1));
    let tree = format!(
        "{}\"calm\"{}",
        (0..depth)
            .map(|level| format!("(Level{level} "))
            .collect::<String>(),
        ")".repeat(depth)
    );
    text.push_str(&format!(
        "test \"a deep entry\" {{\n  accept \"calm\" as {tree}\n}}\n"
    ));
    std::fs::write(dir.path().join("log.trellis"), text).unwrap();
    let check = trellis(dir.path(), &["check", "log.trellis"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    let test = trellis(dir.path(), &["test", "log.trellis"]);
    assert_eq!(test.code, 0, "{}{}", test.stdout, test.stderr);
    assert!(test.stdout.contains("1 passed"), "{}", test.stdout);
}

/// A client of the real `trellis lsp` process, speaking the LSP base
/// protocol (`Content-Length` framing) over its standard input and output.
struct Server {
    child: Child,
    input: ChildStdin,
    output: BufReader<ChildStdout>,
}

impl Server {
    fn start() -> Server {
        let mut child = Command::new(env!("CARGO_BIN_EXE_trellis"))
            .arg("lsp")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .expect("the trellis binary runs");
        let input = child.stdin.take().expect("piped stdin");
        let output = BufReader::new(child.stdout.take().expect("piped stdout"));
        Server {
            child,
            input,
            output,
        }
    }

    fn send(&mut self, message: Value) {
        let body = message.to_string();
        write!(self.input, "Content-Length: {}\r\n\r\n{body}", body.len())
            .and_then(|()| self.input.flush())
            .expect("the server reads its input");
    }

    /// The next message, or `None` once the server has closed its output.
    fn receive(&mut self) -> Option<Value> {
        let mut length = None;
        loop {
            let mut line = String::new();
            if self.output.read_line(&mut line).ok()? == 0 {
                return None;
            }
            let line = line.trim_end();
            if line.is_empty() {
                break;
            }
            if let Some(n) = line.strip_prefix("Content-Length: ") {
                length = n.parse::<usize>().ok();
            }
        }
        let mut body = vec![0; length?];
        self.output.read_exact(&mut body).ok()?;
        serde_json::from_slice(&body).ok()
    }

    /// Waits for the first message that satisfies `wanted`.
    fn wait_for(&mut self, what: &str, wanted: impl Fn(&Value) -> bool) -> Value {
        loop {
            match self.receive() {
                Some(message) if wanted(&message) => return message,
                Some(_) => {}
                None => panic!(
                    "the server closed its output (status {:?}) while we waited for {what}",
                    self.child.wait().ok()
                ),
            }
        }
    }
}

#[test]
fn the_language_server_process_reports_a_deep_test_tree_and_still_answers_hover() {
    let mut server = Server::start();
    let uri = "file:///harbour/log.trellis";
    server.send(json!({"jsonrpc": "2.0", "id": 1, "method": "initialize",
        "params": {"capabilities": {}}}));
    server.wait_for("the answer to initialize", |m| m["id"] == 1);
    server.send(json!({"jsonrpc": "2.0", "method": "initialized", "params": {}}));
    server.send(
        json!({"jsonrpc": "2.0", "method": "textDocument/didOpen", "params": {
        "textDocument": {"uri": uri, "languageId": "trellis", "version": 1,
                         "text": deep_test_tree(8_000)}}}),
    );
    let published = server.wait_for("the file's diagnostics", |m| {
        m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == uri
    });
    let diagnostics = published["params"]["diagnostics"]
        .as_array()
        .expect("a list of diagnostics");
    assert_eq!(diagnostics.len(), 1, "{published}");
    let deep = &diagnostics[0];
    assert_eq!(deep["code"], "syntax");
    assert!(
        deep["message"]
            .as_str()
            .is_some_and(|m| m.contains(&format!("deeper than {MAX_TREE_DEPTH} levels"))),
        "{deep}"
    );
    // LSP positions are 0-based; the tree is ASCII, so UTF-16 units are bytes.
    assert_eq!(deep["range"]["start"]["line"], 8);
    assert_eq!(
        deep["range"]["start"]["character"],
        first_too_deep_column() - 1
    );

    // Still serving: hover over `Entry` in its block header (line 3).
    server.send(
        json!({"jsonrpc": "2.0", "id": 2, "method": "textDocument/hover", "params": {
        "textDocument": {"uri": uri}, "position": {"line": 3, "character": 2}}}),
    );
    let hover = server.wait_for("the answer to hover", |m| m["id"] == 2);
    assert!(
        hover["result"]["contents"]["value"]
            .as_str()
            .is_some_and(|v| v.contains("Entry")),
        "{hover}"
    );

    server.send(json!({"jsonrpc": "2.0", "id": 3, "method": "shutdown"}));
    server.wait_for("the answer to shutdown", |m| m["id"] == 3);
    server.send(json!({"jsonrpc": "2.0", "method": "exit"}));
    let status = server.child.wait().expect("the server exits");
    assert_eq!(status.code(), Some(0));
}
