" Indentation of trellis grammar files: alternatives and test cases one
" level inside their block, the lines of a tree spread over several lines
" one level inside its open brackets, and `}` or `)` back at its opener's
" level. The same layout `trellis fmt` writes.

if exists('b:did_indent')
  finish
endif
let b:did_indent = 1

setlocal indentexpr=GetTrellisIndent(v:lnum)
setlocal indentkeys=0{,0},0),!^F,o,O
setlocal autoindent
let b:undo_indent = 'setlocal indentexpr< indentkeys< autoindent<'

if exists('*GetTrellisIndent')
  finish
endif

let s:cpo_save = &cpo
set cpo&vim

" A line without its strings and comments: only brackets matter.
function! s:Code(line) abort
  let code = substitute(a:line, '"\%([^"\\]\|\\.\)*"\=', '""', 'g')
  return substitute(code, '#.*$', '', '')
endfunction

" How many levels a line opens: its openers minus the closers that follow
" them (closers at the start of the line already moved the line itself).
function! s:Opens(code) abort
  let rest = substitute(a:code, '^\s*[})]*', '', '')
  let depth = 0
  for c in split(rest, '\zs')
    if c ==# '{' || c ==# '('
      let depth += 1
    elseif c ==# '}' || c ==# ')'
      let depth -= 1
    endif
  endfor
  return depth
endfunction

function! GetTrellisIndent(lnum) abort
  let prev = prevnonblank(a:lnum - 1)
  " Comment lines do not change the level: look above them.
  while prev > 0 && getline(prev) =~# '^\s*#'
    let prev = prevnonblank(prev - 1)
  endwhile
  if prev == 0
    return 0
  endif
  let ind = indent(prev) + shiftwidth() * s:Opens(s:Code(getline(prev)))
  let leading = matchstr(getline(a:lnum), '^\s*\zs[})]\+')
  let ind -= shiftwidth() * strchars(leading)
  return max([ind, 0])
endfunction

let &cpo = s:cpo_save
unlet s:cpo_save
