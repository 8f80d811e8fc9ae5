//! The byte stream between the editor and the server.
//!
//! tower-lsp stops reading its input at the first message it cannot
//! decode, which would leave the editor talking to a dead server. So the
//! server reads the stream itself: it splits it into `Content-Length`
//! framed messages (LSP base protocol), answers every message that is not
//! valid JSON-RPC 2.0 with the error response the JSON-RPC 2.0 specification
//! prescribes (section 5.1: `-32700` parse error, `-32600` invalid request),
//! and hands only well-formed messages on to tower-lsp. Outgoing messages
//! from both go through one writer, whole frames at a time.

use crate::server::{service, Options};
use serde::de::{Deserialize, Deserializer, IgnoredAny, MapAccess, SeqAccess, Visitor};
use serde_json::{json, Value};
use tokio::io::{AsyncBufRead, AsyncBufReadExt, AsyncRead, AsyncReadExt, AsyncWrite};
use tokio::io::{AsyncWriteExt, BufReader};
use tokio::sync::mpsc;

/// Messages larger than this are refused rather than buffered.
pub const MAX_MESSAGE_BYTES: usize = 512 << 20;

/// What one read from the input produced.
#[derive(Debug, PartialEq, Eq)]
pub enum Frame {
    /// A message body.
    Message(Vec<u8>),
    /// A header block without a usable `Content-Length`; skipped.
    BadHeader(String),
    /// The input has ended.
    End,
}

/// Reads one framed message: header lines up to an empty line, then
/// `Content-Length` bytes of body.
pub async fn read_frame<R: AsyncBufRead + Unpin>(input: &mut R) -> Frame {
    let mut length: Option<Result<usize, String>> = None;
    let mut saw_header = false;
    loop {
        let mut line = Vec::new();
        match input.read_until(b'\n', &mut line).await {
            Ok(0) | Err(_) => return Frame::End,
            Ok(_) => {}
        }
        let text = String::from_utf8_lossy(&line);
        let text = text.trim_end_matches(['\r', '\n']);
        if text.is_empty() {
            if saw_header {
                break;
            }
            // Stray blank lines between messages are tolerated.
            continue;
        }
        saw_header = true;
        if let Some((name, value)) = text.split_once(':') {
            if name.trim().eq_ignore_ascii_case("content-length") {
                length = Some(
                    value
                        .trim()
                        .parse::<usize>()
                        .map_err(|_| format!("invalid Content-Length `{}`", value.trim())),
                );
            }
        }
    }
    let length = match length {
        None => return Frame::BadHeader("missing Content-Length header".to_string()),
        Some(Err(reason)) => return Frame::BadHeader(reason),
        Some(Ok(n)) if n > MAX_MESSAGE_BYTES => {
            return Frame::BadHeader(format!(
                "message of {n} bytes is larger than the limit of {MAX_MESSAGE_BYTES}"
            ))
        }
        Some(Ok(n)) => n,
    };
    let mut body = vec![0; length];
    match input.read_exact(&mut body).await {
        Ok(_) => Frame::Message(body),
        Err(_) => Frame::End,
    }
}

/// Adds the `Content-Length` header to a message body.
pub fn encode(body: &[u8]) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body);
    out
}

fn error_response(id: Value, code: i64, message: &str) -> Value {
    json!({"jsonrpc": "2.0", "id": id, "error": {"code": code, "message": message}})
}

/// JSON-RPC 2.0, section 5.1: invalid JSON.
pub const PARSE_ERROR: i64 = -32700;
/// JSON-RPC 2.0, section 5.1: JSON that is not a valid request object.
pub const INVALID_REQUEST: i64 = -32600;

/// The JSON type of a value, read without keeping the value (a large
/// `params` is scanned once and not copied).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Shape {
    Null,
    Scalar,
    Array,
    Object,
}

