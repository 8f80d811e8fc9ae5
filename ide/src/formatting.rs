//! Formatting one file of an analysis: the formatter's canonical layout as
//! the minimal edits that produce it (whole document or a range of lines).

use crate::TextEdit;
use grammar_lang::format::{
    format_syntax, minimal_edits, minimal_edits_in_range, FormatError, FormatOptions,
};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;

/// The edits that lay `file` out canonically (only those touching the
/// lines of `range`, when given), or its syntax errors: a file with syntax
/// errors is never formatted. No edits when it is already formatted.
pub fn formatting(
    analysis: &grammar_lang::Analysis,
    file: FileId,
    options: &FormatOptions,
    range: Option<Span>,
) -> Result<Vec<TextEdit>, FormatError> {
    let Some(syntax) = analysis.syntax.get(file.0 as usize) else {
        return Ok(Vec::new());
    };
    let text = &analysis.sources.get(file).text;
    let formatted = format_syntax(text, syntax, options)?;
    let edits = match range {
        None => minimal_edits(text, &formatted),
        Some(range) => {
            let end = (range.end as usize).min(text.len());
            let start = (range.start as usize).min(end);
            minimal_edits_in_range(text, &formatted, Span::new(start, end))
        }
    };
    Ok(edits
        .into_iter()
        .map(|(span, new_text)| TextEdit {
            file,
            span,
            new_text,
        })
        .collect())
}

impl crate::Analysis {
    /// [`formatting`] with the width the configuration sets (`[format]
    /// width` in `trellis.toml`).
    pub fn formatting(
        &self,
        file: FileId,
        range: Option<Span>,
    ) -> Result<Vec<TextEdit>, FormatError> {
        formatting(self, file, &self.config().format, range)
    }
}
