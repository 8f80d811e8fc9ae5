//! The message loop between the editor and the server.
//!
//! The server reads the stream itself rather than through tower-lsp's
//! `Server`, which stops reading at the first message it cannot decode and
//! knows only integer ids. Here:
//!
//! * [`crate::framing`] cuts the bytes into messages and resynchronises
//!   after any framing error;
//! * [`decode`] turns each message into a tower-lsp request or response,
//!   or into the error response the JSON-RPC 2.0 specification prescribes
//!   (section 5.1: `-32700` parse error, `-32600` invalid request), echoing
//!   the message's id whenever it has one;
//! * ids tower-lsp cannot carry (any JSON number that is not a small
//!   integer: `1.5`, `2e3`, `18446744073709551615`) travel through the
//!   service under a stand-in string id and are answered with the very text
//!   the client sent;
//! * the [`LspService`] is called directly: work that finishes at once
//!   (document notifications) is done in arrival order, longer requests run
//!   as tasks of their own, so one slow request never holds up another or
//!   the publication of diagnostics;
//! * every outgoing message goes through one writer, whole frames at a time.

use crate::framing::{encode, Frame, FrameReader, JsonScan};
use crate::server::{service, Backend, Options};
use futures_util::{SinkExt, StreamExt};
use serde::Deserialize;
use serde_json::value::RawValue;
use serde_json::{json, Value};
use std::collections::HashMap;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::task::Poll;
use tokio::io::{AsyncRead, AsyncWrite, AsyncWriteExt};
use tokio::sync::mpsc;
use tokio::task::JoinSet;
use tower_lsp::jsonrpc::{self, Id, Request, Response};
use tower_lsp::lsp_types::MessageType;
use tower_lsp::LspService;

/// JSON-RPC 2.0, section 5.1: invalid JSON.
pub const PARSE_ERROR: i64 = -32700;
/// JSON-RPC 2.0, section 5.1: JSON that is not a valid request object.
pub const INVALID_REQUEST: i64 = -32600;
/// JSON-RPC 2.0, section 5.1: the method does not exist (as a request).
pub const METHOD_NOT_FOUND: i64 = -32601;
/// LSP 3.17, `LSPErrorCodes.ServerCancelled`: the server cancelled the
/// request (here: too many already in flight); the client may retry.
pub const SERVER_CANCELLED: i64 = -32802;

/// Deepest nesting of arrays and objects a message may have. No LSP message
/// comes near it; the limit keeps the JSON parser (whose own limit is 128)
/// and everything that walks a parsed value far from their stacks' ends.
pub const MAX_NESTING: usize = 100;

/// Most requests the server works on at once; past it a request is refused
/// with `ServerCancelled` rather than queued behind the others.
pub const MAX_IN_FLIGHT: usize = 64;

/// Where stand-in ids start (a prefix no client uses in practice).
const STAND_IN: &str = "trellis/id/";

fn error_response(id: &RawValue, code: i64, message: &str) -> Vec<u8> {
    #[derive(serde::Serialize)]
    struct ErrorResponse<'a> {
        jsonrpc: &'static str,
        id: &'a RawValue,
        error: Value,
    }
    let body = ErrorResponse {
        jsonrpc: "2.0",
        id,
        error: json!({"code": code, "message": message}),
    };
    serde_json::to_vec(&body).unwrap_or_default()
}

fn null_id() -> &'static RawValue {
    // A constant that is valid JSON.
    serde_json::from_str("null").unwrap_or_else(|_| unreachable!())
}

/// Marks a member as present even when its value is `null`.
fn present<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<&'de RawValue>, D::Error> {
    <&RawValue>::deserialize(d).map(Some)
}