impl<'de> Deserialize<'de> for Shape {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Shape, D::Error> {
        struct ShapeVisitor;
        impl<'de> Visitor<'de> for ShapeVisitor {
            type Value = Shape;
            fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str("any JSON value")
            }
            fn visit_unit<E>(self) -> Result<Shape, E> {
                Ok(Shape::Null)
            }
            fn visit_none<E>(self) -> Result<Shape, E> {
                Ok(Shape::Null)
            }
            fn visit_bool<E>(self, _: bool) -> Result<Shape, E> {
                Ok(Shape::Scalar)
            }
            fn visit_i64<E>(self, _: i64) -> Result<Shape, E> {
                Ok(Shape::Scalar)
            }
            fn visit_u64<E>(self, _: u64) -> Result<Shape, E> {
                Ok(Shape::Scalar)
            }
            fn visit_f64<E>(self, _: f64) -> Result<Shape, E> {
                Ok(Shape::Scalar)
            }
            fn visit_str<E>(self, _: &str) -> Result<Shape, E> {
                Ok(Shape::Scalar)
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Shape, A::Error> {
                while seq.next_element::<IgnoredAny>()?.is_some() {}
                Ok(Shape::Array)
            }
            fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Shape, A::Error> {
                while map.next_entry::<IgnoredAny, IgnoredAny>()?.is_some() {}
                Ok(Shape::Object)
            }
        }
        d.deserialize_any(ShapeVisitor)
    }
}

/// Marks a member as present even when its value is `null`.
fn present<'de, D: Deserializer<'de>, T: Deserialize<'de>>(d: D) -> Result<Option<T>, D::Error> {
    T::deserialize(d).map(Some)
}

/// The members of a JSON-RPC message that validation looks at.
#[derive(serde::Deserialize)]
struct Envelope {
    #[serde(default)]
    jsonrpc: Option<Value>,
    #[serde(default, deserialize_with = "present")]
    id: Option<Value>,
    #[serde(default)]
    method: Option<Value>,
    #[serde(default)]
    params: Option<Shape>,
    #[serde(default, deserialize_with = "present")]
    result: Option<Shape>,
    #[serde(default, deserialize_with = "present")]
    error: Option<Shape>,
}

/// For a well-formed JSON-RPC 2.0 request, notification or response: its
/// method (`None` for a response). Otherwise the error response to send.
pub fn validate(body: &[u8]) -> Result<Option<String>, Value> {
    let invalid = |id: Value, why: &str| {
        Err(error_response(
            id,
            INVALID_REQUEST,
            &format!("invalid request: {why}"),
        ))
    };
    let message: Envelope = match serde_json::from_slice(body) {
        Ok(m) => m,
        // Valid JSON of the wrong shape (not an object, a member of the
        // wrong type, a repeated member).
        Err(e) if e.classify() == serde_json::error::Category::Data => {
            return invalid(Value::Null, &format!("not a JSON-RPC message ({e})"))
        }
        Err(e) => {
            return Err(error_response(
                Value::Null,
                PARSE_ERROR,
                &format!("parse error: the message is not valid JSON ({e})"),
            ))
        }
    };
    // An id that is not a string, number or null cannot be echoed back.
    let id = match &message.id {
        Some(id @ (Value::String(_) | Value::Number(_))) => id.clone(),
        Some(Value::Null) | None => Value::Null,
        Some(_) => return invalid(Value::Null, "`id` must be a string or a number"),
    };
    if message.jsonrpc != Some(json!("2.0")) {
        return invalid(id, "`jsonrpc` must be \"2.0\"");
    }
    match message.method {
        Some(Value::String(method)) => match message.params {
            None | Some(Shape::Array | Shape::Object) => Ok(Some(method)),
            Some(_) => invalid(id, "`params` must be an array or an object"),
        },
        Some(_) => invalid(id, "`method` must be a string"),
        None if message.id.is_some() && (message.result.is_some() || message.error.is_some()) => {
            Ok(None)
        }
        None => invalid(
            id,
            "a message needs a `method` (request or notification) or a `result`/`error` (response)",
        ),
    }
}

/// How a session ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ending {
    /// The client asked for `shutdown` before leaving. The LSP specification
    /// (3.17, "exit Notification") wants exit status 0 then, 1 otherwise.
    pub after_shutdown: bool,
}

