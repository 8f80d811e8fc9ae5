; One level inside blocks, test blocks and the brackets of a tree; the
; closing `}` or `)` goes back to its opener's level (as `trellis fmt` lays
; a file out).

[
  (block)
  (test_block)
  (tree)
] @indent

[
  "}"
  ")"
] @outdent