/// The members of a JSON-RPC message, each kept as its raw text until it is
/// known to be needed.
#[derive(Deserialize)]
struct Envelope<'a> {
    #[serde(default, borrow)]
    jsonrpc: Option<&'a RawValue>,
    #[serde(default, borrow, deserialize_with = "present")]
    id: Option<&'a RawValue>,
    #[serde(default, borrow)]
    method: Option<&'a RawValue>,
    #[serde(default, borrow, deserialize_with = "present")]
    params: Option<&'a RawValue>,
    #[serde(default, borrow, deserialize_with = "present")]
    result: Option<&'a RawValue>,
    #[serde(default, borrow, deserialize_with = "present")]
    error: Option<&'a RawValue>,
}

/// A decoded message.
#[derive(Debug)]
pub enum Incoming {
    /// A request or notification for the service; `original` is the id's
    /// text when the request travels under a stand-in id.
    Request {
        request: Request,
        original: Option<Box<RawValue>>,
    },
    /// The client's answer to a request of the server.
    Response(Response),
    /// A response that answers no request of the server (its id is not one
    /// the server gives); dropped with the reason logged.
    Stray(String),
}

/// Where stand-in ids come from, and which requests currently use one (for
/// `$/cancelRequest`).
#[derive(Debug, Default)]
pub struct StandIns {
    next: AtomicUsize,
    by_text: Mutex<HashMap<String, String>>,
}

impl StandIns {
    fn assign(&self, text: &str) -> String {
        let id = format!("{STAND_IN}{}", self.next.fetch_add(1, Ordering::Relaxed));
        if let Ok(mut map) = self.by_text.lock() {
            map.insert(text.to_string(), id.clone());
        }
        id
    }

    fn release(&self, text: &str) {
        if let Ok(mut map) = self.by_text.lock() {
            map.remove(text);
        }
    }

    fn lookup(&self, text: &str) -> Option<String> {
        self.by_text.lock().ok()?.get(text).cloned()
    }
}

/// A string, a number or null: an id a response can carry.
fn echoable(id: &RawValue) -> bool {
    matches!(
        id.get().as_bytes().first(),
        Some(b'"' | b'-' | b'0'..=b'9' | b'n')
    )
}

/// The id as tower-lsp carries it, or `None` when it needs a stand-in.
fn plain_id(raw: &RawValue) -> Option<Id> {
    let text = raw.get();
    if text == "null" {
        return Some(Id::Null);
    }
    if text.starts_with('"') {
        return serde_json::from_str::<String>(text).ok().map(Id::String);
    }
    // LSP's `integer` (cancellation names requests by one): only those
    // written the usual way go through as they are.
    match text.parse::<i32>() {
        Ok(n) if n.to_string() == text => Some(Id::Number(i64::from(n))),
        _ => None,
    }
}

/// The notifications of LSP 3.17, in either direction: methods that exist
/// only as messages without an `id`.
const NOTIFICATIONS: &[&str] = &[
    "$/cancelRequest",
    "$/logTrace",
    "$/progress",
    "$/setTrace",
    "exit",
    "initialized",
    "notebookDocument/didChange",
    "notebookDocument/didClose",
    "notebookDocument/didOpen",
    "notebookDocument/didSave",
    "telemetry/event",
    "textDocument/didChange",
    "textDocument/didClose",
    "textDocument/didOpen",
    "textDocument/didSave",
    "textDocument/publishDiagnostics",
    "textDocument/willSave",
    "window/logMessage",
    "window/showMessage",
    "window/workDoneProgress/cancel",
    "workspace/didChangeConfiguration",
    "workspace/didChangeWatchedFiles",
    "workspace/didChangeWorkspaceFolders",
    "workspace/didCreateFiles",
    "workspace/didDeleteFiles",
    "workspace/didRenameFiles",
];

