//! Byte spans and the line index that turns them into line/column pairs.
//!
//! Every syntax node, rule and diagnostic carries a [`Span`] of byte offsets
//! into its file. [`LineIndex`] converts offsets to 0-based lines and to
//! columns counted either in UTF-8 bytes, in Unicode scalar values (what a
//! terminal user calls a column) or in UTF-16 code units (what LSP wants).

use std::ops::Range;

/// A half-open byte range `start..end` into one source file.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Span {
    pub start: u32,
    pub end: u32,
}

impl Span {
    pub fn new(start: usize, end: usize) -> Self {
        debug_assert!(start <= end, "span start {start} after end {end}");
        Span {
            start: start as u32,
            end: end as u32,
        }
    }

    /// An empty span at `offset`.
    pub fn point(offset: usize) -> Self {
        Span::new(offset, offset)
    }

    pub fn range(self) -> Range<usize> {
        self.start as usize..self.end as usize
    }

    pub fn len(self) -> usize {
        (self.end - self.start) as usize
    }

    pub fn is_empty(self) -> bool {
        self.start == self.end
    }

    /// The smallest span covering both.
    pub fn cover(self, other: Span) -> Span {
        Span {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }

    pub fn contains(self, offset: usize) -> bool {
        self.start as usize <= offset && offset <= self.end as usize
    }

    /// The text this span covers in `source` (empty if out of bounds).
    pub fn text(self, source: &str) -> &str {
        source.get(self.range()).unwrap_or("")
    }
}

impl From<Range<usize>> for Span {
    fn from(r: Range<usize>) -> Self {
        Span::new(r.start, r.end)
    }
}

/// A 0-based line and a 0-based column in some unit.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub struct LineCol {
    pub line: u32,
    pub col: u32,
}

/// Start offsets of every line of one text, for offset ↔ position mapping.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LineIndex {
    line_starts: Vec<u32>,
    len: u32,
}

impl LineIndex {
    pub fn new(text: &str) -> Self {
        let bytes = text.as_bytes();
        let mut line_starts = Vec::with_capacity(bytes.len() / 32 + 1);
        line_starts.push(0);
        // A line starts after every LF, and after every CR not followed by
        // an LF (a lone CR): LF, CRLF and CR are line breaks alike, as in
        // the lexer and the Language Server Protocol.
        let mut push_newlines = |chunk: &[u8], base: usize| {
            for (k, &b) in chunk.iter().enumerate() {
                let at = base + k;
                if b == b'\n' || (b == b'\r' && bytes.get(at + 1) != Some(&b'\n')) {
                    line_starts.push(at as u32 + 1);
                }
            }
        };
        // Eight bytes at a time: a word holds a line break byte exactly when
        // the word XOR "\n\n\n\n\n\n\n\n" (or "\r\r…") has a zero byte (the
        // classic has-zero-byte test, which may also fire on a word without
        // one; its bytes are then merely looked at in vain).
        let has_zero =
            |x: u64| x.wrapping_sub(0x0101_0101_0101_0101) & !x & 0x8080_8080_8080_8080 != 0;
        let mut chunks = bytes.chunks_exact(8);
        let mut base = 0;
        for chunk in &mut chunks {
            let word = u64::from_le_bytes(chunk.try_into().unwrap_or_default());
            if has_zero(word ^ 0x0a0a_0a0a_0a0a_0a0a) || has_zero(word ^ 0x0d0d_0d0d_0d0d_0d0d) {
                push_newlines(chunk, base);
            }
            base += 8;
        }
        push_newlines(chunks.remainder(), base);
        LineIndex {
            line_starts,
            len: text.len() as u32,
        }
    }

    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }

    /// Byte offset where 0-based `line` starts (clamped to the end of text).
    pub fn line_start(&self, line: u32) -> usize {
        self.line_starts
            .get(line as usize)
            .copied()
            .unwrap_or(self.len) as usize
    }

    /// The 0-based line containing `offset`.
    pub fn line_of(&self, offset: usize) -> u32 {
        let offset = offset.min(self.len as usize) as u32;
        match self.line_starts.binary_search(&offset) {
            Ok(line) => line as u32,
            Err(next) => next as u32 - 1,
        }
    }

    /// Line and column in UTF-8 bytes.
    pub fn utf8(&self, offset: usize) -> LineCol {
        let line = self.line_of(offset);
        let col = offset.min(self.len as usize) - self.line_start(line);
        LineCol {
            line,
            col: col as u32,
        }
    }

    /// Line and column in Unicode scalar values (characters).
    pub fn chars(&self, text: &str, offset: usize) -> LineCol {
        let line = self.line_of(offset);
        let start = self.line_start(line);
        let col = prefix(text, start, offset).chars().count();
        LineCol {
            line,
            col: col as u32,
        }
    }

    /// Line and column in UTF-16 code units, as the Language Server Protocol counts.
    pub fn utf16(&self, text: &str, offset: usize) -> LineCol {
        let line = self.line_of(offset);
        let start = self.line_start(line);
        let col: usize = prefix(text, start, offset)
            .chars()
            .map(char::len_utf16)
            .sum();
        LineCol {
            line,
            col: col as u32,
        }
    }

    /// Byte offset of a UTF-16 position; positions past the line end clamp to it.
    pub fn offset_utf16(&self, text: &str, pos: LineCol) -> usize {
        let start = self.line_start(pos.line);
        let end = if (pos.line as usize + 1) < self.line_starts.len() {
            self.line_start(pos.line + 1)
        } else {
            self.len as usize
        };
        let mut units = 0u32;
        for (i, c) in text.get(start..end).unwrap_or("").char_indices() {
            if units >= pos.col || c == '\n' || c == '\r' {
                return start + i;
            }
            units += c.len_utf16() as u32;
        }
        end
    }
}

