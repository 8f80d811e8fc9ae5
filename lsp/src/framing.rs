//! The LSP base protocol's framing: a byte stream cut into messages, each a
//! block of `Name: value` header lines, an empty line, and as many bytes of
//! body as its `Content-Length` header says (LSP 3.17, "Base Protocol").
//!
//! An editor's server must survive whatever arrives, so a framing error
//! never poisons the rest of the stream: [`FrameReader`] reports it once as
//! [`Frame::Malformed`] and resynchronises on the next `Content-Length:`
//! header, wherever in the stream it starts. The cases:
//!
//! * a `Content-Length` that is missing, negative or not a number: the
//!   header block is refused and everything up to the next header skipped;
//! * one larger than [`MAX_FRAME_BYTES`]: refused without buffering;
//! * one too small: the cut-off body is handed on (its JSON does not parse)
//!   and the rest of it is skipped as garbage up to the next header;
//! * one too large: a body is one JSON value, so when the value ends and
//!   anything but white space follows within the declared length, the
//!   frame ends with the value and reading resumes after it (the next
//!   frame's header is not swallowed, and no wait for bytes that never come);
//! * one that swallows the start of the next frame (a message cut short):
//!   when the body is not one whole JSON value and holds a
//!   `Content-Length:` header, reading resumes at that header;
//! * garbage bytes, header lines longer than [`MAX_HEADER_LINE_BYTES`] or
//!   more than [`MAX_HEADER_LINES`] lines: skipped up to the next header.

use tokio::io::{AsyncRead, AsyncReadExt};

/// Bodies larger than this are refused rather than buffered (256 MiB: a
/// learned grammar of a few megabytes, sent as one `didOpen`, fits many
/// times over).
pub const MAX_FRAME_BYTES: usize = 256 << 20;

/// Longest header line accepted (8 KiB; real headers are a few dozen bytes).
pub const MAX_HEADER_LINE_BYTES: usize = 8 << 10;

/// Most header lines one message may have (LSP defines two).
pub const MAX_HEADER_LINES: usize = 32;

/// The header the reader resynchronises on, compared without regard to case.
const MARKER: &[u8] = b"content-length:";

/// Bytes read from the input at a time.
const CHUNK: usize = 64 << 10;

/// What one read from the input produced.
#[derive(Debug, PartialEq, Eq)]
pub enum Frame {
    /// A message body (not yet known to be JSON).
    Message(Vec<u8>),
    /// Bytes that could not be read as a message were skipped; `reason`
    /// says why. `body` is the message when the header lied about its
    /// length but the message itself could be found (so that its sender can
    /// be answered with its id).
    Malformed {
        reason: String,
        body: Option<Vec<u8>>,
    },
    /// The input has ended.
    End,
}

/// Splits a byte stream into frames; see the module documentation.
#[derive(Debug)]
pub struct FrameReader<R> {
    input: R,
    /// Bytes read but not yet consumed start at `pos`.
    buf: Vec<u8>,
    pos: usize,
    eof: bool,
    /// After a fault: skip to the next `Content-Length:` at or after this
    /// byte of what is left before reading on.
    skip: Option<usize>,
}

/// How a header block ended.
enum Header {
    Length(usize),
    /// Unusable; `at_fault` says the bytes at hand start with the fault
    /// (rather than just after a header block that was read whole).
    Bad {
        reason: String,
        at_fault: bool,
    },
    End,
}

impl<R: AsyncRead + Unpin> FrameReader<R> {
    pub fn new(input: R) -> FrameReader<R> {
        FrameReader {
            input,
            buf: Vec::new(),
            pos: 0,
            eof: false,
            skip: None,
        }
    }

    fn pending(&self) -> &[u8] {
        &self.buf[self.pos..]
    }

    fn consume(&mut self, n: usize) {
        self.pos += n;
        if self.pos == self.buf.len() {
            self.buf.clear();
            self.pos = 0;
        }
    }

    /// Reads more input; false at the end of the input (or a read error,
    /// which ends the session the same way).
    async fn fill(&mut self) -> bool {
        if self.eof {
            return false;
        }
        if self.pos > 0 && self.pos >= self.buf.len() / 2 {
            self.buf.drain(..self.pos);
            self.pos = 0;
        }
        let old = self.buf.len();
        self.buf.resize(old + CHUNK, 0);
        let read = self.input.read(&mut self.buf[old..]).await;
        match read {
            Ok(n) if n > 0 => {
                self.buf.truncate(old + n);
                true
            }
            _ => {
                self.buf.truncate(old);
                self.eof = true;
                false
            }
        }
    }

