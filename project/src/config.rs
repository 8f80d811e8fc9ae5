//! `trellis.toml`: finding the file that configures a grammar, noticing
//! when it changes, and reading it.
//!
//! The configuration that applies to a grammar file is the nearest
//! `trellis.toml` in the file's directory or any directory above it:
//!
//! ```toml
//! max-arity = 6
//!
//! [checks]
//! unreachable = "error"
//! duplicate-rule = "off"
//!
//! [format]
//! width = 100
//!
//! [editor]
//! uncovered-rules = "hint"   # or "off", the default
//! parse-seconds = 30         # stop a parse in the editor after this long
//! parse-chart-mib = 1024     # refuse a sentence whose chart needs more
//! parse-max-kbest = 100      # the most trees one parse request may ask for
//!
//! [files]
//! max-size-mib = 64          # the largest grammar file read (the default)
//! confine-use = true         # `use` reads only below this file's directory
//! ```
//!
//! `[editor] uncovered-rules` sets the level of the `uncovered` code, which
//! only the language server reports (it comes from running the grammar's
//! tests, not from checking it), so it has a section of its own rather than
//! an entry in `[checks]`.

use crate::files;
use grammar_lang::config::Level;
use grammar_lang::source::normalize;
use grammar_lang::Severity;
use grammar_lang::{Code, Config, Diagnostic, FileId, FileLoader, Location, SourceMap, Span};
use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};

/// The name of the configuration file looked up above a grammar.
pub const FILE_NAME: &str = "trellis.toml";

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
    #[serde(default)]
    editor: RawEditor,
    format: Option<RawFormat>,
    #[serde(default)]
    files: RawFiles,
}

/// `[files]`: how grammar files are read.
#[derive(serde::Deserialize, Default)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
struct RawFiles {
    max_size_mib: Option<toml::Spanned<i64>>,
    confine_use: Option<bool>,
}

/// What `[files]` says, before it is tied to the file that says it.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct FileSettings {
    /// `max-size-mib`, if set.
    pub max_size_mib: Option<u64>,
    /// `confine-use`.
    pub confine_use: bool,
}

impl FileSettings {
    /// The reading policy these settings make, for the `trellis.toml` at
    /// `toml` (absolute; its directory is the project root) shown as `shown`.
    pub fn policy(&self, toml: &Path, shown: &Path) -> files::ReadPolicy {
        let mut policy = files::ReadPolicy::default();
        if let Some(mib) = self.max_size_mib {
            policy.max_bytes = mib << 20;
            policy.limit_set_by = Some(shown.to_path_buf());
        }
        if self.confine_use {
            policy.confine = Some(files::Confinement {
                root: toml
                    .parent()
                    .map_or_else(|| PathBuf::from("/"), Path::to_path_buf),
                set_by: shown.to_path_buf(),
            });
        }
        policy
    }
}

/// The range `[files] max-size-mib` accepts (1 MiB to 16 GiB).
const MAX_SIZES_MIB: std::ops::RangeInclusive<u64> = 1..=16384;

/// `[editor]`: what the language server shows beyond the checks, and the
/// limits of the parses it runs.
#[derive(serde::Deserialize, Default)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
struct RawEditor {
    uncovered_rules: Option<toml::Spanned<String>>,
    parse_seconds: Option<toml::Spanned<toml::Value>>,
    parse_chart_mib: Option<toml::Spanned<i64>>,
    parse_max_kbest: Option<toml::Spanned<i64>>,
}

/// The limits of a parse the language server runs (`[editor]` in
/// `trellis.toml`): a request that needs more is refused or stopped with a
/// message naming the setting to raise.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EditorLimits {
    /// `parse-seconds`: a parse still running after this long is stopped.
    pub parse_seconds: f64,
    /// `parse-chart-mib`: a sentence whose chart needs more is refused.
    pub parse_chart_mib: u64,
    /// `parse-max-kbest`: the most trees one request may ask for.
    pub parse_max_kbest: usize,
}

impl Default for EditorLimits {
    fn default() -> Self {
        EditorLimits {
            parse_seconds: 30.0,
            parse_chart_mib: 1024,
            parse_max_kbest: 100,
        }
    }
}

/// The largest `parse-seconds` (a day): beyond it, a limit is no limit.
const MAX_PARSE_SECONDS: f64 = 86_400.0;

#[derive(serde::Deserialize)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
struct RawFormat {
    width: Option<toml::Spanned<i64>>,
}

