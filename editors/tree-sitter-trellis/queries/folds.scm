; Blocks, test blocks and expected trees spread over several lines fold.

[
  (block)
  (test_block)
  (tree)
] @fold
