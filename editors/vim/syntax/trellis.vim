" Vim syntax file
" Language:    trellis grammar language (weighted context-free grammars)
" Filenames:   *.trellis
"
" Classic regex highlighting, for Vim and for Neovim versions that do not
" ask the language server for semantic tokens (0.7). It follows the lexer
" in grammar-lang/src/syntax/lexer.rs: symbols are a letter or `_` then
" letters, digits, `_ - . ' +`; the eight keywords are reserved; weights are
" decimals, fractions or percents; `##` starts a doc comment, `#` and `###`
" a plain one.

if exists('b:current_syntax')
  finish
endif

let s:cpo_save = &cpo
set cpo&vim

syntax case match
" Word characters of a symbol name: letters, digits, _ ' + - . (and every
" non-ASCII character, which Vim counts as a word character already).
syntax iskeyword @,48-57,_,39,43,45,46,192-255

" Names. Defined first: the items below win where they start at the same
" place (a keyword always wins over a match).
syntax match trellisSymbol "\%(\a\|_\|[^\x00-\x7f]\)\k*"
" The name that opens a block: `Name {` or `Name relative {`.
syntax match trellisDefinition "\%(\a\|_\|[^\x00-\x7f]\)\k*\ze\%(\s\+relative\)\=\s*{"
" The name after `grammar`.
syntax match trellisGrammarName "\%(\<grammar\s\+\)\@<=\%(\a\|_\|[^\x00-\x7f]\)\k*"

syntax keyword trellisKeyword grammar start test accept reject as
syntax keyword trellisInclude use
syntax keyword trellisModifier relative

" A weight: 0.25, 1/4, 25%, optionally negative. Symbols swallow their own
" digits (`x.1`, `NP-2`), so a weight only starts where no symbol does.
syntax match trellisWeight "-\=\%(\d\+\%(\.\d*\)\=\|\.\d\+\)\%(%\|/-\=\%(\d\+\%(\.\d*\)\=\|\.\d\+\)\)\="

" A terminal (and a `use` path, a test name, a sentence): one line, with
" `\"` and `\\` escapes. Without its closing quote it is an error.
syntax match trellisUnclosedString +"\%([^"\\]\|\\.\)*\\\=$+
syntax region trellisString start=+"+ skip=+\\.+ end=+"+ oneline contains=trellisEscape,@Spell
syntax match trellisEscape +\\.+ contained

syntax match trellisBrace "[{}()]"
syntax match trellisBar "|"

syntax keyword trellisTodo TODO FIXME XXX NOTE contained
syntax match trellisComment "#.*$" contains=trellisTodo,@Spell
" `##` (alone or followed by anything but `#`) documents what follows.
syntax match trellisDocComment "##\%([^#].*\)\=$" contains=trellisTodo,@Spell

" Nothing spans lines.
syntax sync minlines=1

highlight default link trellisKeyword        Keyword
highlight default link trellisInclude        Include
highlight default link trellisModifier       StorageClass
highlight default link trellisSymbol         Type
highlight default link trellisDefinition     Function
highlight default link trellisGrammarName    Identifier
highlight default link trellisWeight         Number
highlight default link trellisString         String
highlight default link trellisEscape         SpecialChar
highlight default link trellisUnclosedString Error
highlight default link trellisBrace          Delimiter
highlight default link trellisBar            Operator
highlight default link trellisComment        Comment
highlight default link trellisDocComment     SpecialComment
highlight default link trellisTodo           Todo

let b:current_syntax = 'trellis'

let &cpo = s:cpo_save
unlet s:cpo_save
