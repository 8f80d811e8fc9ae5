; Scopes, definitions and references. A grammar is one scope: every block
; defines its symbol for the whole file (and the files that use it).

(source_file) @local.scope

(block
  name: (symbol) @local.definition)

(start_declaration
  symbol: (symbol) @local.reference)

(alternative
  item: (symbol) @local.reference)

(tree
  label: (symbol) @local.reference)
