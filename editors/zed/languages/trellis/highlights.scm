; Highlighting of the trellis grammar language for Zed: the patterns of
; editors/tree-sitter-trellis/queries/highlights.scm with Zed's capture
; names. tests/tests/editor_configs.rs checks that the two stay alike.

[
  "grammar"
  "start"
  "test"
  "accept"
  "reject"
  "as"
] @keyword

"use" @keyword

"relative" @keyword

(grammar_declaration
  name: (symbol) @label)

(block
  name: (symbol) @type)

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

(doc_comment) @comment.doc

[
  "{"
  "}"
  "("
  ")"
] @punctuation.bracket

"|" @punctuation.delimiter
