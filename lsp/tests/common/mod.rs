//! A test client that drives the server through real JSON-RPC bytes over an
//! in-memory duplex stream, exactly as an editor would over stdio.

#![allow(dead_code)]

use serde_json::{json, Value};
use std::collections::VecDeque;
use std::time::Duration;
use tokio::io::{AsyncBufReadExt, AsyncReadExt, AsyncWriteExt, BufReader, DuplexStream};
use tokio::sync::mpsc;
use trellis_lsp::{serve, Options};

pub mod fixture;
#[allow(unused_imports)]
pub use fixture::{assert_published, sorted_locations, FixtureWorkspace};

/// A small harbour grammar in which every sentence has one tree (its
/// hand-worked numbers are with it in the shared test grammars). Not every
/// test file that includes this module uses it.
#[allow(unused_imports)]
pub use trellis_test_support::grammars::HARBOUR;

/// Two test blocks for the harbour grammar: "good" holds (2 cases), "bad"
/// has 2 failing cases of 3 ("boats sail" parses; "ferrys" is no word).
/// "ferries sail" has the one tree 0.6 · 1/2 · 0.75 = 0.225 (worked by hand).
pub const HARBOUR_TESTS: &str = "test \"good\" {
  accept \"ferries sail\" as (S (NP \"ferries\") (VP \"sail\"))
  reject \"sail ferries\"
}

test \"bad\" {
  accept \"boats sink\"
  reject \"boats sail\"
  accept \"ferrys sail\"
}
";

/// [`HARBOUR`] followed by [`HARBOUR_TESTS`], which start on line 8
/// (0-based).
pub fn harbour_with_tests() -> String {
    format!("{HARBOUR}\n{HARBOUR_TESTS}")
}

/// Asserts that `response` is the error LSP 3.17 calls `RequestFailed`
/// (-32803) and that its message contains `says`.
pub fn assert_request_failed(response: &Value, says: &str) {
    assert_eq!(response["error"]["code"], -32803, "{response}");
    let message = response["error"]["message"].as_str().unwrap_or_default();
    assert!(message.contains(says), "{message}");
}

/// How long a test waits for a message before failing (a guard against
/// hanging, not a measurement).
pub const PATIENCE: Duration = Duration::from_secs(180);

pub struct TestClient {
    writer: DuplexStream,
    incoming: mpsc::UnboundedReceiver<Value>,
    /// Messages received while waiting for something else.
    backlog: VecDeque<Value>,
    /// Every message received, in order.
    pub received: Vec<Value>,
    next_id: i64,
}

/// Frames one message with its `Content-Length` header (LSP base protocol).
pub fn frame(body: &str) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body.as_bytes());
    out
}

async fn read_messages(reader: DuplexStream, tx: mpsc::UnboundedSender<Value>) {
    let mut reader = BufReader::new(reader);
    loop {
        let mut length = None;
        loop {
            let mut line = String::new();
            if reader.read_line(&mut line).await.unwrap_or(0) == 0 {
                return;
            }
            let line = line.trim_end();
            if line.is_empty() {
                break;
            }
            if let Some(n) = line.strip_prefix("Content-Length: ") {
                length = n.parse::<usize>().ok();
            }
        }
        let Some(n) = length else { return };
        let mut body = vec![0; n];
        if reader.read_exact(&mut body).await.is_err() {
            return;
        }
        let value: Value = serde_json::from_slice(&body).expect("the server sends valid JSON");
        if tx.send(value).is_err() {
            return;
        }
    }
}

impl TestClient {
    /// Starts a server (with the debug commands enabled) and a client for it.
    pub fn start() -> TestClient {
        TestClient::start_with(Options {
            debug_commands: true,
            ..Options::default()
        })
    }

