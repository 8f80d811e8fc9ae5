; The outline panel: the grammar's name, its start symbol, every block and
; every test block.

(grammar_declaration
  "grammar" @context
  name: (symbol) @name) @item

(start_declaration
  "start" @context
  symbol: (symbol) @name) @item

(block
  name: (symbol) @name
  relative: _? @context) @item

(test_block
  "test" @context
  name: (string) @name) @item
