; Highlighting of the trellis grammar language, in the capture names of
; nvim-treesitter and the tree-sitter CLI. The language server's semantic
; tokens use the same classes (type, string, number, keyword, comment,
; namespace), so the colours agree when both are on.
; editors/helix and editors/zed carry copies with their editors' capture
; names; tests/tests/editor_configs.rs keeps the patterns identical.

[
  "grammar"
  "start"
  "test"
  "accept"
  "reject"
  "as"
] @keyword

"use" @keyword.import

"relative" @keyword.modifier

(grammar_declaration
  name: (symbol) @module)

(block
  name: (symbol) @type.definition)

(start_declaration
  symbol: (symbol) @type)

(alternative
  item: (symbol) @type)

(tree
  label: (symbol) @type)

(weight) @number

(string) @string

(escape_sequence) @string.escape

(comment) @comment

(doc_comment) @comment.documentation

[
  "{"
  "}"
  "("
  ")"
] @punctuation.bracket

"|" @punctuation.delimiter
