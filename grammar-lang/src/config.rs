//! Check configuration, read from a `trellis.toml` text.
//!
//! ```toml
//! max-arity = 6
//!
//! [checks]
//! unreachable = "error"
//! duplicate-rule = "off"
//! ```
//!
//! Finding the file is the shell's job; this module only interprets its text.

use crate::diagnostic::{Code, Severity};
use std::collections::BTreeMap;

/// The default longest right-hand side accepted without an `arity` finding.
pub const DEFAULT_MAX_ARITY: usize = 8;

/// What a check should do: report at a severity, or stay silent.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    Off,
    At(Severity),
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Config {
    pub levels: BTreeMap<Code, Level>,
    pub max_arity: usize,
}

impl Default for Config {
    fn default() -> Self {
        Config {
            levels: BTreeMap::new(),
            max_arity: DEFAULT_MAX_ARITY,
        }
    }
}

/// A problem in a configuration text, with the byte range it concerns if known.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ConfigError {
    pub message: String,
    pub span: Option<std::ops::Range<usize>>,
}

#[derive(serde::Deserialize)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
struct RawConfig {
    max_arity: Option<toml::Spanned<i64>>,
    #[serde(default)]
    checks: BTreeMap<toml::Spanned<String>, toml::Spanned<String>>,
}

impl Config {
    /// The severity a diagnostic of `code` should get, or `None` if disabled.
    pub fn level(&self, code: Code) -> Option<Severity> {
        match self.levels.get(&code) {
            Some(Level::Off) => None,
            Some(Level::At(sev)) => Some(*sev),
            None => Some(code.default_severity()),
        }
    }

    /// The severity for a finding of `code` that a check emitted at
    /// `emitted`, or `None` if the check is off. A level set in
    /// `trellis.toml` wins; otherwise the check's own choice stands (some
    /// checks pick the severity per finding, e.g. `unary-cycle`).
    pub fn severity(&self, code: Code, emitted: Severity) -> Option<Severity> {
        match self.levels.get(&code) {
            Some(Level::Off) => None,
            Some(Level::At(sev)) => Some(*sev),
            None => Some(emitted),
        }
    }

    /// Reads a `trellis.toml` text. Every problem is reported, not just the first.
    pub fn from_toml(text: &str) -> Result<Config, Vec<ConfigError>> {
        let raw: RawConfig = toml::from_str(text).map_err(|e| {
            vec![ConfigError {
                message: e.message().to_string(),
                span: e.span(),
            }]
        })?;
        let mut config = Config::default();
        let mut errors = Vec::new();
        if let Some(arity) = raw.max_arity {
            let span = arity.span();
            match usize::try_from(*arity.get_ref()) {
                Ok(n) if n >= 2 => config.max_arity = n,
                _ => errors.push(ConfigError {
                    message: "`max-arity` must be a whole number of at least 2".into(),
                    span: Some(span),
                }),
            }
        }
        for (key, value) in raw.checks {
            let Some(code) = Code::parse(key.get_ref()) else {
                let known: Vec<_> = Code::ALL.iter().map(|c| c.as_str()).collect();
                errors.push(ConfigError {
                    message: format!(
                        "unknown check `{}`; known checks: {}",
                        key.get_ref(),
                        known.join(", ")
                    ),
                    span: Some(key.span()),
                });
                continue;
            };
            let level = match value.get_ref().as_str() {
                "off" => Level::Off,
                other => match Severity::parse(other) {
                    Some(sev) => Level::At(sev),
                    None => {
                        errors.push(ConfigError {
                            message: format!(
                                "`{other}` is not a level for `{}`: use \"error\", \"warning\", \"note\" or \"off\"",
                                code
                            ),
                            span: Some(value.span()),
                        });
                        continue;
                    }
                },
            };
            if code == Code::Syntax && level != Level::At(Severity::Error) {
                errors.push(ConfigError {
                    message: "syntax errors are always errors".into(),
                    span: Some(value.span()),
                });
                continue;
            }
            config.levels.insert(code, level);
        }
        errors.sort_by_key(|e| e.span.as_ref().map_or(0, |s| s.start));
        if errors.is_empty() {
            Ok(config)
        } else {
            Err(errors)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levels_and_arity_are_read() {
        let c = Config::from_toml(
            "max-arity = 5\n[checks]\nunreachable = \"error\"\nduplicate-rule = \"off\"\n",
        )
        .unwrap();
        assert_eq!(c.max_arity, 5);
        assert_eq!(c.level(Code::Unreachable), Some(Severity::Error));
        assert_eq!(c.level(Code::DuplicateRule), None);
        assert_eq!(c.level(Code::Arity), Some(Severity::Warning));
    }

    #[test]
    fn an_explicit_level_overrides_the_severity_a_check_chose() {
        let c = Config::from_toml("[checks]\nunreachable = \"note\"\narity = \"off\"\n").unwrap();
        assert_eq!(
            c.severity(Code::Unreachable, Severity::Warning),
            Some(Severity::Note)
        );
        assert_eq!(c.severity(Code::Arity, Severity::Warning), None);
        // Nothing configured: the emitted severity stands, even if it is not
        // the code's default.
        assert_eq!(
            c.severity(Code::UnaryCycle, Severity::Error),
            Some(Severity::Error)
        );
    }

    #[test]
    fn every_bad_entry_is_reported_with_its_place() {
        let text = "[checks]\nunreachble = \"error\"\narity = \"loud\"\n";
        let errs = Config::from_toml(text).unwrap_err();
        assert_eq!(errs.len(), 2);
        assert!(errs[0].message.contains("unknown check `unreachble`"));
        assert_eq!(&text[errs[0].span.clone().unwrap()], "unreachble");
        assert!(errs[1].message.contains("`loud`"));
    }

    #[test]
    fn unknown_top_level_keys_are_rejected() {
        let errs = Config::from_toml("colour = true").unwrap_err();
        assert!(errs[0].message.contains("colour"), "{:?}", errs);
    }
}