/// The narrowest and widest line width `[format] width` accepts.
const WIDTHS: std::ops::RangeInclusive<usize> = 20..=1000;

/// Reads a `trellis.toml` text. Every problem is reported, not just the first.
pub fn parse(text: &str) -> Result<Config, Vec<ConfigError>> {
    parse_all(text).map(|(config, _, _)| config)
}

/// Reads a `trellis.toml` text: the checks' configuration, the `[files]`
/// settings and the editor's parse limits (`[editor]`). Every problem is
/// reported, not just the first.
pub fn parse_all(text: &str) -> Result<(Config, FileSettings, EditorLimits), Vec<ConfigError>> {
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
    if let Some(value) = raw.editor.uncovered_rules {
        match value.get_ref().as_str() {
            "off" => {}
            "hint" => {
                config.levels.insert(
                    Code::Uncovered,
                    Level::At(Code::Uncovered.default_severity()),
                );
            }
            other => errors.push(ConfigError {
                message: format!(
                    "`{other}` is not a setting for `uncovered-rules`: use \"hint\" or \"off\""
                ),
                span: Some(value.span()),
            }),
        }
    }
    let mut limits = EditorLimits::default();
    if let Some(value) = raw.editor.parse_seconds {
        let seconds = match value.get_ref() {
            toml::Value::Integer(n) => Some(*n as f64),
            toml::Value::Float(x) => Some(*x),
            _ => None,
        };
        match seconds {
            Some(s) if s > 0.0 && s <= MAX_PARSE_SECONDS => limits.parse_seconds = s,
            _ => errors.push(ConfigError {
                message: format!(
                    "`parse-seconds` in `[editor]` must be a number of seconds above 0 and at \
                     most {MAX_PARSE_SECONDS}"
                ),
                span: Some(value.span()),
            }),
        }
    }
    if let Some(value) = raw.editor.parse_chart_mib {
        match u64::try_from(*value.get_ref()) {
            Ok(n) if n >= 1 => limits.parse_chart_mib = n,
            _ => errors.push(ConfigError {
                message:
                    "`parse-chart-mib` in `[editor]` must be a whole number of MiB, at least 1"
                        .into(),
                span: Some(value.span()),
            }),
        }
    }
    if let Some(value) = raw.editor.parse_max_kbest {
        match usize::try_from(*value.get_ref()) {
            Ok(n) if n >= 1 => limits.parse_max_kbest = n,
            _ => errors.push(ConfigError {
                message: "`parse-max-kbest` in `[editor]` must be a whole number, at least 1"
                    .into(),
                span: Some(value.span()),
            }),
        }
    }
    if let Some(width) = raw.format.and_then(|f| f.width) {
        let span = width.span();
        match usize::try_from(*width.get_ref()) {
            Ok(n) if WIDTHS.contains(&n) => config.format.width = n,
            _ => errors.push(ConfigError {
                message: format!(
                    "`width` in `[format]` must be a whole number from {} to {}",
                    WIDTHS.start(),
                    WIDTHS.end()
                ),
                span: Some(span),
            }),
        }
    }
    let mut files = FileSettings {
        max_size_mib: None,
        confine_use: raw.files.confine_use.unwrap_or(false),
    };
    if let Some(mib) = raw.files.max_size_mib {
        match u64::try_from(*mib.get_ref()) {
            Ok(n) if MAX_SIZES_MIB.contains(&n) => files.max_size_mib = Some(n),
            _ => errors.push(ConfigError {
                message: format!(
                    "`max-size-mib` in `[files]` must be a whole number from {} to {}",
                    MAX_SIZES_MIB.start(),
                    MAX_SIZES_MIB.end()
                ),
                span: Some(mib.span()),
            }),
        }
    }
    for (key, value) in raw.checks {
        let code = Code::parse(key.get_ref());
        if let Some(code) = code.filter(|c| !c.is_check()) {
            errors.push(ConfigError {
                message: format!(
                    "`{code}` is not a check that `[checks]` can set: the editor shows it \
                     when `[editor]` says `uncovered-rules = \"hint\"`"
                ),
                span: Some(key.span()),
            });
            continue;
        }
        let Some(code) = code else {
            let known: Vec<_> = Code::ALL
                .iter()
                .filter(|c| c.is_check())
                .map(|c| c.as_str())
                .collect();
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
        Ok((config, files, limits))
    } else {
        Err(errors)
    }
}

/// A `trellis.toml` that could not be used.
#[derive(Clone, Debug)]
pub struct ConfigProblem {
    /// The file, as it should be shown to the user.
    pub path: PathBuf,
    pub kind: ProblemKind,
}

#[derive(Clone, Debug)]
pub enum ProblemKind {
    /// The file exists but cannot be read as text.
    Unreadable(String),
    /// The text is read; these entries are wrong.
    Invalid {
        text: String,
        errors: Vec<ConfigError>,
    },
}

impl ConfigProblem {
    /// The problems as diagnostics with code `config`, located in the file
    /// (`sources` holds the file when its text is known).
    pub fn diagnostics(&self) -> (SourceMap, Vec<Diagnostic>) {
        let mut sources = SourceMap::new();
        match &self.kind {
            ProblemKind::Unreadable(reason) => {
                let file = sources.add(self.path.clone(), String::new());
                let d = Diagnostic::new(
                    Code::Config,
                    Location::new(file, Span::point(0)),
                    format!("cannot read {}: {reason}", self.path.display()),
                );
                (sources, vec![d])
            }
            ProblemKind::Invalid { text, errors } => {
                let file: FileId = sources.add(self.path.clone(), text.clone());
                let diagnostics = errors
                    .iter()
                    .map(|e| {
                        let span = e
                            .span
                            .clone()
                            .map_or(Span::point(0), |r| Span::new(r.start, r.end.max(r.start)));
                        Diagnostic::new(Code::Config, Location::new(file, span), e.message.clone())
                            .with_label("this entry")
                    })
                    .collect();
                (sources, diagnostics)
            }
        }
    }
}

impl std::fmt::Display for ConfigProblem {
    /// One line: what is wrong with the file and that the default levels
    /// apply instead (where a shell goes on with them).
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match &self.kind {
            ProblemKind::Unreadable(reason) => {
                write!(f, "cannot read {}: {reason}", self.path.display())
            }
            ProblemKind::Invalid { errors, .. } => {
                let list: Vec<&str> = errors.iter().map(|e| e.message.as_str()).collect();
                write!(
                    f,
                    "{} is not a valid trellis configuration: {}",
                    self.path.display(),
                    list.join("; ")
                )
            }
        }
    }
}

