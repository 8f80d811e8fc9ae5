//! `trellis check`: run the static checks over grammar files and report.

use super::{emit, use_color, Outcome, OutputFormat, Stream};
use crate::config_file::{ConfigProblem, Resolver};
use crate::fs_loader::{self, DiskLoader};
use crate::render::{self, Counts, HumanRenderer};
use grammar_lang::source::normalize;
use grammar_lang::{Analysis, Code, Diagnostic, Span};
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};

/// The full description shown by `trellis check --help`.
pub const LONG_ABOUT: &str = "Find mistakes in grammars without running them.\n\n\
    Every .trellis file named, and every .trellis file found under a named \
    directory (hidden directories and target/ are skipped), is checked together \
    with the files it `use`s. A file found in a directory that another checked \
    file `use`s is checked as part of that grammar rather than on its own.\n\n\
    Which findings are errors, warnings, notes or silenced is read from the \
    nearest trellis.toml in the grammar's directory or above it, e.g.\n\n  \
    [checks]\n  unreachable = \"error\"\n  duplicate-rule = \"off\"\n\n\
    Exit status: 0 when no errors were found; 1 when errors were found (or \
    warnings, with --deny-warnings); 2 when a path does not exist, a file \
    cannot be read as UTF-8 text, or trellis.toml is invalid.";

/// Arguments of `trellis check`.
#[derive(clap::Args, Debug, Clone)]
#[command(after_long_help = checks_help())]
pub struct CheckArgs {
    /// Grammar files or directories to check [default: the current directory]
    #[arg(value_name = "PATH")]
    pub paths: Vec<PathBuf>,

    /// How to print findings: `human` shows source snippets, `json` prints
    /// one object {"diagnostics": [...]} with 1-based lines and columns
    /// counted in characters
    #[arg(long, value_enum, default_value_t = OutputFormat::Human)]
    pub format: OutputFormat,

    /// Fail (exit status 1) on warnings too, not only on errors
    #[arg(long)]
    pub deny_warnings: bool,
}

/// The list of checks and their default levels, for `check --help`.
fn checks_help() -> String {
    let width = Code::ALL
        .iter()
        .map(|c| c.as_str().len())
        .max()
        .unwrap_or(0);
    let mut out = String::from(
        "Checks (name and default level; set a level per check in trellis.toml \
         to \"error\", \"warning\", \"note\" or \"off\"):\n",
    );
    for &code in Code::ALL {
        let note = match code {
            // Problems in trellis.toml itself stop the run; not a grammar check.
            Code::Config => continue,
            Code::Syntax => " (always)",
            _ => "",
        };
        out.push_str(&format!(
            "  {:width$}  {}{note}\n",
            code.as_str(),
            code.default_severity()
        ));
    }
    out.push_str(&format!(
        "\n`max-arity = N` in trellis.toml sets the longest right-hand side accepted \
         without an `arity` finding (default {}).\n",
        grammar_lang::config::DEFAULT_MAX_ARITY
    ));
    out
}

/// A grammar file to check as the root of its own grammar.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Root {
    /// The path as shown to the user (and as the core sees it).
    pub path: PathBuf,
    /// Named on the command line rather than found in a directory.
    pub named: bool,
}

/// The `.trellis` files to check for the given command-line paths, and a
/// message for every path that cannot be used.
pub fn discover(paths: &[PathBuf]) -> (Vec<Root>, Vec<String>) {
    let mut roots: Vec<Root> = Vec::new();
    let mut failures = Vec::new();
    let mut seen: HashMap<PathBuf, usize> = HashMap::new();
    for arg in paths {
        let shown = normalize(arg);
        let shown = if shown.as_os_str().is_empty() {
            PathBuf::from(".")
        } else {
            shown
        };
        let found = match std::fs::metadata(arg) {
            Err(e) => {
                failures.push(format!(
                    "cannot check {}: {}",
                    arg.display(),
                    fs_loader::io_reason(&e)
                ));
                continue;
            }
            Ok(meta) if meta.is_dir() => {
                let mut files = Vec::new();
                walk(&shown, &mut files, &mut failures);
                files.sort();
                files
                    .into_iter()
                    .map(|path| Root { path, named: false })
                    .collect()
            }
            Ok(_) => vec![Root {
                path: shown,
                named: true,
            }],
        };
        for root in found {
            let key = identity(&root.path);
            match seen.get(&key) {
                Some(&i) => roots[i].named |= root.named,
                None => {
                    seen.insert(key, roots.len());
                    roots.push(root);
                }
            }
        }
    }
    (roots, failures)
}

