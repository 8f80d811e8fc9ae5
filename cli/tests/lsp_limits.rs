//! The limits of the editor's parses, against the real `trellis lsp`
//! process over standard input and output: `[editor]` settings in
//! trellis.toml lower and raise them, and `$/cancelRequest` stops a long
//! parse in the middle (the server logs when the work has stopped). No
//! clocks: every wait is for a message.

use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Write};
use std::path::Path;
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc;

/// `S → S S (0.4) | "a" (0.6)`: n words have Catalan(n − 1) trees, so
/// counting them over a long sentence takes long.
const AMBIGUOUS: &str = "start S\nS { 0.4 S S | 0.6 \"a\" }\n";

/// `RequestCancelled` (LSP 3.17, "LSPErrorCodes").
const REQUEST_CANCELLED: i64 = -32800;
/// `InvalidParams` (JSON-RPC 2.0, section 5.1).
const INVALID_PARAMS: i64 = -32602;

struct Server {
    child: Child,
    stdin: ChildStdin,
    messages: mpsc::Receiver<Value>,
    next_id: i64,
}

fn read_message(reader: &mut impl BufRead) -> Option<Value> {
    let mut length = None;
    loop {
        let mut line = String::new();
        if reader.read_line(&mut line).ok()? == 0 {
            return None;
        }
        let line = line.trim_end();
        if line.is_empty() {
            break;
        }
        if let Some(n) = line.strip_prefix("Content-Length:") {
            length = n.trim().parse::<usize>().ok();
        }
    }
    let mut body = vec![0u8; length?];
    reader.read_exact(&mut body).ok()?;
    serde_json::from_slice(&body).ok()
}

impl Server {
    /// `trellis lsp` in `dir`, initialized, with `text` open as `g.trellis`.
    fn start(dir: &Path, text: &str) -> (Server, String) {
        let mut child = Command::new(env!("CARGO_BIN_EXE_trellis"))
            .arg("lsp")
            .current_dir(dir)
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .expect("trellis lsp starts");
        let stdin = child.stdin.take().unwrap();
        let mut stdout = BufReader::new(child.stdout.take().unwrap());
        let (tx, messages) = mpsc::channel();
        std::thread::spawn(move || {
            while let Some(message) = read_message(&mut stdout) {
                if tx.send(message).is_err() {
                    break;
                }
            }
        });
        let mut server = Server {
            child,
            stdin,
            messages,
            next_id: 0,
        };
        let root = format!("file://{}", dir.display());
        server.call(
            "initialize",
            json!({"processId": null, "rootUri": root, "capabilities": {}}),
        );
        server.notify("initialized", json!({}));
        let uri = format!("file://{}", dir.join("g.trellis").display());
        server.notify(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": uri, "languageId": "trellis", "version": 1, "text": text}}),
        );
        (server, uri)
    }

    fn send(&mut self, message: Value) {
        let body = message.to_string();
        write!(self.stdin, "Content-Length: {}\r\n\r\n{body}", body.len()).unwrap();
        self.stdin.flush().unwrap();
    }

    fn notify(&mut self, method: &str, params: Value) {
        self.send(json!({"jsonrpc": "2.0", "method": method, "params": params}));
    }

    fn request(&mut self, method: &str, params: Value) -> i64 {
        self.next_id += 1;
        let id = self.next_id;
        self.send(json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}));
        id
    }

    /// The next message `pred` accepts; requests from the server are
    /// answered with `null` on the way.
    fn wait_for(&mut self, mut pred: impl FnMut(&Value) -> bool) -> Value {
        loop {
            let message = self.messages.recv().expect("the server is still running");
            if pred(&message) {
                return message;
            }
            if message.get("method").is_some() && message.get("id").is_some() {
                let id = message["id"].clone();
                self.send(json!({"jsonrpc": "2.0", "id": id, "result": null}));
            }
        }
    }

    fn call(&mut self, method: &str, params: Value) -> Value {
        let id = self.request(method, params);
        self.wait_for(|m| m["id"] == id && m.get("method").is_none())
    }

    fn parse(&mut self, uri: &str, sentence: &str, kbest: usize) -> Value {
        self.call(
            "workspace/executeCommand",
            json!({"command": "trellis.parse",
                   "arguments": [{"uri": uri, "sentence": sentence, "kbest": kbest}]}),
        )
    }

    fn stop(mut self) {
        self.call("shutdown", Value::Null);
        self.notify("exit", Value::Null);
        let status = self.child.wait().unwrap();
        assert!(status.success(), "{status}");
    }
}

