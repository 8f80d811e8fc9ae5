//! The editor features: each request finds its analysis, calls one function
//! of `grammar_lang::ide` on the blocking pool (panics caught) and turns the
//! answer into LSP types. Nothing here decides anything about grammars.

use crate::commands;
use crate::convert;
use crate::server::{request_failed, Backend, Target};
use grammar_lang::FileId;
use serde_json::json;
use std::collections::HashMap;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;
use trellis_ide::{self as ide, CodeLensKind, CompletionKind, SymbolKind as IdeSymbolKind};
use trellis_ide::{TextEdit as IdeEdit, TokenClass};

/// Most symbols one workspace-symbol answer lists.
pub const WORKSPACE_SYMBOL_LIMIT: usize = 256;

/// The token types of the semantic-token legend, indexed by
/// [`token_type`]. Standard LSP names, so every theme colours them.
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

pub fn semantic_tokens_legend() -> SemanticTokensLegend {
    SemanticTokensLegend {
        token_types: TOKEN_TYPES.to_vec(),
        token_modifiers: token_modifiers(),
    }
}

/// The analysis for a document, or `None` (the document is not open).
async fn target(backend: &Backend, uri: &Url) -> jsonrpc::Result<Option<Target>> {
    backend.target(uri).await
}

/// LSP edits grouped by file URI.
fn workspace_edit(target: &Target, edits: &[IdeEdit]) -> WorkspaceEdit {
    let mut changes: HashMap<Url, Vec<TextEdit>> = HashMap::new();
    for e in edits {
        if let Some(location) = target.location(e.file, e.span) {
            changes
                .entry(location.uri)
                .or_default()
                .push(TextEdit::new(location.range, e.new_text.clone()));
        }
    }
    WorkspaceEdit::new(changes)
}

pub async fn hover(backend: &Backend, params: HoverParams) -> jsonrpc::Result<Option<Hover>> {
    let at = params.text_document_position_params;
    let Some(t) = target(backend, &at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("computing hover", move || {
            let offset = t.offset(at.position);
            let r = &t.result;
            let found = r.analysis.hover(t.file, offset)?;
            Some(Hover {
                contents: HoverContents::Markup(MarkupContent {
                    kind: MarkupKind::Markdown,
                    value: found.markdown,
                }),
                range: Some(convert::range(t.source(), found.span)),
            })
        })
        .await
}

pub async fn definition(
    backend: &Backend,
    params: GotoDefinitionParams,
) -> jsonrpc::Result<Option<GotoDefinitionResponse>> {
    let at = params.text_document_position_params;
    let Some(t) = target(backend, &at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding the definition", move || {
            let found = t.analysis().definition(t.file, t.offset(at.position))?;
            t.location(found.file, found.span)
                .map(GotoDefinitionResponse::Scalar)
        })
        .await
}

pub async fn references(
    backend: &Backend,
    params: ReferenceParams,
) -> jsonrpc::Result<Option<Vec<Location>>> {
    let at = params.text_document_position;
    let include = params.context.include_declaration;
    let Some(t) = target(backend, &at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding references", move || {
            let found = t
                .analysis()
                .references(t.file, t.offset(at.position), include);
            Some(
                found
                    .into_iter()
                    .filter_map(|l| t.location(l.file, l.span))
                    .collect(),
            )
        })
        .await
}

pub async fn prepare_rename(
    backend: &Backend,
    params: TextDocumentPositionParams,
) -> jsonrpc::Result<Option<PrepareRenameResponse>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
        return Ok(None);
    };
    let answer = backend
        .run("preparing rename", move || {
            t.analysis()
                .prepare_rename(t.file, t.offset(params.position))
                .map(|span| convert::range(t.source(), span))
                .map_err(|e| e.to_string())
        })
        .await?;
    match answer {
        Ok(range) => Ok(Some(PrepareRenameResponse::Range(range))),
        Err(message) => Err(request_failed(message)),
    }
}

pub async fn rename(
    backend: &Backend,
    params: RenameParams,
) -> jsonrpc::Result<Option<WorkspaceEdit>> {
    let at = params.text_document_position;
    let Some(t) = target(backend, &at.text_document.uri).await? else {
        return Ok(None);
    };
    let new_name = params.new_name;
    let answer = backend
        .run("renaming", move || {
            t.analysis()
                .rename(t.file, t.offset(at.position), &new_name)
                .map(|edits| workspace_edit(&t, &edits))
                .map_err(|e| e.to_string())
        })
        .await?;
    answer.map(Some).map_err(request_failed)
}

fn symbol_kind(kind: IdeSymbolKind) -> SymbolKind {
    match kind {
        IdeSymbolKind::Grammar => SymbolKind::NAMESPACE,
        IdeSymbolKind::Start => SymbolKind::EVENT,
        IdeSymbolKind::Use => SymbolKind::FILE,
        IdeSymbolKind::Block => SymbolKind::CLASS,
        IdeSymbolKind::Rule => SymbolKind::FIELD,
        IdeSymbolKind::Test => SymbolKind::MODULE,
        IdeSymbolKind::TestCase => SymbolKind::METHOD,
    }
}

