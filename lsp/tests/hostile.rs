//! The real `trellis lsp` process against a corpus of malformed and hostile
//! messages (`tests/hostile/`, listed with what each must be answered in
//! `cases.txt`): after every case the server must still answer a hover
//! exactly as it did before any of them, and a request the case carries
//! must be answered with its id as the client wrote it. Then the session
//! ends the way the LSP specification says (3.17, "exit Notification"):
//! status 0 after `shutdown`, 1 without.

#[path = "common/binary.rs"]
mod binary;

use binary::trellis_binary;
use serde::Deserialize;
use serde_json::value::RawValue;
use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStdin, Command, ExitStatus, Stdio};
use std::sync::mpsc::{self, Receiver, RecvTimeoutError};
use std::time::{Duration, Instant};

const URI: &str = "file:///hostile/ferry.trellis";
/// The grammar every hover is asked about: line 1, character 20 is the
/// reference to `Deck` in `Trip`.
const GRAMMAR: &str =
    "start Trip\nTrip { 0.75 \"ferry\" Deck | 0.25 \"ferry\" }\nDeck { \"upper\" | \"lower\" }\n";

/// How long the test waits for one message before failing (a guard
/// against hanging, not a measurement).
const PATIENCE: Duration = Duration::from_secs(60);

fn corpus() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/hostile")
}

fn frame(body: &[u8]) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body);
    out
}

/// One message from the server: its text and its id's text, if it has one.
#[derive(Clone, Debug)]
struct Received {
    text: String,
    id: Option<String>,
}

impl Received {
    fn value(&self) -> Value {
        serde_json::from_str(&self.text).unwrap_or(Value::Null)
    }
}

/// Reads the server's frames (the server's own output must always be well
/// framed JSON; anything else fails the test).
fn read_frames(stdout: impl Read, tx: mpsc::Sender<Received>) {
    /// `id: null` counts as an id.
    fn present<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<&'de RawValue>, D::Error> {
        <&RawValue>::deserialize(d).map(Some)
    }
    #[derive(Deserialize)]
    struct Id<'a> {
        #[serde(borrow, default, deserialize_with = "present")]
        id: Option<&'a RawValue>,
    }
    let mut reader = BufReader::new(stdout);
    loop {
        let mut length = None;
        loop {
            let mut line = String::new();
            if reader.read_line(&mut line).unwrap_or(0) == 0 {
                return;
            }
            let line = line.trim_end();
            if line.is_empty() {
                break;
            }
            let n = line.strip_prefix("Content-Length: ");
            length = Some(
                n.and_then(|n| n.parse::<usize>().ok())
                    .expect("a well-formed header"),
            );
        }
        let mut body = vec![0; length.expect("a Content-Length")];
        if reader.read_exact(&mut body).is_err() {
            return;
        }
        let text = String::from_utf8(body).expect("the server writes UTF-8");
        let id = serde_json::from_str::<Id>(&text)
            .expect("the server writes JSON-RPC")
            .id
            .map(|id| id.get().to_string());
        if tx.send(Received { text, id }).is_err() {
            return;
        }
    }
}

struct Server {
    child: Child,
    stdin: Option<ChildStdin>,
    incoming: Receiver<Received>,
    received: Vec<Received>,
}

impl Server {
    fn start(trellis: &Path) -> Server {
        let mut child = Command::new(trellis)
            .arg("lsp")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .expect("trellis lsp starts");
        let stdout = child.stdout.take().expect("piped stdout");
        let (tx, rx) = mpsc::channel();
        std::thread::spawn(move || read_frames(stdout, tx));
        Server {
            stdin: child.stdin.take(),
            child,
            incoming: rx,
            received: Vec::new(),
        }
    }

    fn send_raw(&mut self, bytes: &[u8]) {
        let stdin = self.stdin.as_mut().expect("stdin open");
        stdin.write_all(bytes).expect("the server reads its input");
        stdin.flush().expect("the server reads its input");
    }

    fn send(&mut self, message: Value) {
        self.send_raw(&frame(message.to_string().as_bytes()));
    }

    /// Waits for a message from index `from` on that satisfies `pred`.
    fn wait_for(&mut self, from: usize, what: &str, pred: impl Fn(&Received) -> bool) -> Received {
        let deadline = Instant::now() + PATIENCE;
        loop {
            if let Some(m) = self.received[from..].iter().find(|m| pred(m)) {
                return m.clone();
            }
            let left = deadline.saturating_duration_since(Instant::now());
            match self.incoming.recv_timeout(left) {
                Ok(m) => self.received.push(m),
                Err(RecvTimeoutError::Timeout) => panic!("no answer within {PATIENCE:?}: {what}"),
                Err(RecvTimeoutError::Disconnected) => {
                    panic!("the server closed its output while waiting for {what}")
                }
            }
        }
    }