    /// Reads the next frame.
    pub async fn next(&mut self) -> Frame {
        // A fault is reported at once; the skipping waits for the next
        // call (the sender may wait for the report before sending more).
        if let Some(from) = self.skip.take() {
            self.resync(from).await;
        }
        let length = match self.header().await {
            Header::End => return Frame::End,
            Header::Bad { reason, at_fault } => {
                self.skip = Some(usize::from(at_fault));
                return Frame::Malformed { reason, body: None };
            }
            Header::Length(n) if n > MAX_FRAME_BYTES => {
                self.skip = Some(0);
                return Frame::Malformed {
                    reason: format!(
                        "a message of {n} bytes is larger than the limit of {} MiB; skipped",
                        MAX_FRAME_BYTES >> 20
                    ),
                    body: None,
                };
            }
            Header::Length(n) => n,
        };
        self.body(length).await
    }

    /// Reads one header block up to its empty line.
    async fn header(&mut self) -> Header {
        let mut length: Option<Result<usize, String>> = None;
        let mut lines = 0;
        loop {
            let Some(end) = self.pending().iter().position(|&b| b == b'\n') else {
                if self.pending().len() > MAX_HEADER_LINE_BYTES {
                    return long_line();
                }
                if !self.fill().await {
                    return Header::End;
                }
                continue;
            };
            if end > MAX_HEADER_LINE_BYTES {
                return long_line();
            }
            let raw = &self.pending()[..end];
            let line = raw.strip_suffix(b"\r").unwrap_or(raw);
            if line.is_empty() {
                self.consume(end + 1);
                if lines == 0 {
                    // Stray blank lines between messages are tolerated.
                    continue;
                }
                return match length {
                    None => Header::Bad {
                        reason: "a header block without Content-Length".to_string(),
                        at_fault: false,
                    },
                    Some(Err(reason)) => Header::Bad {
                        reason,
                        at_fault: false,
                    },
                    Some(Ok(n)) => Header::Length(n),
                };
            }
            let header = header_line(line).filter(|_| find_marker(line, 1).is_none());
            let Some((name, value)) = header else {
                // Not a header, or a header glued to the end of something
                // else: garbage up to the next `Content-Length:`, which may
                // start within this very line.
                let shown = String::from_utf8_lossy(&line[..line.len().min(40)]).into_owned();
                return Header::Bad {
                    reason: format!("bytes that are not a message header (`{shown}`)"),
                    at_fault: true,
                };
            };
            if name.eq_ignore_ascii_case("content-length") {
                length = Some(parse_length(value));
            }
            lines += 1;
            self.consume(end + 1);
            if lines > MAX_HEADER_LINES {
                return Header::Bad {
                    reason: format!("more than {MAX_HEADER_LINES} header lines"),
                    at_fault: false,
                };
            }
        }
    }

    /// Skips input up to the next `Content-Length:` header at or after
    /// byte `from` of what is left.
    async fn resync(&mut self, mut from: usize) {
        loop {
            if let Some(at) = find_marker(self.pending(), from) {
                self.consume(at);
                return;
            }
            // Keep a tail that may be the start of a marker cut in two.
            let keep = (MARKER.len() - 1).min(self.pending().len());
            let drop = self.pending().len() - keep;
            self.consume(drop);
            from = if drop == 0 { from } else { 0 };
            if !self.fill().await {
                let rest = self.pending().len();
                self.consume(rest);
                return;
            }
        }
    }

    /// Reads a body of `length` bytes, or fewer when the JSON value it holds
    /// ends early and something else follows (see the module docs).
    async fn body(&mut self, length: usize) -> Frame {
        let mut scan = JsonScan::default();
        let mut scanned = 0;
        loop {
            let available = self.pending().len().min(length);
            scan.feed(&self.pending()[scanned..available]);
            scanned = available;
            if let Some(end) = scan.end {
                let rest = &self.pending()[end..available];
                if let Some(next) = rest.iter().position(|b| !b.is_ascii_whitespace()) {
                    let body = self.pending()[..end].to_vec();
                    self.consume(end + next);
                    return Frame::Malformed {
                        reason: format!(
                            "Content-Length {length} is larger than the message it frames ({end} bytes)"
                        ),
                        body: Some(body),
                    };
                }
            }
            if self.pending().len() >= length {
                // A body that is not one whole JSON value may have been cut
                // short, its declared length swallowing the next frame's
                // header: resume there.
                let whole = scan.end.is_some() && !scan.broken;
                if !whole {
                    if let Some(next) = find_marker(&self.pending()[..length], 1) {
                        self.consume(next);
                        return Frame::Malformed {
                            reason: format!(
                                "a message cut short: another header starts {next} bytes into its {length}"
                            ),
                            body: None,
                        };
                    }
                }
                let body = self.pending()[..length].to_vec();
                self.consume(length);
                return Frame::Message(body);
            }
            if !self.fill().await {
                return Frame::End;
            }
        }
    }
}

