(block "}" @end) @indent
(test_block "}" @end) @indent
(tree ")" @end) @indent