    /// Starts a server with `options` and a client for it.
    pub fn start_with(options: Options) -> TestClient {
        // Bytes written to one end of a duplex pipe are read at the other.
        let (to_server, server_input) = tokio::io::duplex(1 << 22);
        let (server_output, from_server) = tokio::io::duplex(1 << 22);
        tokio::spawn(serve(server_input, server_output, options));
        let (tx, rx) = mpsc::unbounded_channel();
        tokio::spawn(read_messages(from_server, tx));
        TestClient {
            writer: to_server,
            incoming: rx,
            backlog: VecDeque::new(),
            received: Vec::new(),
            next_id: 1,
        }
    }

    /// Writes raw bytes to the server.
    pub async fn send_raw(&mut self, bytes: &[u8]) {
        self.writer
            .write_all(bytes)
            .await
            .expect("server input open");
        self.writer.flush().await.expect("server input open");
    }

    pub async fn send(&mut self, message: Value) {
        self.send_raw(&frame(&message.to_string())).await;
    }

    pub async fn notify(&mut self, method: &str, params: Value) {
        let mut message = json!({"jsonrpc": "2.0", "method": method});
        if !params.is_null() {
            message["params"] = params;
        }
        self.send(message).await;
    }

    /// Sends a request and returns its id without waiting for the answer.
    pub async fn send_request(&mut self, method: &str, params: Value) -> i64 {
        let id = self.next_id;
        self.next_id += 1;
        let mut message = json!({"jsonrpc": "2.0", "id": id, "method": method});
        if !params.is_null() {
            message["params"] = params;
        }
        self.send(message).await;
        id
    }

    /// The next message from the server, from the backlog first.
    async fn next_message(&mut self) -> Value {
        if let Some(m) = self.backlog.pop_front() {
            return m;
        }
        self.receive().await
    }

    async fn receive(&mut self) -> Value {
        match tokio::time::timeout(PATIENCE, self.incoming.recv()).await {
            Ok(Some(m)) => {
                self.received.push(m.clone());
                m
            }
            Ok(None) => panic!("the server closed its output"),
            Err(_) => panic!("no message from the server within {PATIENCE:?}"),
        }
    }

    /// Waits for the first message satisfying `pred`, keeping the others.
    pub async fn wait_for(&mut self, mut pred: impl FnMut(&Value) -> bool) -> Value {
        let mut i = 0;
        while i < self.backlog.len() {
            if pred(&self.backlog[i]) {
                return self.backlog.remove(i).expect("index checked");
            }
            i += 1;
        }
        loop {
            let m = self.receive().await;
            if pred(&m) {
                return m;
            }
            self.backlog.push_back(m);
        }
    }

    /// The full response (with `result` or `error`) to request `id`.
    pub async fn response(&mut self, id: i64) -> Value {
        self.wait_for(|m| m.get("id") == Some(&json!(id)) && m.get("method").is_none())
            .await
    }

    /// Sends a request and returns its whole response.
    pub async fn call(&mut self, method: &str, params: Value) -> Value {
        let id = self.send_request(method, params).await;
        self.response(id).await
    }

    /// Sends a request and returns its `result`, failing on an error.
    pub async fn request(&mut self, method: &str, params: Value) -> Value {
        let response = self.call(method, params).await;
        if let Some(error) = response.get("error") {
            panic!("{method} failed: {error}");
        }
        response["result"].clone()
    }

    /// A started, initialized server with `text` open at `uri` and its
    /// first diagnostics received.
    pub async fn ready(uri: &str, text: &str) -> TestClient {
        let mut client = TestClient::start();
        client.initialize().await;
        client.open(uri, 1, text).await;
        client.diagnostics(uri).await;
        client
    }

    /// `workspace/executeCommand` of `command` with one argument; the whole
    /// response.
    pub async fn execute(&mut self, command: &str, argument: Value) -> Value {
        self.call(
            "workspace/executeCommand",
            json!({"command": command, "arguments": [argument]}),
        )
        .await
    }

