//! Unseen words: terminals that stand for any word the grammar does not
//! otherwise know, by the word's shape.
//!
//! A grammar may list, among its terminals, a reserved spelling
//! `"<unseen:CLASS>"` (or the generic `"<unseen>"`). A word of a sentence
//! that is no terminal of the grammar is then read as the first terminal of
//! its **class chain** — from its most specific shape class to the generic
//! one — that the grammar has; a grammar without such terminals reads every
//! sentence exactly as the language says (words must match terminals).
//! `trellis learn --rare K` writes these terminals, fed by the words seen at
//! most K times; a hand-written grammar may use them too:
//!
//! ```text
//! Vessel {
//!   "ferry" | "tug"
//!   "<unseen:capitalised>"     # any unknown capitalised word: a ship's name
//! }
//! ```
//!
//! The classes, each with its chain (our own scheme, documented in README):
//!
//! | class | the word | chain |
//! |---|---|---|
//! | `number` | digits, possibly with `. , : / -` between (`1995`, `3.5`, `12:30`) | `number`, `has-digit` |
//! | `has-digit` | some other word with a digit (`B52`, `4th`) | `has-digit` |
//! | `all-caps` | two or more letters, all upper-case (`NATO`) | `all-caps`, `capitalised` |
//! | `capitalised` | begins with an upper-case letter (`Aino`) | `capitalised` |
//! | `mixed-case` | lower-case first, an upper-case letter later (`iPhone`) | `mixed-case` |
//! | `hyphenated` | lower-case with a hyphen (`well-kept`) | `hyphenated`, `lower` |
//! | `suffix-S` | lower-case, ending in the suffix S (`sailing` → `suffix-ing`) | `suffix-S`, `lower` |
//! | `lower` | other lower-case words | `lower` |
//! | `symbol` | no letter and no digit (`&`, `--`) | `symbol` |
//!
//! and every chain ends in the generic `"<unseen>"`. The suffixes, longest
//! first: `-tion -ness -ment -able -ible -less -ing -ful -ous -ive -ity -est
//! -ize -ise -ed -er -ly -al -s` (a final `-s` only after a letter other
//! than `s`: `glass` is `lower`). Words with letters of a caseless script
//! are in no class of their own: the generic one.

/// The prefix of every unseen-word terminal.
const PREFIX: &str = "<unseen";

/// The generic unseen-word terminal: the end of every chain.
pub const GENERIC: &str = "<unseen>";

/// The suffix classes, longest suffixes first (the first that matches wins).
const SUFFIXES: &[(&str, &str)] = &[
    ("tion", "<unseen:suffix-tion>"),
    ("ness", "<unseen:suffix-ness>"),
    ("ment", "<unseen:suffix-ment>"),
    ("able", "<unseen:suffix-able>"),
    ("ible", "<unseen:suffix-ible>"),
    ("less", "<unseen:suffix-less>"),
    ("ing", "<unseen:suffix-ing>"),
    ("ful", "<unseen:suffix-ful>"),
    ("ous", "<unseen:suffix-ous>"),
    ("ive", "<unseen:suffix-ive>"),
    ("ity", "<unseen:suffix-ity>"),
    ("est", "<unseen:suffix-est>"),
    ("ize", "<unseen:suffix-ize>"),
    ("ise", "<unseen:suffix-ise>"),
    ("ed", "<unseen:suffix-ed>"),
    ("er", "<unseen:suffix-er>"),
    ("ly", "<unseen:suffix-ly>"),
    ("al", "<unseen:suffix-al>"),
    ("s", "<unseen:suffix-s>"),
];

const NUMBER: &str = "<unseen:number>";
const HAS_DIGIT: &str = "<unseen:has-digit>";
const ALL_CAPS: &str = "<unseen:all-caps>";
const CAPITALISED: &str = "<unseen:capitalised>";
const MIXED_CASE: &str = "<unseen:mixed-case>";
const HYPHENATED: &str = "<unseen:hyphenated>";
const LOWER: &str = "<unseen:lower>";
const SYMBOL: &str = "<unseen:symbol>";