    fn request(&mut self, id: &str, method: &str, params: Value) -> Value {
        let from = self.received.len();
        self.send(json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}));
        let raw_id = json!(id).to_string();
        let what = format!("{method} {raw_id}");
        self.wait_for(from, &what, |m| m.id.as_deref() == Some(raw_id.as_str()))
            .value()
    }

    fn hover(&mut self, id: &str) -> Value {
        self.request(
            id,
            "textDocument/hover",
            json!({"textDocument": {"uri": URI}, "position": {"line": 1, "character": 20}}),
        )
    }

    fn initialize(&mut self) {
        let answer = self.request("init", "initialize", json!({"capabilities": {}}));
        assert!(answer["result"]["capabilities"].is_object(), "{answer}");
        self.send(json!({"jsonrpc": "2.0", "method": "initialized", "params": {}}));
        let from = self.received.len();
        self.send(
            json!({"jsonrpc": "2.0", "method": "textDocument/didOpen", "params": {
                "textDocument": {"uri": URI, "languageId": "trellis", "version": 1, "text": GRAMMAR}
            }}),
        );
        self.wait_for(from, "diagnostics", |m| {
            let v = m.value();
            v["method"] == "textDocument/publishDiagnostics" && v["params"]["uri"] == URI
        });
    }

    /// Sends `shutdown` (when asked) and `exit`, and returns the status.
    fn finish(mut self, shutdown: bool) -> ExitStatus {
        if shutdown {
            let answer = self.request("bye", "shutdown", Value::Null);
            assert_eq!(answer["result"], Value::Null, "{answer}");
        }
        self.send(json!({"jsonrpc": "2.0", "method": "exit"}));
        drop(self.stdin.take());
        self.child.wait().expect("the server exits")
    }
}

/// One line of a manifest: a case file and what it must be answered.
struct Case {
    file: String,
    /// The id (its JSON text) and `None` for a result or the error code.
    answer: Option<(String, Option<i64>)>,
}

fn manifest(name: &str) -> Vec<Case> {
    let text = std::fs::read_to_string(corpus().join(name)).expect("the manifest is readable");
    text.lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        .map(|line| {
            let words: Vec<&str> = line.split_whitespace().collect();
            let answer = match words[1..] {
                ["survives"] => None,
                ["answers", id, "result"] => Some((id.to_string(), None)),
                ["answers", id, "error", code] => {
                    Some((id.to_string(), Some(code.parse().expect("an error code"))))
                }
                _ => panic!("unreadable manifest line: {line}"),
            };
            Case {
                file: words[0].to_string(),
                answer,
            }
        })
        .collect()
}

/// Ids are the same when their texts are (numbers must come back exactly
/// as written) or, for strings, when they are the same string.
fn same_id(got: &str, expected: &str) -> bool {
    got == expected
        || (expected.starts_with('"')
            && serde_json::from_str::<Value>(got).ok()
                == serde_json::from_str::<Value>(expected).ok())
}

/// Sends every case of `manifest`, each followed by a hover that must be
/// answered as `reference`.
fn replay(server: &mut Server, manifest_name: &str, reference: &Value) -> usize {
    let cases = manifest(manifest_name);
    for case in &cases {
        let bytes = std::fs::read(corpus().join(&case.file)).expect("the case is readable");
        let bytes = if case.file.ends_with(".json") {
            frame(&bytes)
        } else {
            bytes
        };
        let from = server.received.len();
        server.send_raw(&bytes);
        let hover = server.hover(&format!("hover after {}", case.file));
        assert_eq!(
            hover.get("result"),
            reference.get("result"),
            "after {}: {hover}",
            case.file
        );
        assert_eq!(
            hover.get("error"),
            reference.get("error"),
            "after {}",
            case.file
        );
        if let Some((id, code)) = &case.answer {
            let answer = server
                .wait_for(from, &format!("the answer to {}", case.file), |m| {
                    m.id.as_deref().is_some_and(|got| same_id(got, id))
                        && !m.text.contains("\"hover after ")
                })
                .value();
            match code {
                None => assert!(answer.get("result").is_some(), "{}: {answer}", case.file),
                Some(code) => assert_eq!(answer["error"]["code"], *code, "{}: {answer}", case.file),
            }
        }
    }
    cases.len()
}

#[test]
fn the_server_survives_the_hostile_corpus_and_still_answers_hovers() {
    let trellis = trellis_binary();
    let mut server = Server::start(&trellis);
    server.initialize();
    let reference = server.hover("first hover");
    let shown = reference["result"]["contents"].to_string();
    assert!(shown.contains("Deck"), "{reference}");
    let count = replay(&mut server, "cases.txt", &reference);
    assert!(count >= 40, "the corpus has {count} cases");
    let status = server.finish(true);
    assert_eq!(status.code(), Some(0), "exit after shutdown");
}

#[test]
fn before_initialize_requests_are_refused_and_hostile_input_survived() {
    let trellis = trellis_binary();
    let mut server = Server::start(&trellis);
    let refused = server.hover("early hover");
    // LSP 3.17, "ServerNotInitialized".
    assert_eq!(refused["error"]["code"], -32002, "{refused}");
    replay(&mut server, "before_initialize.txt", &refused);
    server.initialize();
    let hover = server.hover("late hover");
    assert!(
        hover["result"]["contents"].to_string().contains("Deck"),
        "{hover}"
    );
    let status = server.finish(true);
    assert_eq!(status.code(), Some(0));
}

#[test]
fn exit_status_is_0_after_shutdown_every_time_and_1_without() {
    let trellis = trellis_binary();
    // The race this guards against showed in about one run of seven.
    for run in 0..20 {
        let mut server = Server::start(&trellis);
        server.initialize();
        assert_eq!(server.finish(true).code(), Some(0), "run {run}");
    }
    for run in 0..5 {
        let mut server = Server::start(&trellis);
        server.initialize();
        assert_eq!(server.finish(false).code(), Some(1), "run {run}");
    }
}