/// Reads and interprets the configuration file at `path` through `loader`
/// (an editor's unsaved `trellis.toml` counts); `shown` is how the path is
/// shown in problems.
pub fn load(path: &Path, shown: &Path, loader: &dyn FileLoader) -> Result<Config, ConfigProblem> {
    load_all(path, shown, loader).map(|(config, _, _)| config)
}

/// [`load`], with the reading policy the file's `[files]` section makes and
/// the editor's parse limits.
pub fn load_all(
    path: &Path,
    shown: &Path,
    loader: &dyn FileLoader,
) -> Result<(Config, files::ReadPolicy, EditorLimits), ConfigProblem> {
    let text = loader.load(path).map_err(|failure| ConfigProblem {
        path: shown.to_path_buf(),
        kind: ProblemKind::Unreadable(format!("{}; {}", failure.reason, failure.help)),
    })?;
    let (config, settings, limits) = parse_all(&text).map_err(|errors| ConfigProblem {
        path: shown.to_path_buf(),
        kind: ProblemKind::Invalid { text, errors },
    })?;
    Ok((config, settings.policy(&absolute(path), shown), limits))
}

/// What identifies a version of a file on disk: its modification time and
/// length.
pub type Stamp = (Option<std::time::SystemTime>, u64);

/// Each place a configuration file could be for one grammar, nearest first,
/// with its stamp (`None`: no file there). Taken before the configuration
/// is read, and compared later, it tells whether the configuration that
/// applies may have changed: a file appeared, vanished or was edited.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Stamps(Vec<(PathBuf, Option<Stamp>)>);

impl Stamps {
    /// The stamps of every place a `trellis.toml` could configure the
    /// grammar file `grammar` (its directory and each one above it).
    pub fn of(grammar: &Path) -> Stamps {
        let grammar = absolute(grammar);
        Stamps(
            grammar
                .ancestors()
                .skip(1)
                .map(|dir| {
                    let candidate = dir.join(FILE_NAME);
                    let stamp = std::fs::metadata(&candidate)
                        .ok()
                        .filter(|m| m.is_file())
                        .map(|m| (m.modified().ok(), m.len()));
                    (candidate, stamp)
                })
                .collect(),
        )
    }

