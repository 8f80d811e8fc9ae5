//! The canonical layout (the rules are listed in the module above).

use super::FormatOptions;
use crate::syntax::ast::*;
use crate::syntax::lexer::{Token, TokenKind};

const INDENT: &str = "  ";
/// Between code and a comment at the end of its line.
const BEFORE_COMMENT: &str = "  ";
/// Between the weight column and the items.
const AFTER_WEIGHT: &str = "  ";

pub(super) fn layout(text: &str, syntax: &SyntaxFile, options: &FormatOptions) -> String {
    let mut printer = Printer {
        text,
        tokens: &syntax.tokens,
        out: String::with_capacity(text.len() + text.len() / 8 + 16),
        width: options.width,
    };
    if text.starts_with('\u{FEFF}') {
        printer.out.push('\u{FEFF}');
    }
    printer.file(&syntax.decls);
    let out = printer.out;
    let crlf = text.find('\n').is_some_and(|i| text[..i].ends_with('\r'));
    if crlf {
        out.replace('\n', "\r\n")
    } else {
        out
    }
}

/// A line between two pieces of code: blank, or a comment of its own.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum GapLine<'a> {
    Blank,
    Comment { text: &'a str, doc: bool },
}

/// What lies between two pieces of code.
#[derive(Debug, Default)]
struct Gap<'a> {
    /// A comment at the end of the line of the code before.
    trailing: Option<&'a str>,
    /// The lines of their own, inner blank runs collapsed to one blank,
    /// without blank lines at either end.
    lines: Vec<GapLine<'a>>,
    /// Whether blank lines were dropped at the start or the end of `lines`.
    lead_blank: bool,
    trail_blank: bool,
}

impl Gap<'_> {
    fn ends_with_doc(&self) -> bool {
        matches!(self.lines.last(), Some(GapLine::Comment { doc: true, .. }))
    }
}

/// One line of a block or test body before alignment.
enum BodyLine<'a> {
    Gap(GapLine<'a>),
    Code {
        code: String,
        comment: Option<&'a str>,
    },
}

struct Printer<'a> {
    text: &'a str,
    tokens: &'a [Token],
    out: String,
    width: usize,
}

