//! Feeds arbitrary bytes to the language server as its input stream, after
//! a well-formed opening (initialize, initialized, one open grammar), so
//! that the bytes reach framing, decoding and every handler. Besides "no
//! panic, no hang" it checks that everything the server writes is a
//! well-framed JSON-RPC 2.0 message.
#![no_main]

use libfuzzer_sys::fuzz_target;
use std::io::Cursor;
use std::pin::Pin;
use std::sync::{Arc, Mutex};
use std::task::{Context, Poll};
use tokio::io::AsyncWrite;
use trellis_lsp::{serve, Options};

/// Collects what the server writes.
#[derive(Clone, Default)]
struct Output(Arc<Mutex<Vec<u8>>>);

impl AsyncWrite for Output {
    fn poll_write(
        self: Pin<&mut Self>,
        _: &mut Context<'_>,
        buf: &[u8],
    ) -> Poll<std::io::Result<usize>> {
        if let Ok(mut out) = self.0.lock() {
            out.extend_from_slice(buf);
        }
        Poll::Ready(Ok(buf.len()))
    }
    fn poll_flush(self: Pin<&mut Self>, _: &mut Context<'_>) -> Poll<std::io::Result<()>> {
        Poll::Ready(Ok(()))
    }
    fn poll_shutdown(self: Pin<&mut Self>, _: &mut Context<'_>) -> Poll<std::io::Result<()>> {
        Poll::Ready(Ok(()))
    }
}

fn frame(out: &mut Vec<u8>, body: &str) {
    out.extend_from_slice(format!("Content-Length: {}\r\n\r\n", body.len()).as_bytes());
    out.extend_from_slice(body.as_bytes());
}

/// Checks that `bytes` is a sequence of `Content-Length` frames of JSON-RPC
/// 2.0 messages.
fn check_output(mut bytes: &[u8]) {
    while !bytes.is_empty() {
        let end = bytes
            .windows(4)
            .position(|w| w == b"\r\n\r\n")
            .expect("a complete header");
        let header = std::str::from_utf8(&bytes[..end]).expect("an ASCII header");
        let length: usize = header
            .strip_prefix("Content-Length: ")
            .and_then(|n| n.parse().ok())
            .expect("a Content-Length header");
        let body = &bytes[end + 4..end + 4 + length];
        let message: serde_json::Value = serde_json::from_slice(body).expect("a JSON body");
        assert_eq!(message["jsonrpc"], "2.0", "{message}");
        bytes = &bytes[end + 4 + length..];
    }
}

fuzz_target!(|data: &[u8]| {
    let mut input = Vec::new();
    frame(
        &mut input,
        r#"{"jsonrpc":"2.0","id":0,"method":"initialize","params":{"capabilities":{}}}"#,
    );
    frame(
        &mut input,
        r#"{"jsonrpc":"2.0","method":"initialized","params":{}}"#,
    );
    frame(
        &mut input,
        r#"{"jsonrpc":"2.0","method":"textDocument/didOpen","params":{"textDocument":{"uri":"file:///fuzz/ferry.trellis","languageId":"trellis","version":1,"text":"start Trip\nTrip { 0.75 \"ferry\" Deck | 0.25 \"ferry\" }\nDeck { \"upper\" | \"lower\" }\n"}}}"#,
    );
    input.extend_from_slice(data);
    let Ok(runtime) = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
    else {
        return;
    };
    let output = Output::default();
    runtime.block_on(serve(
        Cursor::new(input),
        output.clone(),
        Options::default(),
    ));
    runtime.shutdown_background();
    let written = output.0.lock().map(|o| o.clone()).unwrap_or_default();
    check_output(&written);
});