    /// `initialize` + `initialized`; returns the server's capabilities.
    pub async fn initialize(&mut self) -> Value {
        let result = self
            .request(
                "initialize",
                json!({"processId": null, "rootUri": null, "capabilities": {}}),
            )
            .await;
        self.notify("initialized", json!({})).await;
        result["capabilities"].clone()
    }

    pub async fn open(&mut self, uri: &str, version: i64, text: &str) {
        self.notify(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": uri, "languageId": "trellis", "version": version, "text": text}}),
        )
        .await;
    }

    pub async fn change(&mut self, uri: &str, version: i64, text: &str) {
        self.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": version}, "contentChanges": [{"text": text}]}),
        )
        .await;
    }

    pub async fn close(&mut self, uri: &str) {
        self.notify(
            "textDocument/didClose",
            json!({"textDocument": {"uri": uri}}),
        )
        .await;
    }

    /// The next `publishDiagnostics` for `uri`; returns its params.
    pub async fn diagnostics(&mut self, uri: &str) -> Value {
        let m = self
            .wait_for(|m| {
                m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == uri
            })
            .await;
        m["params"].clone()
    }

    /// The next `publishDiagnostics` for `uri` computed from `version`.
    pub async fn diagnostics_for_version(&mut self, uri: &str, version: i64) -> Value {
        let m = self
            .wait_for(|m| {
                m["method"] == "textDocument/publishDiagnostics"
                    && m["params"]["uri"] == uri
                    && m["params"]["version"] == version
            })
            .await;
        m["params"].clone()
    }

    /// The `publishDiagnostics` params received so far for `uri`, in order.
    pub fn published(&self, uri: &str) -> Vec<&Value> {
        self.received
            .iter()
            .filter(|m| {
                m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == uri
            })
            .map(|m| &m["params"])
            .collect()
    }

    /// `shutdown` then `exit`.
    pub async fn shutdown(mut self) {
        let result = self.request("shutdown", Value::Null).await;
        assert_eq!(result, Value::Null);
        self.notify("exit", Value::Null).await;
    }
}

/// A `file:` URI for a path in a temporary directory.
pub fn file_uri(path: &std::path::Path) -> String {
    url_from_path(path)
}

fn url_from_path(path: &std::path::Path) -> String {
    tower_lsp::lsp_types::Url::from_file_path(path)
        .expect("absolute path")
        .to_string()
}

/// The codes of a `publishDiagnostics` params object, in order.
pub fn codes(params: &Value) -> Vec<String> {
    params["diagnostics"]
        .as_array()
        .expect("diagnostics array")
        .iter()
        .map(|d| d["code"].as_str().unwrap_or("").to_string())
        .collect()
}

/// A clean generated grammar of at least `bytes` bytes: blocks of four
/// alternatives in a binary-heap layout (all reachable and productive, no
/// cycles), weights summing to exactly 1.
pub fn generated_grammar(bytes: usize) -> String {
    let mut blocks = bytes / 100 + 1;
    loop {
        let text = grammar_of_blocks(blocks);
        if text.len() >= bytes {
            return text;
        }
        blocks = blocks * bytes / text.len() + 16;
    }
}

fn grammar_of_blocks(blocks: usize) -> String {
    use std::fmt::Write;
    let mut out = String::with_capacity(blocks * 100);
    out.push_str("grammar generated\nstart S0\n");
    let child = |c: usize, w: usize| {
        if c < blocks {
            format!("S{c}")
        } else {
            format!("\"w{w}\"")
        }
    };
    for b in 0..blocks {
        let _ = writeln!(
            out,
            "S{b} {{\n  0.25 \"w{}\" \"fähre\"\n  1/4 {} \"w{}\"\n  25% \"w{}\" {}\n  0.25 \"w{}\"\n}}",
            b % 997,
            child(2 * b + 1, b % 89),
            b % 991,
            b % 983,
            child(2 * b + 2, b % 83),
            b % 977
        );
    }
    out
}