/// Reads one message body; `Err` is the error response to send.
pub fn decode(body: &[u8], stand_ins: &StandIns) -> Result<Incoming, Vec<u8>> {
    let envelope: Envelope = match serde_json::from_slice(body) {
        Ok(m) => m,
        // Valid JSON of the wrong shape (not an object, a member of the
        // wrong type, a repeated member).
        Err(e) if e.classify() == serde_json::error::Category::Data => {
            return Err(error_response(
                null_id(),
                INVALID_REQUEST,
                &format!("invalid request: not a JSON-RPC message ({e})"),
            ))
        }
        Err(e) => {
            return Err(error_response(
                null_id(),
                PARSE_ERROR,
                &format!("parse error: the message is not valid JSON ({e})"),
            ))
        }
    };
    // An id that is not a string, number or null cannot be echoed back.
    let id = match envelope.id {
        Some(id) if echoable(id) => id,
        Some(_) => {
            return Err(error_response(
                null_id(),
                INVALID_REQUEST,
                "invalid request: `id` must be a string, a number or null",
            ))
        }
        None => null_id(),
    };
    let invalid = |why: &str| {
        Err(error_response(
            id,
            INVALID_REQUEST,
            &format!("invalid request: {why}"),
        ))
    };
    if envelope.jsonrpc.map(RawValue::get) != Some("\"2.0\"") {
        return invalid("`jsonrpc` must be \"2.0\"");
    }
    let depth = JsonScan::depth_of(body);
    if depth > MAX_NESTING {
        return invalid(&format!(
            "the message nests {depth} levels deep; at most {MAX_NESTING} are accepted"
        ));
    }
    let structured = |raw: Option<&RawValue>| -> Result<Option<Value>, String> {
        match raw {
            None => Ok(None),
            Some(raw) if raw.get() == "null" => Ok(None),
            Some(raw) => serde_json::from_str(raw.get())
                .map(Some)
                .map_err(|e| e.to_string()),
        }
    };
    match envelope.method {
        Some(method) => {
            let Ok(method) = serde_json::from_str::<String>(method.get()) else {
                return invalid("`method` must be a string");
            };
            // A message with an `id` is a request (JSON-RPC 2.0, section
            // 4.1), and no request has a notification's name: answered like
            // any request for a method the server does not have (`-32601`,
            // as vscode-jsonrpc's servers answer it) and not acted on, so
            // that an answer that is an error never goes with an effect.
            if envelope.id.is_some() && NOTIFICATIONS.contains(&method.as_str()) {
                return Err(error_response(
                    id,
                    METHOD_NOT_FOUND,
                    &format!(
                        "method not found: `{method}` is a notification, not a request; send \
                         it without an `id` (this message was not acted on)"
                    ),
                ));
            }
            // `params` may be left out or null (LSP methods without
            // parameters); otherwise JSON-RPC wants an array or an object.
            if let Some(raw) = envelope.params {
                if !matches!(raw.get().as_bytes().first(), Some(b'{' | b'[' | b'n')) {
                    return invalid("`params` must be an array or an object");
                }
            }
            let mut params = match structured(envelope.params) {
                Ok(p) => p,
                Err(e) => return invalid(&format!("unreadable `params` ({e})")),
            };
            if method == "$/cancelRequest" {
                cancel_stand_in(&mut params, stand_ins);
            }
            let mut builder = Request::build(method);
            let mut original = None;
            if let Some(raw) = envelope.id {
                builder = match plain_id(raw) {
                    Some(plain) => builder.id(plain),
                    None => {
                        original = Some(raw.to_owned());
                        builder.id(stand_ins.assign(raw.get()))
                    }
                };
            }
            if let Some(params) = params {
                builder = builder.params(params);
            }
            Ok(Incoming::Request {
                request: builder.finish(),
                original,
            })
        }
        None if envelope.id.is_some()
            && (envelope.result.is_some() || envelope.error.is_some()) =>
        {
            // The server numbers its own requests with small integers.
            let id = match plain_id(id) {
                Some(id @ Id::Number(_)) => id,
                _ => {
                    return Ok(Incoming::Stray(format!(
                        "a response with id {} answers no request of the server",
                        id.get()
                    )))
                }
            };
            if let Some(error) = envelope.error.filter(|e| e.get() != "null") {
                let error =
                    serde_json::from_str::<jsonrpc::Error>(error.get()).unwrap_or_else(|e| {
                        jsonrpc::Error {
                            code: jsonrpc::ErrorCode::InvalidRequest,
                            message: format!("the client's error response was malformed ({e})")
                                .into(),
                            data: None,
                        }
                    });
                return Ok(Incoming::Response(Response::from_error(id, error)));
            }
            let result = match structured(envelope.result) {
                Ok(r) => r.unwrap_or(Value::Null),
                Err(e) => return invalid(&format!("unreadable `result` ({e})")),
            };
            Ok(Incoming::Response(Response::from_ok(id, result)))
        }
        None => invalid(
            "a message needs a `method` (request or notification) or a `result`/`error` (response)",
        ),
    }
}