#[allow(deprecated)] // `DocumentSymbol::deprecated` must still be written.
fn document_symbol(
    file: &grammar_lang::source::SourceFile,
    s: ide::DocumentSymbol,
) -> DocumentSymbol {
    DocumentSymbol {
        name: s.name,
        detail: s.detail,
        kind: symbol_kind(s.kind),
        tags: None,
        deprecated: None,
        range: convert::range(file, s.span),
        selection_range: convert::range(file, s.selection_span),
        children: Some(
            s.children
                .into_iter()
                .map(|c| document_symbol(file, c))
                .collect(),
        ),
    }
}

pub async fn document_symbols(
    backend: &Backend,
    params: DocumentSymbolParams,
) -> jsonrpc::Result<Option<DocumentSymbolResponse>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("listing symbols", move || {
            let symbols = t
                .analysis()
                .document_symbols(t.file)
                .into_iter()
                .map(|s| document_symbol(t.source(), s))
                .collect();
            Some(DocumentSymbolResponse::Nested(symbols))
        })
        .await
}

#[allow(deprecated)] // `SymbolInformation::deprecated` must still be written.
pub async fn workspace_symbols(
    backend: &Backend,
    params: WorkspaceSymbolParams,
) -> jsonrpc::Result<Option<Vec<SymbolInformation>>> {
    let results = backend.latest_results();
    let query = params.query;
    backend
        .run("searching symbols", move || {
            let mut out: Vec<SymbolInformation> = Vec::new();
            for r in results {
                for s in r.analysis.workspace_symbols(&query, WORKSPACE_SYMBOL_LIMIT) {
                    let Some(uri) = r.uri_of(s.location.file) else {
                        continue;
                    };
                    let range =
                        convert::range(r.analysis.sources.get(s.location.file), s.location.span);
                    let location = Location::new(uri, range);
                    if out.iter().any(|o| o.location == location) {
                        continue;
                    }
                    out.push(SymbolInformation {
                        name: s.name,
                        kind: SymbolKind::CLASS,
                        tags: None,
                        deprecated: None,
                        location,
                        container_name: Some(s.detail),
                    });
                }
            }
            out.truncate(WORKSPACE_SYMBOL_LIMIT);
            Some(out)
        })
        .await
}

pub async fn completion(
    backend: &Backend,
    params: CompletionParams,
) -> jsonrpc::Result<Option<CompletionResponse>> {
    let at = params.text_document_position;
    let Some(t) = target(backend, &at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("completing", move || {
            let list = t.analysis().completions(t.file, t.offset(at.position));
            let range = convert::range(t.source(), list.replace);
            let items = list
                .items
                .into_iter()
                .enumerate()
                .map(|(i, item)| CompletionItem {
                    kind: Some(match item.kind {
                        CompletionKind::NonTerminal => CompletionItemKind::CLASS,
                        CompletionKind::Keyword => CompletionItemKind::KEYWORD,
                    }),
                    detail: item.detail,
                    // Keep the core's ranking: best first.
                    sort_text: Some(format!("{i:05}")),
                    text_edit: Some(CompletionTextEdit::Edit(TextEdit::new(
                        range,
                        item.label.clone(),
                    ))),
                    label: item.label,
                    ..CompletionItem::default()
                })
                .collect();
            Some(CompletionResponse::List(CompletionList {
                is_incomplete: list.incomplete,
                items,
            }))
        })
        .await
}

pub async fn semantic_tokens(
    backend: &Backend,
    params: SemanticTokensParams,
) -> jsonrpc::Result<Option<SemanticTokensResult>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
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

pub async fn code_actions(
    backend: &Backend,
    params: CodeActionParams,
) -> jsonrpc::Result<Option<CodeActionResponse>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
        return Ok(None);
    };
    let range = params.range;
    backend
        .run("finding code actions", move || {
            let span = convert::span(t.source(), range);
            let r = &t.result;
            let uri_of = |f: FileId| r.uri_of(f);
            let actions = t
                .analysis()
                .code_actions(t.file, span)
                .into_iter()
                .map(|a| {
                    // The diagnostic it fixes, as published.
                    let diagnostics = r
                        .analysis
                        .diagnostics
                        .iter()
                        .filter(|d| {
                            Some(d.code) == a.diagnostic_code
                                && Some(d.location) == a.diagnostic_location
                        })
                        .map(|d| convert::diagnostic(&r.analysis, d, &uri_of))
                        .collect::<Vec<_>>();
                    CodeActionOrCommand::CodeAction(CodeAction {
                        title: a.title,
                        kind: Some(match a.kind {
                            ide::CodeActionKind::QuickFix => CodeActionKind::QUICKFIX,
                            ide::CodeActionKind::Refactor => CodeActionKind::REFACTOR,
                        }),
                        diagnostics: (!diagnostics.is_empty()).then_some(diagnostics),
                        edit: Some(workspace_edit(&t, &a.edits)),
                        ..CodeAction::default()
                    })
                })
                .collect();
            Some(actions)
        })
        .await
}

