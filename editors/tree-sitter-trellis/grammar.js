/**
 * @file Tree-sitter grammar for the trellis grammar language (`.trellis`).
 *
 * It follows the language's implementation, grammar-lang/src/syntax/lexer.rs
 * (tokens) and parser.rs (structure), which the CLI and the language server
 * use; where this file and those disagree, those are right.
 *
 * Layout that matters:
 *  - a newline ends an alternative inside a block and a case inside a test
 *    block, so newlines are tokens of their own here (not `extras`);
 *    between declarations and inside a tree's brackets they are free;
 *  - the eight keywords are reserved: never a symbol name, anywhere.
 */

/// A non-terminal name: a letter or `_`, then letters, digits, `_ - . ' +`.
const SYMBOL = /[\p{L}_][\p{L}\p{N}_\-.'+]*/;

/// A number as the lexer's weight pattern spells it.
const NUMBER = /([0-9]+(\.[0-9]*)?|\.[0-9]+)/.source;

/// A weight: decimal `0.25`, fraction `1/4`, percent `25%`, optionally
/// negative (the checker reports a negative weight; the syntax allows it).
const WEIGHT = new RegExp(`-?${NUMBER}(%|\\/-?${NUMBER})?`);

/// `rule` as lines: each occurrence but the last ends with a separator,
/// and separators may repeat.
function lines($, rule, separator) {
  return seq(repeat(choice(separator, seq(rule, separator))), optional(rule));
}

module.exports = grammar({
  name: 'trellis',

  extras: $ => [/[ \t\f\r\uFEFF]/, $.comment, $.doc_comment],

  word: $ => $.symbol,

  reserved: {
    global: _ => ['grammar', 'start', 'use', 'relative', 'test', 'accept', 'reject', 'as'],
  },

  rules: {
    source_file: $ => repeat(choice($._declaration, $._newline)),

    _declaration: $ => choice(
      $.grammar_declaration,
      $.start_declaration,
      $.use_declaration,
      $.block,
      $.test_block,
    ),

    /// `grammar ferry_kiosk`: the grammar's name.
    grammar_declaration: $ => seq('grammar', field('name', $.symbol)),

    /// `start Request`: the start symbol.
    start_declaration: $ => seq('start', field('symbol', $.symbol)),

    /// `use "lexicon.trellis"`: another file's blocks.
    use_declaration: $ => seq('use', field('path', $.string)),

    /// `Name [relative] { alternatives }`: every rule of one symbol.
    block: $ => seq(
      field('name', $.symbol),
      optional(field('relative', 'relative')),
      '{',
      lines($, $.alternative, choice($._newline, '|')),
      '}',
    ),

    /// `[weight] item item ...`. A weight with no items is kept (the
    /// checker reports it as an empty rule).
    alternative: $ => choice(
      seq(field('weight', $.weight), repeat(field('item', $._item))),
      repeat1(field('item', $._item)),
    ),

    _item: $ => choice($.symbol, $.string),

    /// `test "name" { cases }`.
    test_block: $ => seq(
      'test',
      field('name', $.string),
      '{',
      lines($, $.test_case, $._newline),
      '}',
    ),

    /// `accept "sentence" [as TREE]` or `reject "sentence"` (a `reject`
    /// has no expected tree).
    test_case: $ => choice(
      seq(
        field('expect', 'accept'),
        field('sentence', $.string),
        optional(seq('as', field('tree', $.tree))),
      ),
      seq(field('expect', 'reject'), field('sentence', $.string)),
    ),

    /// `(Label child ...)`: an expected tree, laid out freely over lines.
    tree: $ => seq(
      '(',
      repeat($._newline),
      field('label', $.symbol),
      repeat(choice($._newline, field('child', choice($.tree, $.string)))),
      ')',
    ),

    symbol: _ => SYMBOL,

    weight: _ => token(WEIGHT),

    /// A quoted terminal (or path, test name, sentence) with `\"` and `\\`
    /// escapes; any other escaped character stands for itself.
    string: $ => seq(
      '"',
      repeat(choice($.string_content, $.escape_sequence)),
      token.immediate('"'),
    ),

    string_content: _ => token.immediate(prec(1, /[^"\\\n]+/)),

    escape_sequence: _ => token.immediate(/\\[^\n]/),

    /// `## ...`: documentation of the declaration or alternative below.
    /// (`###` starts a plain comment.)
    doc_comment: _ => token(/##([^#\n][^\n]*)?/),

    /// `# ...` to the end of the line. Disjoint from `doc_comment`: `#`,
    /// `#x` and `###x` are comments, `##` and `##x` are not.
    comment: _ => token(/#([^#\n][^\n]*)?|###[^\n]*/),

    _newline: _ => /\n/,
  },
});