/// Serves LSP over any byte streams until the client sends `exit` or closes
/// the input.
pub async fn serve<I, O>(input: I, mut output: O, options: Options) -> Ending
where
    I: AsyncRead + Unpin + Send + 'static,
    O: AsyncWrite + Unpin + Send + 'static,
{
    let (service, socket) = service(options);
    let (mut to_server, server_input) = tokio::io::duplex(1 << 16);
    let (server_output, from_server) = tokio::io::duplex(1 << 16);
    let (out_tx, mut out_rx) = mpsc::unbounded_channel::<Vec<u8>>();

    let writer = tokio::spawn(async move {
        while let Some(frame) = out_rx.recv().await {
            if output.write_all(&frame).await.is_err() || output.flush().await.is_err() {
                return;
            }
        }
    });

    let relay_tx = out_tx.clone();
    let relay = tokio::spawn(async move {
        let mut reader = BufReader::new(from_server);
        while let Frame::Message(body) = read_frame(&mut reader).await {
            if relay_tx.send(encode(&body)).is_err() {
                return;
            }
        }
    });

    let pump = tokio::spawn(async move {
        let mut reader = BufReader::new(input);
        let mut after_shutdown = false;
        loop {
            match read_frame(&mut reader).await {
                Frame::End => return after_shutdown,
                Frame::BadHeader(reason) => {
                    let response =
                        error_response(Value::Null, PARSE_ERROR, &format!("parse error: {reason}"));
                    let _ = out_tx.send(encode(response.to_string().as_bytes()));
                }
                Frame::Message(body) => match validate(&body) {
                    Ok(method) => {
                        if to_server.write_all(&encode(&body)).await.is_err() {
                            return after_shutdown;
                        }
                        match method.as_deref() {
                            Some("shutdown") => after_shutdown = true,
                            // Closing the server's input ends its loop.
                            Some("exit") => return after_shutdown,
                            _ => {}
                        }
                    }
                    Err(response) => {
                        let _ = out_tx.send(encode(response.to_string().as_bytes()));
                    }
                },
            }
        }
    });

    tower_lsp::Server::new(server_input, server_output, socket)
        // Requests wait on the blocking pool; allow many in flight so that
        // a `$/cancelRequest` is never stuck behind the requests it cancels.
        .concurrency_level(64)
        .serve(service)
        .await;
    // The server has stopped: either the pump saw `exit` (and has ended) or
    // the input closed. A pump still waiting for input is not needed.
    let after_shutdown = if pump.is_finished() {
        pump.await.unwrap_or(false)
    } else {
        pump.abort();
        false
    };
    let _ = relay.await;
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

    #[tokio::test]
    async fn frames_are_split_by_content_length_and_bad_headers_are_skipped() {
        let bytes = b"Content-Length: 2\r\n\r\n{}\r\nX-Junk: 1\r\n\r\nContent-Length: 3\r\nContent-Type: application/vscode-jsonrpc; charset=utf-8\r\n\r\n[1]";
        let mut reader = BufReader::new(&bytes[..]);
        assert_eq!(
            read_frame(&mut reader).await,
            Frame::Message(b"{}".to_vec())
        );
        assert!(matches!(read_frame(&mut reader).await, Frame::BadHeader(_)));
        assert_eq!(
            read_frame(&mut reader).await,
            Frame::Message(b"[1]".to_vec())
        );
        assert_eq!(read_frame(&mut reader).await, Frame::End);
    }

    #[test]
    fn validation_follows_json_rpc_2_error_rules() {
        // The cases of the JSON-RPC 2.0 specification, section 7 ("rpc call
        // with invalid JSON", "with invalid Request object", "with an empty
        // Array", "with an invalid Batch").
        let code = |body: &str| {
            validate(body.as_bytes())
                .err()
                .map(|e| e["error"]["code"].clone())
        };
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "method": "foobar, "params": "bar", "baz]"#),
            Some(json!(PARSE_ERROR))
        );
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "method": 1, "params": "bar"}"#),
            Some(json!(INVALID_REQUEST))
        );
        assert_eq!(code("[]"), Some(json!(INVALID_REQUEST)));
        assert_eq!(code("[1]"), Some(json!(INVALID_REQUEST)));
        assert_eq!(
            code(r#"{"jsonrpc": "2.0", "method": "initialized", "params": {}}"#),
            None
        );
        assert_eq!(code(r#"{"jsonrpc": "2.0", "id": 1, "result": null}"#), None);
        assert_eq!(
            code(r#"{"jsonrpc": "1.0", "id": 1, "method": "x"}"#),
            Some(json!(INVALID_REQUEST))
        );
        let e = validate(br#"{"jsonrpc": "2.0", "id": 9}"#).unwrap_err();
        assert_eq!(e["id"], 9);
        let e = validate(b"\xff").unwrap_err();
        assert_eq!(e["id"], Value::Null);
        assert_eq!(e["error"]["code"], PARSE_ERROR);
    }
}