fn is_grammar_file(path: &Path) -> bool {
    path.extension().is_some_and(|e| e == "trellis")
}

/// Collects `.trellis` files below `dir`, skipping hidden entries, `target/`
/// and symbolic links to directories (which could loop).
fn walk(dir: &Path, files: &mut Vec<PathBuf>, failures: &mut Vec<String>) {
    let entries = match std::fs::read_dir(dir) {
        Ok(entries) => entries,
        Err(e) => {
            failures.push(format!(
                "cannot read directory {}: {}",
                dir.display(),
                fs_loader::io_reason(&e)
            ));
            return;
        }
    };
    for entry in entries.flatten() {
        let name = entry.file_name();
        if name.to_string_lossy().starts_with('.') {
            continue;
        }
        let path = normalize(&dir.join(&name));
        let Ok(kind) = entry.file_type() else {
            continue;
        };
        if kind.is_dir() {
            if name != "target" {
                walk(&path, files, failures);
            }
        } else if is_grammar_file(&path) && (kind.is_file() || path.is_file()) {
            files.push(path);
        }
    }
}

/// The identity of a file for "same file" questions: its canonical path, or
/// its absolute path if it cannot be resolved.
pub fn identity(path: &Path) -> PathBuf {
    std::fs::canonicalize(path).unwrap_or_else(|_| {
        normalize(&std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf()))
    })
}

/// One analysed root.
pub struct Checked {
    pub root: Root,
    pub analysis: Analysis,
}

/// What a run reports: which findings (by analysis index), and how many
/// distinct files were read.
pub struct Selection<'a> {
    pub findings: Vec<(usize, &'a Diagnostic)>,
    pub files: usize,
}

/// The files of each analysed root's grammar, as identities: the root first.
fn grammar_files(checked: &[Checked], identity: &impl Fn(&Path) -> PathBuf) -> Vec<Vec<PathBuf>> {
    checked
        .iter()
        .map(|c| {
            let mut ids: Vec<PathBuf> = c
                .analysis
                .sources
                .iter()
                .map(|(_, f)| identity(&f.path))
                .collect();
            if ids.is_empty() {
                ids.push(identity(&c.root.path));
            }
            ids
        })
        .collect()
}

/// Which roots stand as grammars of their own (indices into `checked`): a
/// root found in a directory whose file another root `use`s (and which does
/// not `use` that root back) is only part of that grammar — a lexicon file
/// without `start` is not a grammar of its own.
pub fn grammar_roots(checked: &[Checked], identity: impl Fn(&Path) -> PathBuf) -> Vec<usize> {
    kept(checked, &grammar_files(checked, &identity))
}

fn kept(checked: &[Checked], files: &[Vec<PathBuf>]) -> Vec<usize> {
    let uses = |user: usize, used: usize| files[user][1..].contains(&files[used][0]);
    (0..checked.len())
        .filter(|&i| {
            checked[i].root.named
                || !(0..checked.len()).any(|j| j != i && uses(j, i) && !uses(i, j))
        })
        .collect()
}

/// Chooses what to report from the analyses of all roots: the findings of
/// the [`grammar_roots`], each reported once per file, span and code,
/// however many grammars include the file.
pub fn select<'a>(checked: &'a [Checked], identity: impl Fn(&Path) -> PathBuf) -> Selection<'a> {
    let files = grammar_files(checked, &identity);
    let kept = kept(checked, &files);

    let mut seen: HashSet<(&Path, Span, Code)> = HashSet::new();
    let mut all_files: HashSet<&Path> = HashSet::new();
    let mut findings = Vec::new();
    for &i in &kept {
        all_files.extend(files[i].iter().map(PathBuf::as_path));
        for d in &checked[i].analysis.diagnostics {
            let file = files[i]
                .get(d.location.file.0 as usize)
                .map_or(Path::new(""), PathBuf::as_path);
            if seen.insert((file, d.location.span, d.code)) {
                findings.push((i, d));
            }
        }
    }
    Selection {
        findings,
        files: all_files.len(),
    }
}