fn project(toml: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("trellis.toml"), toml).unwrap();
    std::fs::write(dir.path().join("g.trellis"), AMBIGUOUS).unwrap();
    dir
}

fn words(n: usize) -> String {
    vec!["a"; n].join(" ")
}

#[test]
fn editor_settings_lower_and_raise_the_parse_limits() {
    // Lowered: 1 MiB of chart and at most 3 trees.
    let dir = project("[editor]\nparse-chart-mib = 1\nparse-max-kbest = 3\n");
    let (mut server, uri) = Server::start(dir.path(), AMBIGUOUS);
    let response = server.parse(&uri, &words(300), 1);
    let result = &response["result"]["results"][0];
    assert_eq!(result["parsed"], false, "{response}");
    assert!(result["sentenceProbability"].is_null(), "{response}");
    let error = result["error"].as_str().unwrap();
    assert!(
        error.contains("raise `parse-chart-mib` (now 1) in the `[editor]` section of trellis.toml"),
        "{error}"
    );
    let response = server.parse(&uri, "a a a", 4);
    assert_eq!(response["error"]["code"], INVALID_PARAMS, "{response}");
    let message = response["error"]["message"].as_str().unwrap();
    assert!(message.contains("`parse-max-kbest` = 3"), "{message}");
    // Three trees are allowed.
    let response = server.parse(&uri, "a a a", 3);
    assert_eq!(
        response["result"]["results"][0]["kbest"]
            .as_array()
            .unwrap()
            .len(),
        2
    );
    server.stop();

    // Raised: 200 trees, above the default of 100, and the long sentence.
    let dir = project("[editor]\nparse-chart-mib = 2048\nparse-max-kbest = 200\n");
    let (mut server, uri) = Server::start(dir.path(), AMBIGUOUS);
    let response = server.parse(&uri, &words(300), 1);
    assert_eq!(
        response["result"]["results"][0]["parsed"], true,
        "{response}"
    );
    // Catalan(6) = 132 trees for 7 words, all listed.
    let response = server.parse(&uri, &words(7), 200);
    let trees = response["result"]["results"][0]["kbest"]
        .as_array()
        .unwrap();
    assert_eq!(trees.len(), 132, "{response}");
    server.stop();

    // The default refuses 200 trees.
    let dir = project("");
    let (mut server, uri) = Server::start(dir.path(), AMBIGUOUS);
    let response = server.parse(&uri, &words(7), 200);
    assert_eq!(response["error"]["code"], INVALID_PARAMS, "{response}");
    server.stop();
}

#[test]
fn a_cancelled_request_stops_its_parse_in_the_middle() {
    // A day's budget: only the cancellation can stop this parse, whose
    // exact tree count alone takes minutes (1,000 words: Catalan(999)).
    let dir = project("[editor]\nparse-seconds = 86400\n");
    let (mut server, uri) = Server::start(dir.path(), AMBIGUOUS);
    let id = server.request(
        "workspace/executeCommand",
        json!({"command": "trellis.parse", "arguments": [{"uri": uri, "sentence": words(1000)}]}),
    );
    let is_log = |m: &Value, text: &str| {
        m["method"] == "window/logMessage"
            && m["params"]["message"]
                .as_str()
                .is_some_and(|s| s.starts_with(text))
    };
    server.wait_for(|m| is_log(m, "trellis.parse: parsing 1 sentence"));
    server.notify("$/cancelRequest", json!({"id": id}));
    let mut answered = false;
    let mut stopped = false;
    while !(answered && stopped) {
        let m = server.wait_for(|m| m["id"] == id || is_log(m, "trellis.parse: stopped"));
        if m["id"] == id {
            assert_eq!(m["error"]["code"], REQUEST_CANCELLED, "{m}");
            answered = true;
        } else {
            assert_eq!(
                m["params"]["message"],
                "trellis.parse: stopped after 0 of 1 sentences: the request was cancelled"
            );
            stopped = true;
        }
    }
    // The server still parses.
    let response = server.parse(&uri, "a a", 1);
    assert_eq!(
        response["result"]["results"][0]["parsed"], true,
        "{response}"
    );
    server.stop();
}