    /// The configuration file that applies: the nearest one that exists.
    pub fn nearest(&self) -> Option<&Path> {
        self.0
            .iter()
            .find(|(_, stamp)| stamp.is_some())
            .map(|(path, _)| path.as_path())
    }
}

/// `path` made absolute (against the working directory) and free of `.`/`..`.
fn absolute(path: &Path) -> PathBuf {
    normalize(&std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf()))
}

/// `path` relative to the working directory when it lies below it.
fn for_display(path: &Path) -> PathBuf {
    std::env::current_dir()
        .ok()
        .and_then(|cwd| {
            path.strip_prefix(absolute(&cwd))
                .ok()
                .map(Path::to_path_buf)
        })
        .unwrap_or_else(|| path.to_path_buf())
}

/// The nearest `trellis.toml` in `dir` or above it.
pub fn find_from(dir: &Path) -> Option<PathBuf> {
    absolute(dir)
        .ancestors()
        .map(|d| d.join(FILE_NAME))
        .find(|candidate| candidate.is_file())
}

/// The configuration of one grammar as an editor session sees it: read
/// through `loader`, with the stamps taken before reading. A problem with
/// the file leaves the default configuration in force, and says why.
pub struct Settings {
    pub config: Config,
    /// The limits of the parses the editor runs (`[editor]`).
    pub limits: EditorLimits,
    /// How the grammar's files are read (`[files]`).
    pub policy: files::ReadPolicy,
    pub problem: Option<ConfigProblem>,
    pub stamps: Stamps,
}

impl Settings {
    pub fn for_grammar(grammar: &Path, loader: &dyn FileLoader) -> Settings {
        // Taken before reading: an edit in between only costs one more read.
        let stamps = Stamps::of(grammar);
        let ((config, policy, limits), problem) = match stamps.nearest() {
            None => (Default::default(), None),
            Some(path) => match load_all(path, path, loader) {
                Ok(loaded) => (loaded, None),
                Err(problem) => (Default::default(), Some(problem)),
            },
        };
        Settings {
            config,
            limits,
            policy,
            problem,
            stamps,
        }
    }
}

/// Finds the configuration of each grammar file of a command-line run,
/// reading every `trellis.toml` once however many files it governs.
#[derive(Default)]
pub struct Resolver {
    by_dir: HashMap<PathBuf, Option<PathBuf>>,
    loaded: HashMap<PathBuf, Result<(Config, files::ReadPolicy), ConfigProblem>>,
}

impl Resolver {
    pub fn new() -> Self {
        Resolver::default()
    }

    /// The configuration for the grammar file `grammar` (the default one
    /// when no `trellis.toml` is found above it); problems name the file
    /// relative to the working directory.
    pub fn for_grammar(&mut self, grammar: &Path) -> Result<Config, ConfigProblem> {
        let dir = absolute(grammar)
            .parent()
            .map_or_else(|| PathBuf::from("/"), Path::to_path_buf);
        self.for_dir(&dir)
    }

    /// Every configuration file this resolver found unusable, once each,
    /// in path order.
    pub fn problems(&self) -> Vec<ConfigProblem> {
        let mut problems: Vec<ConfigProblem> = self
            .loaded
            .values()
            .filter_map(|r| r.as_ref().err().cloned())
            .collect();
        problems.sort_by(|a, b| a.path.cmp(&b.path));
        problems
    }

    /// The configuration for text that belongs in `dir` (standard input
    /// formatted there, say), found as for a grammar file in `dir`.
    pub fn for_dir(&mut self, dir: &Path) -> Result<Config, ConfigProblem> {
        self.all_for_dir(dir).map(|(config, _)| config)
    }

    /// How the files of the grammar `grammar` are read (`[files]` in its
    /// `trellis.toml`; the default policy when there is none or it is
    /// unusable, which [`Resolver::problems`] reports).
    pub fn policy_for_grammar(&mut self, grammar: &Path) -> files::ReadPolicy {
        let dir = absolute(grammar)
            .parent()
            .map_or_else(|| PathBuf::from("/"), Path::to_path_buf);
        self.all_for_dir(&dir)
            .map(|(_, policy)| policy)
            .unwrap_or_default()
    }