/// The exit status for a run with these counts.
pub fn outcome(counts: Counts, deny_warnings: bool, failed: bool) -> Outcome {
    if failed {
        Outcome::Failure
    } else if counts.errors > 0 || (deny_warnings && counts.warnings > 0) {
        Outcome::Findings
    } else {
        Outcome::Clean
    }
}

/// The paths given, or the current directory when there are none.
pub fn paths_or_here(paths: &[PathBuf]) -> Vec<PathBuf> {
    if paths.is_empty() {
        vec![PathBuf::from(".")]
    } else {
        paths.to_vec()
    }
}

/// Says on stderr that `paths` held no grammar file.
pub fn note_nothing_found(paths: &[PathBuf]) {
    let shown: Vec<String> = paths.iter().map(|p| p.display().to_string()).collect();
    emit(
        Stream::Stderr,
        &format!("note: no .trellis files found in {}\n", shown.join(", ")),
    );
}

/// Every root grammar found for the command-line paths, analysed, and a
/// message for every path or file that could not be used.
pub struct Analysed {
    pub checked: Vec<Checked>,
    pub failures: Vec<String>,
}

/// Finds the grammar files for `paths`, reads each one's trellis.toml and
/// analyses it (the engine's leak finding included). An invalid trellis.toml
/// stops everything: it is reported (on stdout as JSON too, for
/// `--format json`) and the run ends with [`Outcome::Failure`].
pub fn analyse(paths: &[PathBuf], format: OutputFormat) -> Result<Analysed, Outcome> {
    let (roots, mut failures) = discover(paths);

    // Configuration first: with a broken trellis.toml, nothing is checked.
    let mut resolver = Resolver::new();
    let mut configs = Vec::with_capacity(roots.len());
    let mut problems: Vec<ConfigProblem> = Vec::new();
    for root in &roots {
        match resolver.for_grammar(&root.path) {
            Ok(config) => configs.push(config),
            Err(problem) => {
                if !problems.iter().any(|p| p.path == problem.path) {
                    problems.push(problem);
                }
            }
        }
    }
    if !problems.is_empty() {
        report_config_problems(&problems, format);
        report_failures(&failures);
        return Err(Outcome::Failure);
    }

    let mut checked = Vec::with_capacity(roots.len());
    for (root, config) in roots.into_iter().zip(configs) {
        match fs_loader::read_text(&root.path) {
            Ok(text) => {
                let mut analysis = grammar_lang::analyze(&root.path, &text, &DiskLoader, &config);
                trellis_engine::consistency::add_leak_finding(&mut analysis, &config);
                checked.push(Checked { root, analysis });
            }
            Err(reason) => failures.push(format!("cannot read {}: {reason}", root.path.display())),
        }
    }
    Ok(Analysed { checked, failures })
}

/// Runs `trellis check`.
pub fn run(args: &CheckArgs) -> Outcome {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = match analyse(&paths, args.format) {
        Ok(analysed) => analysed,
        Err(outcome) => return outcome,
    };

    let selection = select(&checked, identity);
    let mut counts = Counts::default();
    for (_, d) in &selection.findings {
        counts.add(d.severity);
    }

    match args.format {
        OutputFormat::Json => {
            let diagnostics: Vec<_> = selection
                .findings
                .iter()
                .map(|&(i, d)| render::json_diagnostic(d, &checked[i].analysis.sources))
                .collect();
            emit(Stream::Stdout, &render::json_document(&diagnostics));
        }
        OutputFormat::Human => {
            let color = use_color(Stream::Stdout);
            let mut renderers: HashMap<usize, HumanRenderer> = HashMap::new();
            let mut out = String::new();
            for &(i, d) in &selection.findings {
                let renderer = renderers
                    .entry(i)
                    .or_insert_with(|| HumanRenderer::new(&checked[i].analysis.sources, color));
                out.push_str(&renderer.render(d));
                out.push('\n');
            }
            out.push_str(&render::summary(selection.files, counts));
            if args.deny_warnings && counts.warnings > 0 {
                out.push_str(" (warnings are denied)");
            }
            out.push('\n');
            emit(Stream::Stdout, &out);
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths);
            }
        }
    }
    report_failures(&failures);
    outcome(counts, args.deny_warnings, !failures.is_empty())
}

