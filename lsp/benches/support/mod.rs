//! What the language server's benchmarks share: the allocator of the
//! `trellis` binary, a client that speaks to the server through the real
//! transport (framing, JSON, the service) over in-memory pipes, and the
//! process's resident memory.

use serde_json::{json, Value};
use tokio::io::{AsyncBufReadExt, AsyncReadExt, AsyncWriteExt, BufReader, DuplexStream};

/// The allocator of the `trellis` binary, which runs the server (see
/// `cli/src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn frame(body: &str) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body.as_bytes());
    out
}

/// A server started on a runtime's task, and the client's ends of its
/// pipes.
pub struct Client {
    writer: DuplexStream,
    reader: BufReader<DuplexStream>,
}

impl Client {
    /// Starts a server (on the current Tokio runtime).
    pub fn start() -> Client {
        let (writer, server_input) = tokio::io::duplex(1 << 22);
        let (server_output, reader) = tokio::io::duplex(1 << 22);
        tokio::spawn(trellis_lsp::serve(
            server_input,
            server_output,
            trellis_lsp::Options::default(),
        ));
        Client {
            writer,
            reader: BufReader::new(reader),
        }
    }

    pub async fn send(&mut self, message: Value) {
        self.writer
            .write_all(&frame(&message.to_string()))
            .await
            .unwrap();
    }

    /// The next message's body.
    pub async fn receive_body(&mut self) -> Vec<u8> {
        let mut length = 0;
        loop {
            let mut line = String::new();
            assert!(
                self.reader.read_line(&mut line).await.unwrap() > 0,
                "server gone"
            );
            let line = line.trim_end();
            if line.is_empty() {
                break;
            }
            if let Some(n) = line.strip_prefix("Content-Length: ") {
                length = n.parse().unwrap();
            }
        }
        let mut body = vec![0; length];
        self.reader.read_exact(&mut body).await.unwrap();
        body
    }

    /// The next message.
    pub async fn receive(&mut self) -> Value {
        serde_json::from_slice(&self.receive_body().await).unwrap()
    }

    /// Waits for the response to request `id`; returns its body.
    pub async fn response(&mut self, id: i64) -> Vec<u8> {
        loop {
            let body = self.receive_body().await;
            let m: Value = serde_json::from_slice(&body).unwrap();
            if m["id"] == id {
                return body;
            }
        }
    }

    /// Waits for the diagnostics of `uri` at `version`; returns how many.
    pub async fn diagnostics(&mut self, uri: &str, version: i64) -> usize {
        loop {
            let m = self.receive().await;
            if m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri
                && m["params"]["version"] == version
            {
                return m["params"]["diagnostics"].as_array().unwrap().len();
            }
        }
    }

    /// The `initialize` request (id 1), its answer, and `initialized`.
    pub async fn initialize(&mut self) {
        self.send(json!({"jsonrpc": "2.0", "id": 1, "method": "initialize",
                         "params": {"capabilities": {}}}))
            .await;
        self.response(1).await;
        self.send(json!({"jsonrpc": "2.0", "method": "initialized", "params": {}}))
            .await;
    }

    /// Opens `text` as version 1 of `uri` and waits for its diagnostics,
    /// which must be none: the benchmarks' grammars are clean.
    pub async fn open(&mut self, uri: &str, text: &str) {
        self.send(json!({"jsonrpc": "2.0", "method": "textDocument/didOpen",
            "params": {"textDocument": {"uri": uri, "languageId": "trellis", "version": 1, "text": text}}}))
            .await;
        assert_eq!(
            self.diagnostics(uri, 1).await,
            0,
            "the generated grammar is clean"
        );
    }

    /// Sends `text` as the whole of version `version` of `uri`.
    #[allow(dead_code)] // not every benchmark edits
    pub async fn change(&mut self, uri: &str, version: i64, text: &str) {
        self.send(json!({"jsonrpc": "2.0", "method": "textDocument/didChange",
            "params": {"textDocument": {"uri": uri, "version": version},
                       "contentChanges": [{"text": text}]}}))
            .await;
    }
}

/// Resident memory of this process in KiB (Linux), if known.
pub fn rss_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmRSS:"))?
        .trim()
        .trim_end_matches("kB")
        .trim()
        .parse()
        .ok()
}