pub async fn inlay_hints(
    backend: &Backend,
    params: InlayHintParams,
) -> jsonrpc::Result<Option<Vec<InlayHint>>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
        return Ok(None);
    };
    let range = params.range;
    backend
        .run("computing inlay hints", move || {
            let file = t.source();
            let span = convert::span(file, range);
            let hints = t
                .analysis()
                .inlay_hints(t.file, span)
                .into_iter()
                .map(|h| InlayHint {
                    position: convert::position(file, h.offset),
                    label: InlayHintLabel::String(h.label),
                    kind: None,
                    text_edits: None,
                    tooltip: Some(InlayHintTooltip::String(h.tooltip)),
                    padding_left: Some(h.pad_left),
                    padding_right: Some(h.pad_right),
                    data: None,
                })
                .collect();
            Some(hints)
        })
        .await
}

pub async fn code_lenses(
    backend: &Backend,
    params: CodeLensParams,
) -> jsonrpc::Result<Option<Vec<CodeLens>>> {
    let uri = params.text_document.uri;
    let Some(t) = target(backend, &uri).await? else {
        return Ok(None);
    };
    backend
        .run("placing code lenses", move || {
            let lenses = t
                .analysis()
                .code_lenses(t.file)
                .into_iter()
                .map(|lens| {
                    let command = match lens.kind {
                        CodeLensKind::ParseSentence => Command::new(
                            "▶ parse a sentence".to_string(),
                            commands::PARSE.to_string(),
                            Some(vec![json!({"uri": uri, "show": true})]),
                        ),
                        CodeLensKind::Sample => Command::new(
                            "⚄ sample 10 sentences".to_string(),
                            commands::SAMPLE.to_string(),
                            Some(vec![json!({"uri": uri, "count": 10, "show": true})]),
                        ),
                        CodeLensKind::RunAllTests { tests } => Command::new(
                            format!(
                                "▶ run all {tests} test{}",
                                if tests == 1 { "" } else { "s" }
                            ),
                            commands::RUN_TEST.to_string(),
                            Some(vec![json!({"uri": uri, "show": true})]),
                        ),
                        CodeLensKind::RunTest { test, name } => {
                            let tests = &t.analysis().grammar.tests;
                            let cases = tests.get(test).map_or(0, |t| t.cases.len());
                            Command::new(
                                format!(
                                    "▶ run test ({cases} case{})",
                                    if cases == 1 { "" } else { "s" }
                                ),
                                commands::RUN_TEST.to_string(),
                                Some(vec![json!({"uri": uri, "test": name, "show": true})]),
                            )
                        }
                    };
                    CodeLens {
                        range: convert::range(t.source(), lens.span),
                        command: Some(command),
                        data: None,
                    }
                })
                .collect();
            Some(lenses)
        })
        .await
}

pub async fn folding_ranges(
    backend: &Backend,
    params: FoldingRangeParams,
) -> jsonrpc::Result<Option<Vec<FoldingRange>>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding folding ranges", move || {
            let file = t.source();
            let ranges = t
                .analysis()
                .folding_ranges(t.file)
                .into_iter()
                .map(|f| {
                    let range = convert::range(file, f.span);
                    FoldingRange {
                        start_line: range.start.line,
                        start_character: None,
                        end_line: range.end.line,
                        end_character: None,
                        kind: Some(match f.kind {
                            ide::FoldKind::Declaration => FoldingRangeKind::Region,
                            ide::FoldKind::Comment => FoldingRangeKind::Comment,
                        }),
                        collapsed_text: None,
                    }
                })
                .collect();
            Some(ranges)
        })
        .await
}

pub async fn document_links(
    backend: &Backend,
    params: DocumentLinkParams,
) -> jsonrpc::Result<Option<Vec<DocumentLink>>> {
    let Some(t) = target(backend, &params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding document links", move || {
            let links = t
                .analysis()
                .document_links(t.file)
                .into_iter()
                .filter_map(|l| {
                    Some(DocumentLink {
                        range: convert::range(t.source(), l.span),
                        target: Some(t.result.uri_of(l.target)?),
                        tooltip: None,
                        data: None,
                    })
                })
                .collect();
            Some(links)
        })
        .await
}

pub async fn document_highlights(
    backend: &Backend,
    params: DocumentHighlightParams,
) -> jsonrpc::Result<Option<Vec<DocumentHighlight>>> {
    let at = params.text_document_position_params;
    let Some(t) = target(backend, &at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("highlighting occurrences", move || {
            let found = t
                .analysis()
                .document_highlights(t.file, t.offset(at.position))
                .into_iter()
                .map(|h| DocumentHighlight {
                    range: convert::range(t.source(), h.span),
                    kind: Some(if h.definition {
                        DocumentHighlightKind::WRITE
                    } else {
                        DocumentHighlightKind::READ
                    }),
                })
                .collect();
            Some(found)
        })
        .await
}