/// `$/cancelRequest` names a request by its id: when that request travels
/// under a stand-in, name the stand-in.
fn cancel_stand_in(params: &mut Option<Value>, stand_ins: &StandIns) {
    let Some(id) = params.as_mut().and_then(|p| p.get_mut("id")) else {
        return;
    };
    if let Some(stand_in) = stand_ins.lookup(&id.to_string()) {
        *id = Value::String(stand_in);
    }
}

/// A response ready to send, its id restored to the client's text.
fn encode_response(response: Response, original: Option<&RawValue>) -> Vec<u8> {
    let Some(original) = original else {
        return encode(&serde_json::to_vec(&response).unwrap_or_default());
    };
    #[derive(serde::Serialize)]
    struct Restored<'a> {
        jsonrpc: &'static str,
        id: &'a RawValue,
        #[serde(skip_serializing_if = "Option::is_none")]
        result: Option<Value>,
        #[serde(skip_serializing_if = "Option::is_none")]
        error: Option<jsonrpc::Error>,
    }
    let (_, body) = response.into_parts();
    let (result, error) = match body {
        Ok(v) => (Some(v), None),
        Err(e) => (None, Some(e)),
    };
    let restored = Restored {
        jsonrpc: "2.0",
        id: original,
        result,
        error,
    };
    encode(&serde_json::to_vec(&restored).unwrap_or_default())
}

fn log_message(message: String) -> Vec<u8> {
    let body = json!({
        "jsonrpc": "2.0",
        "method": "window/logMessage",
        "params": {"type": MessageType::ERROR, "message": message},
    });
    encode(body.to_string().as_bytes())
}

/// How a session ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ending {
    /// The client asked for `shutdown` before leaving. The LSP specification
    /// (3.17, "exit Notification") wants exit status 0 then, 1 otherwise.
    pub after_shutdown: bool,
}

/// Calls the service with one request: at once when the work finishes at
/// once, as a task of its own otherwise.
struct Dispatcher {
    service: LspService<Backend>,
    tasks: JoinSet<()>,
    in_flight: Arc<AtomicUsize>,
    out: mpsc::UnboundedSender<Vec<u8>>,
    stand_ins: Arc<StandIns>,
}

