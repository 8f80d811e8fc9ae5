" trellis grammar files (weighted context-free grammars).
autocmd BufRead,BufNewFile *.trellis setfiletype trellis