impl<'a> Printer<'a> {
    fn src(&self, span: crate::span::Span) -> &'a str {
        span.text(self.text)
    }

    /// The trivia (and `|`s) between byte offsets `from` and `to`;
    /// `after_code` says whether code stands before `from` on its line.
    fn gap(&self, from: usize, to: usize, after_code: bool) -> Gap<'a> {
        let mut i = self
            .tokens
            .partition_point(|t| (t.span.start as usize) < from);
        let mut gap = Gap::default();
        let mut first_line = after_code;
        let mut line_has_content = false;
        while let Some(token) = self.tokens.get(i) {
            if token.span.start as usize >= to {
                break;
            }
            match token.kind {
                TokenKind::Newline => {
                    if !first_line && !line_has_content && gap.lines.last() != Some(&GapLine::Blank)
                    {
                        gap.lines.push(GapLine::Blank);
                    }
                    first_line = false;
                    line_has_content = false;
                }
                TokenKind::Comment | TokenKind::DocComment => {
                    let comment = self.src(token.span).trim_end();
                    if first_line {
                        gap.trailing = Some(comment);
                    } else {
                        gap.lines.push(GapLine::Comment {
                            text: comment,
                            doc: token.kind == TokenKind::DocComment,
                        });
                    }
                    line_has_content = true;
                }
                TokenKind::Pipe => line_has_content = true,
                _ => {}
            }
            i += 1;
        }
        if gap.lines.first() == Some(&GapLine::Blank) {
            gap.lines.remove(0);
            gap.lead_blank = true;
        }
        if gap.lines.last() == Some(&GapLine::Blank) {
            gap.lines.pop();
            gap.trail_blank = true;
        }
        // A lone blank line is both at the start and at the end.
        if gap.lines.is_empty() && gap.lead_blank {
            gap.trail_blank = true;
        }
        gap
    }

    fn blank(&mut self) {
        self.out.push('\n');
    }

    fn gap_line(&mut self, line: GapLine<'_>, indent: &str) {
        match line {
            GapLine::Blank => self.blank(),
            GapLine::Comment { text, .. } => {
                self.out.push_str(indent);
                self.out.push_str(text);
                self.out.push('\n');
            }
        }
    }

    // ── the file ────────────────────────────────────────────────────────

    fn file(&mut self, decls: &[Decl]) {
        let mut prev: Option<&Decl> = None;
        let mut pos = 0;
        for decl in decls {
            let span = decl.span();
            let gap = self.gap(pos, span.start as usize, prev.is_some());
            self.top_gap(prev, Some(decl), gap);
            self.decl(decl);
            pos = span.end as usize;
            prev = Some(decl);
        }
        let gap = self.gap(pos, self.text.len(), prev.is_some());
        self.top_gap(prev, None, gap);
    }

    /// Ends the line of `prev` (with its trailing comment) and writes the
    /// lines up to `next`.
    fn top_gap(&mut self, prev: Option<&Decl>, next: Option<&Decl>, gap: Gap<'_>) {
        if prev.is_some() {
            if let Some(comment) = gap.trailing {
                self.out.push_str(BEFORE_COMMENT);
                self.out.push_str(comment);
            }
            self.out.push('\n');
        }
        let (Some(prev), Some(next)) = (prev, next) else {
            // The start or the end of the file: comments only, no blank
            // line before the first or after the last line.
            let lead = gap.lead_blank && prev.is_some() && !gap.lines.is_empty();
            let trail = gap.trail_blank && next.is_some() && !gap.lines.is_empty();
            if lead {
                self.blank();
            }
            for &line in &gap.lines {
                self.gap_line(line, "");
            }
            if trail || (next.is_some_and(would_take_doc) && gap.ends_with_doc()) {
                self.blank();
            }
            return;
        };
        let big = |d: &Decl| matches!(d, Decl::Block(_) | Decl::Test(_));
        let separate = big(prev) || big(next);
        if gap.lines.is_empty() {
            if separate || gap.lead_blank || gap.trail_blank {
                self.blank();
            }
            return;
        }
        let inner_blank = gap.lines.contains(&GapLine::Blank);
        let lead = gap.lead_blank || (separate && !gap.trail_blank && !inner_blank);
        if lead {
            self.blank();
        }
        for &line in &gap.lines {
            self.gap_line(line, "");
        }
        if gap.trail_blank || (would_take_doc(next) && gap.ends_with_doc()) {
            self.blank();
        }
    }

    /// Writes a declaration, without the newline that ends its last line.
    fn decl(&mut self, decl: &Decl) {
        match decl {
            Decl::Grammar(d) => self.name_decl("grammar", d),
            Decl::Start(d) => self.name_decl("start", d),
            Decl::Use(d) => {
                self.out.push_str("use ");
                self.out.push_str(self.src(d.path.span));
            }
            Decl::Block(b) => self.block(b),
            Decl::Test(t) => self.test(t),
        }
    }

    fn name_decl(&mut self, keyword: &str, d: &NameDecl) {
        self.out.push_str(keyword);
        self.out.push(' ');
        self.out.push_str(self.src(d.name.span));
    }

    // ── blocks ──────────────────────────────────────────────────────────

    fn block(&mut self, b: &Block) {
        let mut header = String::from(self.src(b.name.span));
        if b.relative.is_some() {
            header.push_str(" relative");
        }
        header.push_str(" {");
        let close = b.close.map_or(b.span.end, |c| c.start) as usize;
        if let Some(line) = self.one_line_block(b, &header, close) {
            self.out.push_str(&line);
            return;
        }
        let weight_width = b
            .alternatives
            .iter()
            .filter_map(|a| a.weight)
            .map(|w| self.src(w).chars().count())
            .max();
        let mut anchors: Vec<(crate::span::Span, String, bool)> =
            Vec::with_capacity(b.alternatives.len());
        let mut k = 0;
        while k < b.alternatives.len() {
            let row = self.row_end(&b.alternatives, k);
            if row > k + 1 {
                self.rows(&b.alternatives[k..row], &mut anchors);
            } else {
                let alt = &b.alternatives[k];
                anchors.push((
                    alt.span,
                    self.alternative(alt, weight_width),
                    alt.doc.is_none(),
                ));
            }
            k = row;
        }
        self.body(header, b.open.end as usize, anchors, close);
    }

    /// Whether `alt` may share a line with its neighbours: an unweighted
    /// single word without a doc comment.
    fn is_word(alt: &Alternative) -> bool {
        alt.weight.is_none()
            && alt.doc.is_none()
            && matches!(alt.items.as_slice(), [Item::Terminal(_)])
    }

    /// The end of the row of words starting at `alts[k]`: the alternatives
    /// the user wrote on the same line as it (only `|` and spaces between),
    /// all words. `k + 1` when `alts[k]` stands alone.
    fn row_end(&self, alts: &[Alternative], k: usize) -> usize {
        if !Self::is_word(&alts[k]) {
            return k + 1;
        }
        let mut end = k + 1;
        while end < alts.len() && Self::is_word(&alts[end]) {
            let between = self
                .text
                .get(alts[end - 1].span.end as usize..alts[end].span.start as usize)
                .unwrap_or("\n");
            if !between.chars().all(|c| c == '|' || c == ' ' || c == '\t') {
                break;
            }
            end += 1;
        }
        end
    }

    /// Words the user wrote side by side stay side by side, `|` between
    /// them, as many to a line as fit the width (a lexicon's rows of
    /// words keep their shape); a row too long for the width is wrapped.
    fn rows(&self, words: &[Alternative], anchors: &mut Vec<(crate::span::Span, String, bool)>) {
        let room = self.width.saturating_sub(INDENT.len());
        let mut line = String::new();
        let mut first = 0;
        for (i, alt) in words.iter().enumerate() {
            let word = self.src(alt.items[0].span());
            let grown = line.chars().count() + " | ".len() + word.chars().count();
            if !line.is_empty() && grown > room {
                let span = crate::span::Span::new(
                    words[first].span.start as usize,
                    words[i - 1].span.end as usize,
                );
                anchors.push((span, std::mem::take(&mut line), true));
                first = i;
            }
            if !line.is_empty() {
                line.push_str(" | ");
            }
            line.push_str(word);
        }
        let span = crate::span::Span::new(
            words[first].span.start as usize,
            words[words.len() - 1].span.end as usize,
        );
        // No word of a row has a doc comment: a `##` right above the
        // row's first word would start documenting it.
        anchors.push((span, line, true));
    }

    /// The block on one line, if it was written on one line, holds only
    /// unweighted single terminals and fits.
    fn one_line_block(&self, b: &Block, header: &str, close: usize) -> Option<String> {
        let inside = self.text.get(b.open.start as usize..close)?;
        if inside.contains('\n') {
            return None;
        }
        if b.alternatives.is_empty() {
            return Some(format!("{header}}}"));
        }
        let simple = b.alternatives.iter().all(|a| {
            a.weight.is_none()
                && a.doc.is_none()
                && matches!(a.items.as_slice(), [Item::Terminal(_)])
        });
        if !simple {
            return None;
        }
        let mut line = header.to_string();
        for (i, alt) in b.alternatives.iter().enumerate() {
            line.push_str(if i == 0 { " " } else { " | " });
            line.push_str(self.src(alt.items[0].span()));
        }
        line.push_str(" }");
        (line.chars().count() <= self.width).then_some(line)
    }

    fn alternative(&self, alt: &Alternative, weight_width: Option<usize>) -> String {
        let mut line = String::new();
        if let (Some(weight), Some(width)) = (alt.weight, weight_width) {
            let weight = self.src(weight);
            line.push_str(weight);
            for _ in weight.chars().count()..width {
                line.push(' ');
            }
            line.push_str(AFTER_WEIGHT);
        }
        for (i, item) in alt.items.iter().enumerate() {
            if i > 0 {
                line.push(' ');
            }
            line.push_str(self.src(item.span()));
        }
        line
    }

    // ── tests ───────────────────────────────────────────────────────────

    fn test(&mut self, t: &TestBlock) {
        let header = format!("test {} {{", self.src(t.name.span));
        let close = t
            .span
            .end
            .checked_sub(1)
            .filter(|&c| self.text.as_bytes().get(c as usize) == Some(&b'}'))
            .unwrap_or(t.span.end) as usize;
        let open = t.name.span.end as usize;
        let open = open
            + self
                .text
                .get(open..close)
                .and_then(|s| s.find('{'))
                .map_or(0, |i| i + 1);
        let anchors = t
            .cases
            .iter()
            .map(|case| (case.span, self.case(case), false))
            .collect();
        self.body(header, open, anchors, close);
    }

    fn case(&self, case: &TestCase) -> String {
        if self.src(case.span).contains('\n') {
            return self.multi_line_case(case);
        }
        let mut line = String::from(match case.expect {
            Expectation::Accept => "accept ",
            Expectation::Reject => "reject ",
        });
        line.push_str(self.src(case.sentence.span));
        if let Some(tree) = &case.tree {
            line.push_str(" as ");
            self.tree(tree, &mut line);
        }
        line
    }

    /// A case whose expected tree spans several lines keeps its line
    /// breaks: each line's parts are joined by single spaces (none inside
    /// the brackets), a continuation line is indented one step deeper per
    /// bracket open at its start (a line starting with `)` by one less),
    /// blank lines are dropped and comments stay where they are. The
    /// continuation lines carry the block's indentation too.
    fn multi_line_case(&self, case: &TestCase) -> String {
        let end = case.span.end as usize;
        let first = self
            .tokens
            .partition_point(|t| (t.span.start as usize) < case.span.start as usize);
        let mut out = String::new();
        let mut line_empty = true;
        let mut after_open = false;
        let mut depth = 0usize;
        for token in self.tokens[first..]
            .iter()
            .take_while(|t| (t.span.start as usize) < end)
        {
            match token.kind {
                TokenKind::Whitespace => continue,
                TokenKind::Newline => {
                    if !line_empty {
                        out.push('\n');
                        line_empty = true;
                    }
                    continue;
                }
                _ => {}
            }
            let text = self.src(token.span).trim_end();
            let comment = matches!(token.kind, TokenKind::Comment | TokenKind::DocComment);
            if line_empty {
                if !out.is_empty() {
                    let steps =
                        1 + depth - usize::from(token.kind == TokenKind::RParen && depth > 0);
                    for _ in 0..steps {
                        out.push_str(INDENT);
                    }
                }
                line_empty = false;
            } else if comment {
                out.push_str(BEFORE_COMMENT);
            } else if !after_open && token.kind != TokenKind::RParen {
                out.push(' ');
            }
            out.push_str(text);
            after_open = token.kind == TokenKind::LParen;
            match token.kind {
                TokenKind::LParen => depth += 1,
                TokenKind::RParen => depth = depth.saturating_sub(1),
                _ => {}
            }
        }
        while out.ends_with('\n') {
            out.pop();
        }
        out
    }

    fn tree(&self, tree: &TreeSyntax, out: &mut String) {
        out.push('(');
        out.push_str(self.src(tree.label.span));
        for child in &tree.children {
            out.push(' ');
            match child {
                TreeChild::Node(node) => self.tree(node, out),
                TreeChild::Leaf(leaf) => out.push_str(self.src(leaf.span)),
            }
        }
        out.push(')');
    }

    // ── bodies ──────────────────────────────────────────────────────────

    /// Writes `header`, one line per anchor (its span in the source, its
    /// text, and whether a `##` right above it would start documenting it)
    /// with the comments and blank lines between them, and `}`; `open` is
    /// the end of `{` and `close` the start of `}`.
    fn body(
        &mut self,
        header: String,
        open: usize,
        anchors: Vec<(crate::span::Span, String, bool)>,
        close: usize,
    ) {
        let mut header_comment = None;
        let mut lines: Vec<BodyLine<'a>> = Vec::with_capacity(anchors.len() + 2);
        let mut pos = open;
        let count = anchors.len();
        for (k, (span, code, undocumented)) in anchors.into_iter().enumerate() {
            let gap = self.gap(pos, span.start as usize, true);
            attach_trailing(&mut lines, &mut header_comment, gap.trailing);
            if gap.lead_blank && k > 0 && !gap.lines.is_empty() {
                lines.push(BodyLine::Gap(GapLine::Blank));
            }
            let protect = undocumented && gap.ends_with_doc();
            lines.extend(gap.lines.iter().map(|&l| BodyLine::Gap(l)));
            // No blank line right after `{`.
            if (gap.trail_blank && (k > 0 || !gap.lines.is_empty())) || protect {
                lines.push(BodyLine::Gap(GapLine::Blank));
            }
            lines.push(BodyLine::Code {
                code,
                comment: None,
            });
            pos = span.end as usize;
        }
        let gap = self.gap(pos, close, true);
        attach_trailing(&mut lines, &mut header_comment, gap.trailing);
        if gap.lead_blank && count > 0 && !gap.lines.is_empty() {
            lines.push(BodyLine::Gap(GapLine::Blank));
        }
        lines.extend(gap.lines.iter().map(|&l| BodyLine::Gap(l)));

        if lines.is_empty() && header_comment.is_none() {
            self.out.push_str(&header);
            self.out.push('}');
            return;
        }
        self.out.push_str(&header);
        if let Some(comment) = header_comment {
            self.out.push_str(BEFORE_COMMENT);
            self.out.push_str(comment);
        }
        self.out.push('\n');
        self.aligned(&lines);
        self.out.push('}');
    }

    /// Writes body lines, the trailing comments of each run of code lines
    /// (not broken by a blank or comment line) in one column.
    fn aligned(&mut self, lines: &[BodyLine<'_>]) {
        let mut start = 0;
        while start < lines.len() {
            if let BodyLine::Gap(line) = lines[start] {
                self.gap_line(line, INDENT);
                start += 1;
                continue;
            }
            let end = lines[start..]
                .iter()
                .position(|l| matches!(l, BodyLine::Gap(_)))
                .map_or(lines.len(), |n| start + n);
            let column = lines[start..end]
                .iter()
                .filter_map(|l| match l {
                    BodyLine::Code {
                        code,
                        comment: Some(_),
                    } if !code.contains('\n') => Some(code.chars().count()),
                    _ => None,
                })
                .max()
                .unwrap_or(0);
            for line in &lines[start..end] {
                if let BodyLine::Code { code, comment } = line {
                    self.out.push_str(INDENT);
                    self.out.push_str(code);
                    if let Some(comment) = comment {
                        // A case written on several lines is not aligned
                        // with its neighbours.
                        let width = if code.contains('\n') {
                            column
                        } else {
                            code.chars().count()
                        };
                        for _ in width..column {
                            self.out.push(' ');
                        }
                        self.out.push_str(BEFORE_COMMENT);
                        self.out.push_str(comment);
                    }
                    self.out.push('\n');
                }
            }
            start = end;
        }
    }
}

/// Puts a trailing comment on the last code line written (or the header).
fn attach_trailing<'a>(
    lines: &mut [BodyLine<'a>],
    header_comment: &mut Option<&'a str>,
    trailing: Option<&'a str>,
) {
    let Some(trailing) = trailing else {
        return;
    };
    match lines.last_mut() {
        Some(BodyLine::Code { comment, .. }) => *comment = Some(trailing),
        // A trailing comment follows code: the header when nothing else is
        // written yet.
        _ => *header_comment = Some(trailing),
    }
}

/// Whether a `##` line right above `decl` would document it.
fn would_take_doc(decl: &Decl) -> bool {
    match decl {
        Decl::Block(b) => b.doc.is_none(),
        Decl::Test(t) => t.doc.is_none(),
        _ => false,
    }
}