fn long_line() -> Header {
    Header::Bad {
        reason: format!(
            "a header line longer than {} KiB",
            MAX_HEADER_LINE_BYTES >> 10
        ),
        at_fault: true,
    }
}

/// `name: value` when `line` is a header line (the name a token of
/// letters, digits and `-`).
fn header_line(line: &[u8]) -> Option<(&str, &str)> {
    let colon = line.iter().position(|&b| b == b':')?;
    let (name, value) = (&line[..colon], &line[colon + 1..]);
    if name.is_empty() || !name.iter().all(|b| b.is_ascii_alphanumeric() || *b == b'-') {
        return None;
    }
    let name = std::str::from_utf8(name).ok()?;
    let value = std::str::from_utf8(value).ok()?;
    Some((name, value.trim()))
}

fn parse_length(value: &str) -> Result<usize, String> {
    if value.is_empty() || !value.bytes().all(|b| b.is_ascii_digit()) {
        return Err(format!("Content-Length `{value}` is not a number of bytes"));
    }
    value
        .parse::<usize>()
        .map_err(|_| format!("Content-Length `{value}` is too large"))
}

/// The position of the first `Content-Length:` (any case) at or after `from`.
fn find_marker(bytes: &[u8], from: usize) -> Option<usize> {
    if bytes.len() < MARKER.len() {
        return None;
    }
    (from..=bytes.len() - MARKER.len())
        .find(|&i| bytes[i..i + MARKER.len()].eq_ignore_ascii_case(MARKER))
}

/// An incremental scan of JSON text that finds where its first value ends
/// and how deeply it nests, without building anything (and without
/// recursion, so any depth is safe). It trusts the text to be JSON only as
/// far as brackets and strings go; the parser judges the rest.
#[derive(Clone, Debug, Default)]
pub struct JsonScan {
    depth: usize,
    /// The deepest nesting seen so far.
    pub max_depth: usize,
    in_string: bool,
    escaped: bool,
    started: bool,
    /// Offset just past the first value, when it is an object or array
    /// that has ended.
    pub end: Option<usize>,
    /// A raw control character appeared inside a string: not JSON.
    pub broken: bool,
    offset: usize,
}

impl JsonScan {
    /// Scans the next bytes of the text.
    pub fn feed(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.offset += 1;
            if self.in_string {
                if b < 0x20 {
                    // JSON strings hold no raw control characters.
                    self.broken = true;
                }
                if self.escaped {
                    self.escaped = false;
                } else if b == b'\\' {
                    self.escaped = true;
                } else if b == b'"' {
                    self.in_string = false;
                }
                continue;
            }
            match b {
                b'"' => self.in_string = true,
                b'{' | b'[' => {
                    self.started = true;
                    self.depth += 1;
                    self.max_depth = self.max_depth.max(self.depth);
                }
                b'}' | b']' => {
                    self.depth = self.depth.saturating_sub(1);
                    if self.started && self.depth == 0 && self.end.is_none() {
                        self.end = Some(self.offset);
                    }
                }
                b if b.is_ascii_whitespace() => {}
                // A scalar at the top: no early end is looked for.
                _ if !self.started => self.started = true,
                _ => {}
            }
        }
    }

    /// The deepest nesting of brackets in `bytes` (0 for a scalar).
    pub fn depth_of(bytes: &[u8]) -> usize {
        let mut scan = JsonScan::default();
        scan.feed(bytes);
        scan.max_depth
    }
}

