; Highlighting of the trellis grammar language for Helix: the patterns of
; editors/tree-sitter-trellis/queries/highlights.scm with Helix's capture
; names. tests/tests/editor_configs.rs checks that the two stay alike.

[
  "grammar"
  "start"
  "test"
  "accept"
  "reject"
  "as"
] @keyword

"use" @keyword.control.import

"relative" @keyword.storage.modifier

(grammar_declaration
  name: (symbol) @namespace)

(block
  name: (symbol) @type)

(start_declaration
  symbol: (symbol) @type)

(alternative
  item: (symbol) @type)

(tree
  label: (symbol) @type)

(weight) @constant.numeric

(string) @string

(escape_sequence) @constant.character.escape

(comment) @comment.line

(doc_comment) @comment.line.documentation

[
  "{"
  "}"
  "("
  ")"
] @punctuation.bracket

"|" @punctuation.delimiter