pub fn report_failures(failures: &[String]) {
    let text: String = failures.iter().map(|f| format!("error: {f}\n")).collect();
    emit(Stream::Stderr, &text);
}

/// Reports invalid configuration files; nothing else is checked.
fn report_config_problems(problems: &[ConfigProblem], format: OutputFormat) {
    let mut json = Vec::new();
    let mut human = String::new();
    let color = use_color(Stream::Stderr);
    for problem in problems {
        let (sources, diagnostics) = problem.diagnostics();
        let mut renderer = HumanRenderer::new(&sources, color);
        for d in &diagnostics {
            match format {
                OutputFormat::Json => json.push(render::json_diagnostic(d, &sources)),
                OutputFormat::Human => {
                    human.push_str(&renderer.render(d));
                    human.push('\n');
                }
            }
        }
        human.push_str(&format!(
            "error: {} is not a valid trellis configuration, so nothing was checked; \
             fix the entries shown above (`trellis check --help` lists every check \
             and level) or remove the file to use the default levels\n",
            problem.path.display()
        ));
    }
    if format == OutputFormat::Json {
        emit(Stream::Stdout, &render::json_document(&json));
    }
    emit(Stream::Stderr, &human);
}

#[cfg(test)]
mod tests {
    use super::*;
    use grammar_lang::{FileId, Grammar, Location, SourceMap};
    use std::fs;

    fn analysis(files: &[&str], diagnostics: Vec<Diagnostic>) -> Analysis {
        let mut sources = SourceMap::new();
        for f in files {
            sources.add(PathBuf::from(f), String::from("S { \"x\" }\n"));
        }
        Analysis {
            sources,
            syntax: Vec::new(),
            grammar: Grammar::new(),
            diagnostics,
        }
    }

    fn checked(path: &str, named: bool, analysis: Analysis) -> Checked {
        Checked {
            root: Root {
                path: PathBuf::from(path),
                named,
            },
            analysis,
        }
    }

    fn diag(code: Code, file: u32, start: usize) -> Diagnostic {
        Diagnostic::new(
            code,
            Location::new(FileId(file), Span::new(start, start + 1)),
            code.as_str(),
        )
    }

    #[test]
    fn a_finding_in_a_shared_file_is_reported_once() {
        // a.trellis and b.trellis are both named and both use words.trellis.
        let runs = vec![
            checked(
                "a.trellis",
                true,
                analysis(
                    &["a.trellis", "words.trellis"],
                    vec![diag(Code::DuplicateRule, 1, 4)],
                ),
            ),
            checked(
                "b.trellis",
                true,
                analysis(
                    &["b.trellis", "words.trellis"],
                    vec![diag(Code::DuplicateRule, 1, 4), diag(Code::Arity, 1, 4)],
                ),
            ),
        ];
        let s = select(&runs, Path::to_path_buf);
        let got: Vec<(usize, Code)> = s.findings.iter().map(|(i, d)| (*i, d.code)).collect();
        assert_eq!(got, vec![(0, Code::DuplicateRule), (1, Code::Arity)]);
        assert_eq!(s.files, 3);
    }

    #[test]
    fn a_found_file_used_by_another_is_checked_only_as_part_of_it() {
        let runs = vec![
            checked(
                "kiosk.trellis",
                false,
                analysis(
                    &["kiosk.trellis", "words.trellis"],
                    vec![diag(Code::Unreachable, 1, 0)],
                ),
            ),
            checked(
                "words.trellis",
                false,
                analysis(
                    &["words.trellis"],
                    vec![diag(Code::NoStart, 0, 0), diag(Code::Unreachable, 0, 0)],
                ),
            ),
        ];
        let s = select(&runs, Path::to_path_buf);
        let got: Vec<(usize, Code)> = s.findings.iter().map(|(i, d)| (*i, d.code)).collect();
        assert_eq!(got, vec![(0, Code::Unreachable)]);
        assert_eq!(s.files, 2);
    }

    #[test]
    fn a_named_file_is_always_checked_on_its_own() {
        let runs = vec![
            checked(
                "kiosk.trellis",
                true,
                analysis(&["kiosk.trellis", "words.trellis"], vec![]),
            ),
            checked(
                "words.trellis",
                true,
                analysis(&["words.trellis"], vec![diag(Code::NoStart, 0, 0)]),
            ),
        ];
        let s = select(&runs, Path::to_path_buf);
        assert_eq!(s.findings.len(), 1);
        assert_eq!(s.findings[0].1.code, Code::NoStart);
    }