/// Adds the `Content-Length` header to a message body.
pub fn encode(body: &[u8]) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    async fn frames(bytes: &[u8]) -> Vec<Frame> {
        let mut reader = FrameReader::new(bytes);
        let mut out = Vec::new();
        loop {
            match reader.next().await {
                Frame::End => return out,
                f => out.push(f),
            }
        }
    }

    fn message(body: &str) -> Frame {
        Frame::Message(body.as_bytes().to_vec())
    }

    fn is_malformed(f: &Frame) -> bool {
        matches!(f, Frame::Malformed { .. })
    }

    #[tokio::test]
    async fn frames_are_split_by_content_length_and_other_headers_ignored() {
        let bytes = b"Content-Length: 2\r\n\r\n{}\r\ncontent-length: 3\r\nContent-Type: application/vscode-jsonrpc; charset=utf-8\r\n\r\n[1]";
        assert_eq!(frames(bytes).await, [message("{}"), message("[1]")]);
    }

    #[tokio::test]
    async fn a_bad_content_length_is_reported_once_and_the_next_frame_read() {
        for bad in ["-5", "five", "", "99999999999999999999999"] {
            let bytes =
                format!("Content-Length: {bad}\r\n\r\n{{\"a\":1}}Content-Length: 2\r\n\r\n{{}}");
            let got = frames(bytes.as_bytes()).await;
            assert_eq!(got.len(), 2, "{bad}: {got:?}");
            assert!(is_malformed(&got[0]), "{bad}");
            assert_eq!(got[1], message("{}"), "{bad}");
        }
    }

    #[tokio::test]
    async fn a_missing_content_length_skips_to_the_next_header() {
        let got = frames(b"Content-Type: x\r\n\r\n{\"a\":1}\nContent-Length: 2\r\n\r\n{}").await;
        assert!(is_malformed(&got[0]));
        assert_eq!(got[1..], [message("{}")]);
    }

    #[tokio::test]
    async fn a_content_length_too_small_cuts_the_body_and_the_rest_is_skipped() {
        let got =
            frames(b"Content-Length: 4\r\n\r\n{\"a\":[1,2]}Content-Length: 2\r\n\r\n{}").await;
        assert_eq!(got[0], message("{\"a\""));
        assert!(is_malformed(&got[1]));
        assert_eq!(got[2..], [message("{}")]);
    }

    #[tokio::test]
    async fn a_content_length_too_large_ends_the_frame_with_its_json_value() {
        let got =
            frames(b"Content-Length: 40\r\n\r\n{\"a\":\"}\"}Content-Length: 2\r\n\r\n{}").await;
        assert_eq!(
            got[0],
            Frame::Malformed {
                reason: "Content-Length 40 is larger than the message it frames (9 bytes)"
                    .to_string(),
                body: Some(b"{\"a\":\"}\"}".to_vec()),
            }
        );
        assert_eq!(got[1..], [message("{}")]);
    }

    #[tokio::test]
    async fn a_message_cut_short_gives_way_to_the_header_inside_its_body() {
        let got =
            frames(b"Content-Length: 30\r\n\r\n{\"a\":\"bcContent-Length: 2\r\n\r\n{}      ").await;
        assert!(is_malformed(&got[0]), "{got:?}");
        assert_eq!(got[1..], [message("{}")]);
    }

    #[tokio::test]
    async fn bytes_glued_before_a_header_are_skipped_up_to_it() {
        let got =
            frames(b"Content-Length: 13\r\n\r\n{\"a\":1} extraContent-Length: 2\r\n\r\n{}").await;
        assert!(is_malformed(&got[0]), "{got:?}");
        assert!(is_malformed(&got[1]), "{got:?}");
        assert_eq!(got[2..], [message("{}")]);
    }

    #[tokio::test]
    async fn garbage_and_huge_header_lines_are_skipped() {
        let mut bytes = b"\x00\xffgarbage\r\n".to_vec();
        bytes.extend(std::iter::repeat_n(b'x', 3 * MAX_HEADER_LINE_BYTES));
        bytes.extend(b"CONTENT-LENGTH: 2\r\n\r\n{}");
        let got = frames(&bytes).await;
        assert!(got[..got.len() - 1].iter().all(is_malformed), "{got:?}");
        assert_eq!(got.last(), Some(&message("{}")));
    }

    #[tokio::test]
    async fn a_frame_over_the_limit_is_refused_without_reading_it() {
        let bytes = format!(
            "Content-Length: {}\r\n\r\n{{}}Content-Length: 2\r\n\r\n[]",
            MAX_FRAME_BYTES + 1
        );
        let got = frames(bytes.as_bytes()).await;
        assert!(is_malformed(&got[0]));
        assert_eq!(got[1..], [message("[]")]);
    }

    #[tokio::test]
    async fn a_truncated_frame_ends_the_input() {
        assert_eq!(frames(b"Content-Length: 10\r\n\r\n{\"a\"").await, []);
        assert_eq!(frames(b"Content-Len").await, []);
    }

    #[test]
    fn the_scan_measures_depth_across_strings() {
        assert_eq!(JsonScan::depth_of(b"{\"a\":[[\"]]]]\"]]}"), 3);
        assert_eq!(JsonScan::depth_of(b"5"), 0);
        let deep = "[".repeat(100_000);
        assert_eq!(JsonScan::depth_of(deep.as_bytes()), 100_000);
    }
}
