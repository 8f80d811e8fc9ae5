//! Feeds arbitrary bytes through the whole front end: lexer, parser,
//! lowering and every check. Invalid UTF-8 is replaced (lossy decoding), so
//! every input reaches the analysis. Besides "no panic" it checks that the
//! tokens cover the text exactly and that every diagnostic lies inside its
//! file on character boundaries.
#![no_main]

use grammar_lang::syntax::lexer::lex;
use grammar_lang::{analyze_text, Span};
use libfuzzer_sys::fuzz_target;

fn within(text: &str, span: Span) -> bool {
    let range = span.range();
    range.start <= range.end
        && range.end <= text.len()
        && text.is_char_boundary(range.start)
        && text.is_char_boundary(range.end)
}

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);

    let tokens = lex(&text);
    let rebuilt: String = tokens.iter().map(|t| t.span.text(&text)).collect();
    assert_eq!(rebuilt, text, "tokens must cover the text exactly");

    let analysis = analyze_text(&text);
    for d in &analysis.diagnostics {
        let file = &analysis.sources.get(d.location.file).text;
        assert!(
            within(file, d.location.span),
            "{} at {:?}",
            d.code,
            d.location
        );
        for related in &d.related {
            let file = &analysis.sources.get(related.location.file).text;
            assert!(
                within(file, related.location.span),
                "related note of {}",
                d.code
            );
        }
    }
});