    fn all_for_dir(&mut self, dir: &Path) -> Result<(Config, files::ReadPolicy), ConfigProblem> {
        let dir = absolute(dir);
        let found = self
            .by_dir
            .entry(dir.clone())
            .or_insert_with(|| find_from(&dir))
            .clone();
        let Some(path) = found else {
            return Ok(Default::default());
        };
        self.loaded
            .entry(path.clone())
            .or_insert_with(|| {
                load_all(&path, &for_display(&path), &files::DiskLoader::default())
                    .map(|(config, policy, _)| (config, policy))
            })
            .clone()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

    /// The checks' configuration and the editor's limits of a text.
    fn parse_with_limits(text: &str) -> Result<(Config, EditorLimits), Vec<ConfigError>> {
        parse_all(text).map(|(config, _, limits)| (config, limits))
    }

    #[test]
    fn levels_and_arity_are_read() {
        let c =
            parse("max-arity = 5\n[checks]\nunreachable = \"error\"\nduplicate-rule = \"off\"\n")
                .unwrap();
        assert_eq!(c.max_arity, 5);
        assert_eq!(c.level(Code::Unreachable), Some(Severity::Error));
        assert_eq!(c.level(Code::DuplicateRule), None);
        assert_eq!(c.level(Code::Arity), Some(Severity::Warning));
    }

    #[test]
    fn an_explicit_level_overrides_the_severity_a_check_chose() {
        let c = parse("[checks]\nunreachable = \"note\"\narity = \"off\"\n").unwrap();
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
        let errs = parse(text).unwrap_err();
        assert_eq!(errs.len(), 2);
        assert!(errs[0].message.contains("unknown check `unreachble`"));
        assert_eq!(&text[errs[0].span.clone().unwrap()], "unreachble");
        assert!(errs[1].message.contains("`loud`"));
    }

    #[test]
    fn uncovered_rules_are_off_unless_the_editor_section_asks_for_hints() {
        let off = parse("").unwrap();
        assert_eq!(off.level(Code::Uncovered), None);
        let off = parse("[editor]\nuncovered-rules = \"off\"\n").unwrap();
        assert_eq!(off.level(Code::Uncovered), None);
        let on = parse("[editor]\nuncovered-rules = \"hint\"\n").unwrap();
        assert_eq!(on.level(Code::Uncovered), Some(Severity::Note));
    }

    #[test]
    fn the_editor_parse_limits_are_read_and_checked() {
        let (_, limits) = parse_with_limits("").unwrap();
        assert_eq!(limits, EditorLimits::default());
        let text = "[editor]\nparse-seconds = 2.5\nparse-chart-mib = 64\nparse-max-kbest = 7\n";
        let (_, limits) = parse_with_limits(text).unwrap();
        assert_eq!(
            limits,
            EditorLimits {
                parse_seconds: 2.5,
                parse_chart_mib: 64,
                parse_max_kbest: 7
            }
        );
        assert_eq!(
            parse_with_limits("[editor]\nparse-seconds = 3\n")
                .unwrap()
                .1
                .parse_seconds,
            3.0
        );
        let text = "[editor]\nparse-seconds = 0\nparse-chart-mib = -1\nparse-max-kbest = 0\n";
        let errs = parse_with_limits(text).unwrap_err();
        assert_eq!(errs.len(), 3, "{errs:?}");
        assert!(errs[0].message.contains("`parse-seconds`"), "{errs:?}");
        assert!(errs[2].message.contains("`parse-max-kbest`"), "{errs:?}");
        assert_eq!(&text[errs[0].span.clone().unwrap()], "0");
        assert!(errs[1].message.contains("`parse-chart-mib`"), "{errs:?}");
        // A string where a number belongs is refused by the reader itself.
        let errs = parse_with_limits("[editor]\nparse-max-kbest = \"all\"\n").unwrap_err();
        assert_eq!(errs.len(), 1, "{errs:?}");
    }

    #[test]
    fn uncovered_rules_are_set_in_the_editor_section_only() {
        let text = "[checks]\nuncovered = \"note\"\n[editor]\nuncovered-rules = \"loud\"\n";
        let errs = parse(text).unwrap_err();
        assert_eq!(errs.len(), 2, "{errs:?}");
        assert_eq!(&text[errs[0].span.clone().unwrap()], "uncovered");
        assert!(errs[0].message.contains("[editor]"), "{}", errs[0].message);
        assert!(errs[1].message.contains("`loud`"), "{}", errs[1].message);
    }

    #[test]
    fn the_format_width_is_read_and_checked() {
        assert_eq!(parse("").unwrap().format.width, 100);
        assert_eq!(parse("[format]\nwidth = 80\n").unwrap().format.width, 80);
        let text = "[format]\nwidth = 5\n";
        let errs = parse(text).unwrap_err();
        assert!(errs[0].message.contains("`width`"), "{errs:?}");
        assert_eq!(&text[errs[0].span.clone().unwrap()], "5");
        let errs = parse("[format]\nwidht = 80\n").unwrap_err();
        assert!(errs[0].message.contains("widht"), "{errs:?}");
    }

    #[test]
    fn the_files_section_sets_the_size_limit_and_confinement() {
        let (_, files, _) = parse_all("[files]\nmax-size-mib = 2\nconfine-use = true\n").unwrap();
        assert_eq!(
            files,
            FileSettings {
                max_size_mib: Some(2),
                confine_use: true
            }
        );
        let policy = files.policy(Path::new("/p/trellis.toml"), Path::new("trellis.toml"));
        assert_eq!(policy.max_bytes, 2 << 20);
        assert_eq!(policy.confine.unwrap().root, PathBuf::from("/p"));
        let (_, files, _) = parse_all("").unwrap();
        assert_eq!(files, FileSettings::default());
        let text = "[files]\nmax-size-mib = 0\n";
        let errs = parse_all(text).unwrap_err();
        assert!(errs[0].message.contains("`max-size-mib`"), "{errs:?}");
        assert_eq!(&text[errs[0].span.clone().unwrap()], "0");
    }

    #[test]
    fn unknown_top_level_keys_are_rejected() {
        let errs = parse("colour = true").unwrap_err();
        assert!(errs[0].message.contains("colour"), "{:?}", errs);
    }

    #[test]
    fn the_nearest_file_above_the_grammar_applies() {
        let dir = tempfile::tempdir().unwrap();
        let deep = dir.path().join("grammars/ferry");
        fs::create_dir_all(&deep).unwrap();
        fs::write(
            dir.path().join(FILE_NAME),
            "[checks]\nunreachable = \"off\"\n",
        )
        .unwrap();
        fs::write(deep.join("kiosk.trellis"), "").unwrap();
        let mut resolver = Resolver::new();
        let config = resolver.for_grammar(&deep.join("kiosk.trellis")).unwrap();
        assert_eq!(config.levels.get(&Code::Unreachable), Some(&Level::Off));

        // A closer file wins over the one further up.
        fs::write(
            dir.path().join("grammars").join(FILE_NAME),
            "[checks]\nunreachable = \"error\"\n",
        )
        .unwrap();
        let config = Resolver::new()
            .for_grammar(&deep.join("kiosk.trellis"))
            .unwrap();
        assert_eq!(config.level(Code::Unreachable), Some(Severity::Error));
    }

    #[test]
    fn relative_paths_with_dot_dot_walk_up_from_the_real_directory() {
        let dir = tempfile::tempdir().unwrap();
        fs::create_dir_all(dir.path().join("a/b")).unwrap();
        fs::write(dir.path().join("a").join(FILE_NAME), "max-arity = 3\n").unwrap();
        let found = find_from(&dir.path().join("a/b/../b")).unwrap();
        assert_eq!(found, absolute(&dir.path().join("a").join(FILE_NAME)));
    }

    #[test]
    fn a_bad_entry_becomes_a_located_config_diagnostic() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(FILE_NAME);
        fs::write(&path, "[checks]\nunreachble = \"error\"\n").unwrap();
        let problem = load(&path, &path, &files::DiskLoader::default()).unwrap_err();
        let (sources, diagnostics) = problem.diagnostics();
        assert_eq!(diagnostics.len(), 1);
        let d = &diagnostics[0];
        assert_eq!(d.code, Code::Config);
        let file = sources.get(d.location.file);
        assert_eq!(d.location.span.text(&file.text), "unreachble");
        assert!(
            d.message.contains("unknown check `unreachble`"),
            "{}",
            d.message
        );
    }

    #[test]
    fn an_unreadable_config_is_a_problem_not_a_default() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(FILE_NAME);
        fs::write(&path, b"max-arity = 4 # \xFF\n").unwrap();
        let problem = load(&path, &path, &files::DiskLoader::default()).unwrap_err();
        let (_, diagnostics) = problem.diagnostics();
        assert!(
            diagnostics[0].message.contains("not UTF-8"),
            "{:?}",
            diagnostics
        );
    }
}
