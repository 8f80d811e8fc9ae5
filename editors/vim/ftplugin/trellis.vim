" Filetype settings for trellis grammar files.

if exists('b:did_ftplugin')
  finish
endif
let b:did_ftplugin = 1

let s:cpo_save = &cpo
set cpo&vim

" `gc` (commentary, Neovim 0.10) and friends write `# `; `gq` and `o` continue
" doc comments (`##`) and comments (`#`).
setlocal commentstring=#\ %s
setlocal comments=:##,:#
setlocal formatoptions-=t formatoptions+=croql
" Symbol names take `_ - . ' +`, so `*`, `w` and completion see `NP-SBJ`
" and `S'` whole.
setlocal iskeyword=@,48-57,_,39,43,45,46,192-255
let b:undo_ftplugin = 'setlocal commentstring< comments< formatoptions< iskeyword<'

" `trellis fmt` indents by two spaces; opt out with
" `let g:trellis_recommended_style = 0`.
if get(g:, 'trellis_recommended_style', 1)
  setlocal expandtab shiftwidth=2 softtabstop=2
  let b:undo_ftplugin .= ' expandtab< shiftwidth< softtabstop<'
endif

let &cpo = s:cpo_save
unlet s:cpo_save