impl Dispatcher {
    /// Dispatches a request; false once the service has exited.
    async fn dispatch(&mut self, request: Request, original: Option<Box<RawValue>>) -> bool {
        use tower_service::Service;
        let ready = std::future::poll_fn(|cx| self.service.poll_ready(cx)).await;
        if ready.is_err() {
            return false;
        }
        let is_request = request.id().is_some();
        let id = request.id().cloned();
        let mut future = self.service.call(request);
        let first = std::future::poll_fn(|cx| Poll::Ready(future.as_mut().poll(cx))).await;
        let out = self.out.clone();
        let stand_ins = self.stand_ins.clone();
        let deliver = move |answer: Result<Option<Response>, tower_lsp::ExitedError>| {
            if let Some(original) = &original {
                stand_ins.release(original.get());
            }
            if let Ok(Some(response)) = answer {
                let _ = out.send(encode_response(response, original.as_deref()));
            }
        };
        match first {
            Poll::Ready(answer) => deliver(answer),
            Poll::Pending
                if is_request && self.in_flight.load(Ordering::SeqCst) >= MAX_IN_FLIGHT =>
            {
                drop(future);
                let response = Response::from_error(
                    id.unwrap_or(Id::Null),
                    jsonrpc::Error {
                        code: jsonrpc::ErrorCode::ServerError(SERVER_CANCELLED),
                        message: format!(
                            "the server is busy with {MAX_IN_FLIGHT} requests; try again"
                        )
                        .into(),
                        data: None,
                    },
                );
                deliver(Ok(Some(response)));
            }
            Poll::Pending => {
                let in_flight = self.in_flight.clone();
                in_flight.fetch_add(1, Ordering::SeqCst);
                self.tasks.spawn(async move {
                    let answer = future.await;
                    in_flight.fetch_sub(1, Ordering::SeqCst);
                    deliver(answer);
                });
            }
        }
        // Reap the tasks that have finished.
        while self.tasks.try_join_next().is_some() {}
        true
    }
}

/// Serves LSP over any byte streams until the client sends `exit` or closes
/// the input.
pub async fn serve<I, O>(input: I, mut output: O, options: Options) -> Ending
where
    I: AsyncRead + Unpin + Send + 'static,
    O: AsyncWrite + Unpin + Send + 'static,
{
    let (service, socket) = service(options);
    let (out_tx, mut out_rx) = mpsc::unbounded_channel::<Vec<u8>>();

    let writer = tokio::spawn(async move {
        while let Some(frame) = out_rx.recv().await {
            if output.write_all(&frame).await.is_err() || output.flush().await.is_err() {
                return;
            }
        }
    });

    // The server's own requests and notifications to the client.
    let (mut server_requests, mut client_responses) = socket.split();
    let forward_tx = out_tx.clone();
    let forwarder = tokio::spawn(async move {
        while let Some(request) = server_requests.next().await {
            let body = serde_json::to_vec(&request).unwrap_or_default();
            if forward_tx.send(encode(&body)).is_err() {
                return;
            }
        }
    });

    let mut dispatcher = Dispatcher {
        service,
        tasks: JoinSet::new(),
        in_flight: Arc::new(AtomicUsize::new(0)),
        out: out_tx.clone(),
        stand_ins: Arc::new(StandIns::default()),
    };
    let mut frames = FrameReader::new(input);
    let mut after_shutdown = false;
    loop {
        let body = match frames.next().await {
            Frame::End => break,
            Frame::Malformed { reason, body } => {
                let _ = out_tx.send(log_message(format!(
                    "trellis: unreadable message: {reason}"
                )));
                // Answer the request the frame held, when it can be found.
                let id = body
                    .as_deref()
                    .and_then(|b| serde_json::from_slice::<Envelope>(b).ok())
                    .and_then(|e| e.id)
                    .filter(|id| echoable(id))
                    .map(RawValue::to_owned);
                let id = id.as_deref().unwrap_or(null_id());
                let response = error_response(id, PARSE_ERROR, &format!("parse error: {reason}"));
                let _ = out_tx.send(encode(&response));
                continue;
            }
            Frame::Message(body) => body,
        };
        match decode(&body, &dispatcher.stand_ins) {
            Err(response) => {
                let _ = out_tx.send(encode(&response));
            }
            Ok(Incoming::Stray(reason)) => {
                let _ = out_tx.send(log_message(format!("trellis: ignored: {reason}")));
            }
            Ok(Incoming::Response(response)) => {
                let _ = client_responses.send(response).await;
            }
            Ok(Incoming::Request { request, original }) => {
                let method = request.method().to_string();
                if method == "shutdown" && request.id().is_some() {
                    after_shutdown = true;
                }
                if !dispatcher.dispatch(request, original).await || method == "exit" {
                    break;
                }
            }
        }
    }
    // Work still running is of no use once the client has gone.
    dispatcher.tasks.shutdown().await;
    forwarder.abort();
    let _ = forwarder.await;
    drop(dispatcher);
    drop(out_tx);
    let _ = writer.await;
    Ending { after_shutdown }
}