/// Every unseen-word terminal, the generic one first.
pub fn terminals() -> impl Iterator<Item = &'static str> {
    [
        GENERIC,
        NUMBER,
        HAS_DIGIT,
        ALL_CAPS,
        CAPITALISED,
        MIXED_CASE,
        HYPHENATED,
        LOWER,
        SYMBOL,
    ]
    .into_iter()
    .chain(SUFFIXES.iter().map(|(_, t)| *t))
}

/// Whether `terminal` is one of the reserved unseen-word terminals.
pub fn is_unseen_terminal(terminal: &str) -> bool {
    terminal.starts_with(PREFIX) && terminals().any(|t| t == terminal)
}

/// The class name of an unseen-word terminal (`"<unseen:lower>"` → `lower`,
/// `"<unseen>"` → `unseen`).
pub fn class_name(terminal: &str) -> &str {
    terminal
        .strip_prefix("<unseen:")
        .and_then(|t| t.strip_suffix('>'))
        .unwrap_or("unseen")
}

/// The class chain of `word`: the unseen-word terminals it may be read as,
/// most specific first, always ending in [`GENERIC`].
pub fn chain(word: &str) -> Vec<&'static str> {
    let mut out = Vec::with_capacity(3);
    let letters = word.chars().filter(|c| c.is_alphabetic()).count();
    let upper = word.chars().filter(|c| c.is_uppercase()).count();
    let lower = word.chars().filter(|c| c.is_lowercase()).count();
    let digits = word.chars().filter(|c| c.is_ascii_digit()).count();
    let first = word.chars().next();
    if digits > 0 {
        let numeric = first.is_some_and(|c| c.is_ascii_digit())
            && word
                .chars()
                .all(|c| c.is_ascii_digit() || matches!(c, '.' | ',' | ':' | '/' | '-'));
        if numeric {
            out.push(NUMBER);
        }
        out.push(HAS_DIGIT);
    } else if letters == 0 {
        out.push(SYMBOL);
    } else if upper >= 2 && lower == 0 {
        out.push(ALL_CAPS);
        out.push(CAPITALISED);
    } else if first.is_some_and(char::is_uppercase) {
        out.push(CAPITALISED);
    } else if upper > 0 {
        out.push(MIXED_CASE);
    } else if lower == letters {
        if word.contains('-') {
            out.push(HYPHENATED);
        } else if let Some(suffix) = suffix_class(word) {
            out.push(suffix);
        }
        out.push(LOWER);
    }
    out.push(GENERIC);
    out
}

/// The suffix class of a lower-case word, if it has one: the word must be
/// longer than the suffix by at least two characters (`bed` is not `-ed`).
fn suffix_class(word: &str) -> Option<&'static str> {
    let len = word.chars().count();
    SUFFIXES.iter().find_map(|&(suffix, class)| {
        let stem = word.strip_suffix(suffix)?;
        if len < suffix.chars().count() + 2 {
            return None;
        }
        let plural_s = suffix != "s"
            || stem
                .chars()
                .next_back()
                .is_some_and(|c| c.is_alphabetic() && c != 's');
        plural_s.then_some(class)
    })
}

/// The most specific class of `word` (the first of its chain).
pub fn class_of(word: &str) -> &'static str {
    chain(word)[0]
}

/// What an unknown `word` is read as: the first terminal of its chain for
/// which `known` holds (`None`: the grammar has none of them, and the word
/// stays unknown). Call it only for words that are not terminals themselves.
pub fn resolve(word: &str, known: impl Fn(&str) -> bool) -> Option<&'static str> {
    chain(word).into_iter().find(|t| known(t))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_class_terminal_is_reserved_and_has_an_identifier_name() {
        for t in terminals() {
            assert!(is_unseen_terminal(t), "{t}");
            assert!(
                crate::syntax::lexer::is_valid_symbol_name(class_name(t)),
                "{t}"
            );
        }
        assert!(!is_unseen_terminal("<unseen:capitalized>"));
        assert!(!is_unseen_terminal("unseen"));
    }
}
