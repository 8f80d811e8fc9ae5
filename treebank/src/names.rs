//! How treebank labels become trellis symbol names, and back.
//!
//! trellis names are letters, digits and `_ - . ' +`, starting with a
//! letter or `_`. Treebank labels are freer (`PRP$`, `,`, `-LRB-`, `''`),
//! and learning needs two kinds of derived symbol. The scheme, designed so
//! that every step is exactly reversible:
//!
//! * **A label** keeps its letters, digits and inner `-`. Any other
//!   character — and a first character that is not a letter — is written
//!   `_name_` with a readable name (`PRP$` → `PRP_dollar_`, `,` →
//!   `_comma_`, `-LRB-` → `_dash_LRB-`, `_` itself → `_us_`), or
//!   `_uXXXX_` (its code point in hex) where no name is listed. So an
//!   escaped label never contains `.`, `'` or `+`, which the scheme keeps
//!   for itself.
//! * **Parent annotation** (vertical markovization) appends the ancestors'
//!   labels, each after a `.`: `NP.S` is an NP whose parent is an S,
//!   `NP.VP.S` one under a VP under an S.
//! * **Intermediate symbols** of binarization join the parent (with its
//!   annotation) and a list of sibling labels with `+`: `NP+JJ+NN` is "in
//!   an NP, the children JJ NN are still to come" (lossless), and
//!   `NP'+DT+JJ` (the parent followed by `'`) is "in an NP, after … DT JJ"
//!   (horizontal markovization: the last siblings generated).
//!
//! Reading back: a name with a `+` is an intermediate symbol (its children
//! belong to its parent); otherwise everything from the first `.` on is
//! annotation; what remains is unescaped.

use grammar_lang::syntax::lexer::is_valid_symbol_name;

/// Characters with a readable escape name.
const NAMED: &[(char, &str)] = &[
    ('_', "us"),
    ('$', "dollar"),
    (',', "comma"),
    ('.', "period"),
    (':', "colon"),
    (';', "semi"),
    ('\'', "q"),
    ('`', "bq"),
    ('"', "dq"),
    ('#', "hash"),
    ('-', "dash"),
    ('=', "eq"),
    ('+', "plus"),
    ('*', "star"),
    ('/', "slash"),
    ('|', "bar"),
    ('&', "amp"),
    ('%', "pct"),
    ('!', "bang"),
    ('?', "qm"),
    ('^', "caret"),
    ('@', "at"),
    ('<', "lt"),
    ('>', "gt"),
    ('[', "lsq"),
    (']', "rsq"),
    ('{', "lcb"),
    ('}', "rcb"),
    ('~', "tilde"),
];

/// The trellis name of a treebank label.
pub fn escape(label: &str) -> String {
    let mut out = String::with_capacity(label.len() + 4);
    for (i, c) in label.chars().enumerate() {
        let plain = if c.is_ascii() {
            c.is_ascii_alphabetic() || (i > 0 && (c.is_ascii_digit() || c == '-'))
        } else {
            // Whatever the language itself takes as a letter (or, after
            // the first, a digit): ask its lexer.
            let mut probe = String::from(if i == 0 { "" } else { "a" });
            probe.push(c);
            is_valid_symbol_name(&probe)
        };
        if plain {
            out.push(c);
            continue;
        }
        out.push('_');
        match NAMED.iter().find(|(n, _)| *n == c) {
            Some((_, name)) => out.push_str(name),
            None if c.is_numeric() && i == 0 && c.is_ascii_digit() => {
                out.push('d');
                out.push(c);
            }
            None => {
                out.push('u');
                out.push_str(&format!("{:04X}", c as u32));
            }
        }
        out.push('_');
    }
    if out.is_empty() {
        out.push_str("_empty_");
    }
    out
}

/// The treebank label of an escaped name (`None` if it is not one).
pub fn unescape(name: &str) -> Option<String> {
    if name == "_empty_" {
        return Some(String::new());
    }
    let mut out = String::with_capacity(name.len());
    let mut rest = name;
    while let Some(c) = rest.chars().next() {
        if c != '_' {
            out.push(c);
            rest = &rest[c.len_utf8()..];
            continue;
        }
        let end = rest[1..].find('_')? + 1;
        let code = &rest[1..end];
        let decoded = if let Some((c, _)) = NAMED.iter().find(|(_, n)| *n == code) {
            *c
        } else if let Some(hex) = code.strip_prefix('u') {
            char::from_u32(u32::from_str_radix(hex, 16).ok()?)?
        } else if let Some(digit) = code.strip_prefix('d') {
            let mut chars = digit.chars();
            let d = chars.next().filter(|d| d.is_ascii_digit())?;
            if chars.next().is_some() {
                return None;
            }
            d
        } else {
            return None;
        };
        out.push(decoded);
        rest = &rest[end + 1..];
    }
    Some(out)
}

/// A label annotated with its ancestors' labels (nearest first), all
/// already escaped.
pub fn annotated(label: &str, ancestors: &[&str]) -> String {
    let mut out = label.to_string();
    for a in ancestors {
        out.push('.');
        out.push_str(a);
    }
    out
}

/// Whether a symbol name is an intermediate symbol of binarization.
pub fn is_intermediate(name: &str) -> bool {
    name.contains('+')
}

/// The treebank label a symbol name stands for: annotation dropped and the
/// label unescaped (`None` for an intermediate symbol or a name the scheme
/// did not make).
pub fn label_of(name: &str) -> Option<String> {
    if is_intermediate(name) {
        return None;
    }
    let base = name.split('.').next().unwrap_or(name);
    unescape(base)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_become_valid_names_and_come_back() {
        for (label, name) in [
            ("NP", "NP"),
            ("PRP$", "PRP_dollar_"),
            (",", "_comma_"),
            ("-LRB-", "_dash_LRB-"),
            ("-NONE-", "_dash_NONE-"),
            ("''", "_q__q_"),
            ("S1", "S1"),
            ("1", "_d1_"),
            ("WHNP_x", "WHNP_us_x"),
            ("Ölfärbung", "Ölfärbung"),
            ("A.B", "A_period_B"),
            ("", "_empty_"),
        ] {
            assert_eq!(escape(label), name, "{label}");
            assert_eq!(unescape(name).as_deref(), Some(label), "{name}");
        }
    }

    #[test]
    fn annotation_and_intermediates_are_told_apart() {
        assert_eq!(
            label_of(&annotated("NP", &["VP", "S"])).as_deref(),
            Some("NP")
        );
        assert_eq!(label_of("PRP_dollar_.NP").as_deref(), Some("PRP$"));
        assert!(is_intermediate("NP+JJ+NN"));
        assert_eq!(label_of("NP+JJ+NN"), None);
    }
}
