//! `textDocument/semanticTokens/full`: the façade's token classes in LSP's
//! relative encoding, with the legend the capabilities advertise.

use crate::convert;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;
use trellis_ide::TokenClass;

/// The token types of the semantic-token legend, indexed by
/// `token_type`. Standard LSP names, so every theme colours them.
pub const TOKEN_TYPES: &[SemanticTokenType] = &[
    SemanticTokenType::TYPE,      // non-terminal
    SemanticTokenType::STRING,    // terminal and other quoted text
    SemanticTokenType::NUMBER,    // weight
    SemanticTokenType::KEYWORD,   // keyword
    SemanticTokenType::COMMENT,   // comment and doc comment
    SemanticTokenType::NAMESPACE, // the grammar's name
];

/// The token modifiers of the legend, as bits in this order.
pub fn token_modifiers() -> Vec<SemanticTokenModifier> {
    vec![
        SemanticTokenModifier::DEFINITION,
        SemanticTokenModifier::DOCUMENTATION,
        SemanticTokenModifier::new("undefined"),
    ]
}

fn token_type(class: TokenClass) -> u32 {
    match class {
        TokenClass::NonTerminal => 0,
        TokenClass::Terminal | TokenClass::String => 1,
        TokenClass::Weight => 2,
        TokenClass::Keyword => 3,
        TokenClass::Comment | TokenClass::DocComment => 4,
        TokenClass::GrammarName => 5,
    }
}

/// The legend the capabilities advertise.
pub fn legend() -> SemanticTokensLegend {
    SemanticTokensLegend {
        token_types: TOKEN_TYPES.to_vec(),
        token_modifiers: token_modifiers(),
    }
}

pub async fn semantic_tokens(
    backend: &Backend,
    params: SemanticTokensParams,
) -> jsonrpc::Result<Option<SemanticTokensResult>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("classifying tokens", move || {
            let file = t.source();
            let tokens = t.analysis().semantic_tokens(t.file, None);
            let mut data = Vec::with_capacity(tokens.len());
            let (mut line, mut start) = (0u32, 0u32);
            for token in tokens {
                let range = convert::range(file, token.span);
                // Tokens never span lines; guard anyway.
                if range.end.line != range.start.line
                    || range.end.character <= range.start.character
                {
                    continue;
                }
                let delta_line = range.start.line - line;
                let delta_start = if delta_line == 0 {
                    range.start.character - start
                } else {
                    range.start.character
                };
                let m = token.modifiers;
                let doc = token.class == TokenClass::DocComment;
                data.push(SemanticToken {
                    delta_line,
                    delta_start,
                    length: range.end.character - range.start.character,
                    token_type: token_type(token.class),
                    token_modifiers_bitset: u32::from(m.definition)
                        | u32::from(doc) << 1
                        | u32::from(m.undefined) << 2,
                });
                line = range.start.line;
                start = range.start.character;
            }
            Some(SemanticTokensResult::Tokens(SemanticTokens {
                result_id: None,
                data,
            }))
        })
        .await
}
