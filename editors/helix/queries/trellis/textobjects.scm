; `]f`/`[f` and `maf`/`mif` move over and select blocks (a symbol's
; rules), `]T`/`maT` test blocks, `]c`/`mac` comments; `mia` an
; alternative's items, `maa` the whole alternative.

(block) @function.around

(test_block) @test.around

(test_case) @test.inside

(alternative) @parameter.around

(alternative
  item: (_) @parameter.inside)

[
  (comment)
  (doc_comment)
] @comment.around