    #[test]
    fn files_that_use_each_other_are_both_kept() {
        let runs = vec![
            checked(
                "a.trellis",
                false,
                analysis(
                    &["a.trellis", "b.trellis"],
                    vec![diag(Code::UseCycle, 0, 0)],
                ),
            ),
            checked(
                "b.trellis",
                false,
                analysis(
                    &["b.trellis", "a.trellis"],
                    vec![diag(Code::UseCycle, 0, 0)],
                ),
            ),
        ];
        let s = select(&runs, Path::to_path_buf);
        assert_eq!(s.findings.len(), 2, "one use-cycle finding per file");
    }

    #[test]
    fn exit_status_follows_errors_warnings_and_failures() {
        let none = Counts::default();
        let warning = Counts {
            warnings: 1,
            ..Counts::default()
        };
        let error = Counts {
            errors: 1,
            ..Counts::default()
        };
        assert_eq!(outcome(none, false, false), Outcome::Clean);
        assert_eq!(outcome(warning, false, false), Outcome::Clean);
        assert_eq!(outcome(warning, true, false), Outcome::Findings);
        assert_eq!(outcome(error, false, false), Outcome::Findings);
        assert_eq!(outcome(error, true, true), Outcome::Failure);
        assert_eq!(outcome(none, false, true), Outcome::Failure);
    }

    #[test]
    fn directories_are_walked_sorted_skipping_hidden_and_target() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        for f in [
            "b.trellis",
            "a.trellis",
            "notes.txt",
            "sub/c.trellis",
            ".hidden/x.trellis",
            "target/y.trellis",
            "sub/target/z.trellis",
            ".#lock.trellis",
        ] {
            let p = d.join(f);
            fs::create_dir_all(p.parent().unwrap()).unwrap();
            fs::write(p, "").unwrap();
        }
        let (roots, failures) = discover(&[d.to_path_buf()]);
        assert!(failures.is_empty(), "{failures:?}");
        let got: Vec<PathBuf> = roots.iter().map(|r| r.path.clone()).collect();
        assert_eq!(
            got,
            vec![
                d.join("a.trellis"),
                d.join("b.trellis"),
                d.join("sub/c.trellis")
            ]
        );
        assert!(roots.iter().all(|r| !r.named));
    }

    #[cfg(unix)]
    #[test]
    fn a_link_back_to_a_parent_directory_does_not_loop() {
        let dir = tempfile::tempdir().unwrap();
        fs::create_dir_all(dir.path().join("sub")).unwrap();
        fs::write(dir.path().join("sub/a.trellis"), "").unwrap();
        std::os::unix::fs::symlink(dir.path(), dir.path().join("sub/up")).unwrap();
        // A link to a grammar file is followed.
        std::os::unix::fs::symlink(
            dir.path().join("sub/a.trellis"),
            dir.path().join("b.trellis"),
        )
        .unwrap();
        let (roots, failures) = discover(&[dir.path().to_path_buf()]);
        assert!(failures.is_empty(), "{failures:?}");
        let got: Vec<PathBuf> = roots.iter().map(|r| r.path.clone()).collect();
        // Both names lead to one file, which is checked once.
        assert_eq!(got, vec![dir.path().join("b.trellis")]);
    }

    #[test]
    fn a_file_named_twice_is_checked_once_and_counts_as_named() {
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("a.trellis");
        fs::write(&f, "").unwrap();
        let (roots, failures) = discover(&[dir.path().to_path_buf(), f.clone()]);
        assert!(failures.is_empty());
        assert_eq!(
            roots,
            vec![Root {
                path: f,
                named: true
            }]
        );
    }

    #[test]
    fn a_missing_path_is_a_failure_naming_it() {
        let dir = tempfile::tempdir().unwrap();
        let missing = dir.path().join("nope.trellis");
        let (roots, failures) = discover(std::slice::from_ref(&missing));
        assert!(roots.is_empty());
        assert_eq!(
            failures,
            vec![format!(
                "cannot check {}: no such file or directory",
                missing.display()
            )]
        );
    }
}