/// `text[start..offset]`, moved back to a char boundary if `offset` splits one.
fn prefix(text: &str, start: usize, offset: usize) -> &str {
    let mut end = offset.min(text.len());
    while end > start && !text.is_char_boundary(end) {
        end -= 1;
    }
    text.get(start..end).unwrap_or("")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_and_columns_count_bytes_chars_and_utf16_units() {
        let text = "ab\n\"fähre\" 𝄞x\n";
        let idx = LineIndex::new(text);
        let x = text.find('x').unwrap();
        assert_eq!(idx.utf8(x), LineCol { line: 1, col: 13 });
        assert_eq!(idx.chars(text, x), LineCol { line: 1, col: 9 });
        // U+1D11E is two UTF-16 units.
        assert_eq!(idx.utf16(text, x), LineCol { line: 1, col: 10 });
        assert_eq!(idx.offset_utf16(text, LineCol { line: 1, col: 10 }), x);
    }

    #[test]
    fn every_newline_starts_a_line() {
        // Newlines at every position of an 8-byte word, runs of them, and
        // bytes that differ from a newline in one bit (0x0b, 0x8a in 'Ċ').
        let text = "a\nbc\n\n\x0b\x0b\x0b\x0bĊĊ\nxyzxyzxyz\n1234567\n12345678\n\n\nend";
        let expected: Vec<usize> = std::iter::once(0)
            .chain(text.match_indices('\n').map(|(i, _)| i + 1))
            .collect();
        let idx = LineIndex::new(text);
        assert_eq!(idx.line_count(), expected.len());
        for (line, &start) in expected.iter().enumerate() {
            assert_eq!(idx.line_start(line as u32), start);
        }
    }

    #[test]
    fn offsets_at_line_ends_belong_to_their_line() {
        let text = "a\nb";
        let idx = LineIndex::new(text);
        assert_eq!(idx.utf8(1), LineCol { line: 0, col: 1 });
        assert_eq!(idx.utf8(2), LineCol { line: 1, col: 0 });
        assert_eq!(idx.utf8(99), LineCol { line: 1, col: 1 });
    }
}