/// Serves LSP on standard input and output.
pub async fn serve_stdio() -> Ending {
    serve(tokio::io::stdin(), tokio::io::stdout(), Options::default()).await
}

#[cfg(test)]
mod tests {
    use super::*;

    fn answer(body: &str) -> Value {
        match decode(body.as_bytes(), &StandIns::default()) {
            Err(response) => serde_json::from_slice(&response).unwrap_or(Value::Null),
            Ok(other) => panic!("expected an error response, got {other:?}"),
        }
    }

    fn code(body: &str) -> Option<i64> {
        match decode(body.as_bytes(), &StandIns::default()) {
            Err(response) => {
                serde_json::from_slice::<Value>(&response).ok()?["error"]["code"].as_i64()
            }
            Ok(_) => None,
        }
    }

    #[test]
    fn validation_follows_json_rpc_2_error_rules() {
        // The cases of the JSON-RPC 2.0 specification, section 7 ("rpc call
        // with invalid JSON", "with invalid Request object", "with an empty
        // Array", "with an invalid Batch").
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "method": "foobar, "params": "bar", "baz]"#),
            Some(PARSE_ERROR)
        );
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "method": 1, "params": "bar"}"#),
            Some(INVALID_REQUEST)
        );
        assert_eq!(code("[]"), Some(INVALID_REQUEST));
        assert_eq!(code("[1]"), Some(INVALID_REQUEST));
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "method": "initialized", "params": {}}"#),
            None
        );
        assert_eq!(code(r#"{"jsonrpc": "2.0", "id": 1, "result": null}"#), None);
        assert_eq!(
            code(r#"{"jsonrpc": "1.0", "id": 1, "method": "x"}"#),
            Some(INVALID_REQUEST)
        );
        assert_eq!(answer(r#"{"jsonrpc": "2.0", "id": 9}"#)["id"], 9);
        let e = answer("\u{ff}");
        assert_eq!(e["id"], Value::Null);
        assert_eq!(e["error"]["code"], PARSE_ERROR);
    }

    #[test]
    fn params_may_be_null_but_not_a_scalar() {
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "id": 1, "method": "shutdown", "params": null}"#),
            None
        );
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "id": 1, "method": "shutdown", "params": 3}"#),
            Some(INVALID_REQUEST)
        );
    }

    #[test]
    fn ids_that_are_not_small_integers_travel_under_a_stand_in_and_come_back_verbatim() {
        let stand_ins = StandIns::default();
        for id in ["1.5", "2e3", "18446744073709551615", "-0", "1E400"] {
            let body = format!(r#"{{"jsonrpc": "2.0", "id": {id}, "method": "shutdown"}}"#);
            let Ok(Incoming::Request { request, original }) = decode(body.as_bytes(), &stand_ins)
            else {
                panic!("{id} not accepted");
            };
            assert!(matches!(request.id(), Some(Id::String(s)) if s.starts_with(STAND_IN)));
            let response =
                Response::from_ok(request.id().cloned().unwrap_or(Id::Null), Value::Null);
            let bytes = encode_response(response, original.as_deref());
            let text = String::from_utf8_lossy(&bytes);
            assert!(text.contains(&format!("\"id\":{id}")), "{text}");
        }
    }

    #[test]
    fn too_deep_a_message_is_refused_with_its_id() {
        let deep = format!(
            r#"{{"jsonrpc": "2.0", "id": 7, "method": "x", "params": {}{}}}"#,
            "[".repeat(5000),
            "]".repeat(5000)
        );
        let e = answer(&deep);
        assert_eq!(e["id"], 7);
        assert_eq!(e["error"]["code"], INVALID_REQUEST);
    }
}
