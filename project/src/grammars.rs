//! Grammars and the files they are made of: which analysed root stands as
//! a grammar of its own, which grammar speaks for a file, and one rule for
//! reporting a finding that several grammars share only once.

use crate::cache::{CachedLoader, FileCache};
use crate::config::{ConfigProblem, Resolver};
use crate::discover::{discover, identity, Root};
use grammar_lang::source::resolve_use;
use grammar_lang::syntax::ast::SyntaxFile;
use grammar_lang::{Code, Diagnostic, Span};
use std::collections::{HashSet, VecDeque};
use std::path::{Path, PathBuf};
use trellis_ide::Analysis;

/// Remembers the findings reported so far, so that a finding in a file
/// that several grammars read is reported once: the same code at the same
/// span of the same file is the same finding, whichever grammar found it
/// (the first one reported wins).
#[derive(Debug, Default)]
pub struct Repeats {
    seen: HashSet<(PathBuf, Span, Code)>,
}

impl Repeats {
    /// Whether `d`, located in `file`, is reported for the first time (and
    /// remembers it).
    pub fn first(&mut self, file: &Path, d: &Diagnostic) -> bool {
        self.seen
            .insert((file.to_path_buf(), d.location.span, d.code))
    }
}

/// The grammars whose analysis speaks for `file` among open roots: those
/// that `use` it (the file in the context of its grammar), or else the
/// file's own analysis when it is itself a root. Indices into `roots`, in
/// order; empty when no grammar reads the file.
pub fn speakers<'a>(
    file: &Path,
    roots: impl IntoIterator<Item = (&'a Path, &'a Analysis)>,
) -> Vec<usize> {
    let mut own = None;
    let mut users = Vec::new();
    for (i, (root, analysis)) in roots.into_iter().enumerate() {
        if root == file {
            own = Some(i);
        } else if analysis.sources.find(file).is_some() {
            users.push(i);
        }
    }
    if users.is_empty() {
        users.extend(own);
    }
    users
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
    checked.iter().map(|c| files_of(c, identity)).collect()
}

/// The files one analysed root's grammar read, as identities: the root first.
fn files_of(c: &Checked, identity: &impl Fn(&Path) -> PathBuf) -> Vec<PathBuf> {
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
}

/// Which roots stand as grammars of their own (indices into `checked`): a
/// root found in a directory whose file another root `use`s (and which does
/// not `use` that root back) is only part of that grammar — a lexicon file
/// without `start` is not a grammar of its own.
pub fn grammar_roots(checked: &[Checked], identity: impl Fn(&Path) -> PathBuf) -> Vec<usize> {
    kept(checked, &grammar_files(checked, &identity))
}

fn kept(checked: &[Checked], files: &[Vec<PathBuf>]) -> Vec<usize> {
    let named: Vec<bool> = checked.iter().map(|c| c.root.named).collect();
    kept_of(&named, files)
}

/// [`grammar_roots`] over each root's files (identities, the root first)
/// and whether it was named on the command line.
fn kept_of(named: &[bool], files: &[Vec<PathBuf>]) -> Vec<usize> {
    let roots: HashSet<&PathBuf> = files.iter().map(|f| &f[0]).collect();
    // Only the roots among each grammar's files matter; sets keep this
    // linear in the files read rather than quadratic in a list search.
    let used: Vec<HashSet<&PathBuf>> = files
        .iter()
        .map(|f| f[1..].iter().filter(|p| roots.contains(p)).collect())
        .collect();
    let uses = |user: usize, used_root: usize| used[user].contains(&files[used_root][0]);
    (0..named.len())
        .filter(|&i| named[i] || !(0..named.len()).any(|j| j != i && uses(j, i) && !uses(i, j)))
        .collect()
}

/// Chooses what to report from the analyses of all roots: the findings of
/// the [`grammar_roots`], each reported once (see [`Repeats`]) however many
/// grammars include its file.
pub fn select<'a>(checked: &'a [Checked], identity: impl Fn(&Path) -> PathBuf) -> Selection<'a> {
    let files = grammar_files(checked, &identity);
    let kept = kept(checked, &files);

    let mut repeats = Repeats::default();
    let mut all_files: HashSet<&Path> = HashSet::new();
    let mut findings = Vec::new();
    for &i in &kept {
        all_files.extend(files[i].iter().map(PathBuf::as_path));
        for d in &checked[i].analysis.diagnostics {
            let file = files[i]
                .get(d.location.file.0 as usize)
                .map_or(Path::new(""), PathBuf::as_path);
            if repeats.first(file, d) {
                findings.push((i, d));
            }
        }
    }
    Selection {
        findings,
        files: all_files.len(),
    }
}

/// Keeps the grammars that read one of `changed` — as their root or through
/// `use` — and drops the others: what a commit hook checks when these files
/// changed (a lexicon changed alone is checked as part of every grammar
/// that uses it). Files are compared by identity, so `./a.trellis` and
/// `sub/../a.trellis` are one file.
pub fn affected_by(checked: Vec<Checked>, changed: &[PathBuf]) -> Vec<Checked> {
    let changed: HashSet<PathBuf> = changed.iter().map(|p| identity(p)).collect();
    checked
        .into_iter()
        .filter(|c| files_of(c, &identity).iter().any(|f| changed.contains(f)))
        .collect()
}

/// Every root grammar found for the command-line paths, analysed, and a
/// message for every path or file that could not be used.
pub struct Analysed {
    pub checked: Vec<Checked>,
    pub failures: Vec<String>,
}

/// A run that stops before analysing anything: some `trellis.toml` is
/// invalid (each one once), and the paths that could not be used.
pub struct ConfigStop {
    pub problems: Vec<ConfigProblem>,
    pub failures: Vec<String>,
}

/// Finds the grammar files for `paths`, reads each one's `trellis.toml`
/// and analyses it through the façade (engine-backed findings included).
/// An invalid `trellis.toml` stops everything: nothing is analysed.
pub fn analyse_paths(paths: &[PathBuf]) -> Result<Analysed, ConfigStop> {
    analyse_paths_with(paths, &FileCache::new())
}

/// [`analyse_paths`], reading and parsing every file through `cache`.
///
/// Each file is read and parsed once for the whole run, however many
/// grammars reach it. Which roots stand as grammars of their own
/// ([`grammar_roots`]) is decided first, from the `use` declarations
/// alone, and only those are analysed: a root that is only part of
/// another grammar (each file of a `use` chain found in one directory, say)
/// is not analysed on its own, so a chain costs one analysis, not one per
/// file.
pub fn analyse_paths_with(paths: &[PathBuf], cache: &FileCache) -> Result<Analysed, ConfigStop> {
    let (roots, mut failures) = discover(paths);

    // Configuration first: with a broken trellis.toml, nothing is checked.
    let mut resolver = Resolver::new();
    let configs: Vec<_> = roots
        .iter()
        .filter_map(|root| resolver.for_grammar(&root.path).ok())
        .collect();
    let problems = resolver.problems();
    if !problems.is_empty() {
        return Err(ConfigStop { problems, failures });
    }

    // Each readable root with its texts, and the files its grammar reads.
    let mut readable = Vec::with_capacity(roots.len());
    for (root, config) in roots.into_iter().zip(configs) {
        let policy = resolver.policy_for_grammar(&root.path);
        let loader = cache.loader(policy);
        match loader.root_text(&root.path) {
            Ok(text) => {
                let files = reached_files(&root.path, &loader);
                readable.push((root, config, text, loader, files));
            }
            Err(failure) => failures.push(format!(
                "cannot read {}: {}; {}",
                root.path.display(),
                failure.reason,
                failure.help
            )),
        }
    }
    let named: Vec<bool> = readable.iter().map(|r| r.0.named).collect();
    let files: Vec<Vec<PathBuf>> = readable.iter().map(|r| r.4.clone()).collect();
    let kept: HashSet<usize> = kept_of(&named, &files).into_iter().collect();

    let mut checked = Vec::with_capacity(kept.len());
    for (i, (root, config, text, loader, _)) in readable.into_iter().enumerate() {
        if kept.contains(&i) {
            let analysis = trellis_ide::analyze(&root.path, &text, &loader, &config);
            checked.push(Checked { root, analysis });
        }
    }
    Ok(Analysed { checked, failures })
}

/// The files the grammar rooted at `root` reads, as identities, the root
/// first: every file reached through `use` that can be read, found as the
/// front end follows them (paths resolved lexically from the using file,
/// each path once), from the shared syntax.
fn reached_files(root: &Path, loader: &CachedLoader<'_>) -> Vec<PathBuf> {
    let parse: &dyn Fn(&str) -> SyntaxFile = &grammar_lang::syntax::parse;
    let root = grammar_lang::source::normalize(root);
    let mut seen: HashSet<PathBuf> = HashSet::from([root.clone()]);
    let mut files = vec![identity(&root)];
    let mut queue = VecDeque::from([root.clone()]);
    while let Some(path) = queue.pop_front() {
        let is_root = path == root;
        // The root is read without confinement (it is not a `use`).
        let Ok(uses) = loader.uses(&path, !is_root, parse) else {
            continue;
        };
        if !is_root {
            files.push(identity(&path));
        }
        for target in uses {
            let next = resolve_use(&path, &target);
            if seen.insert(next.clone()) {
                queue.push_back(next);
            }
        }
    }
    files
}

#[cfg(test)]
mod tests {
    use super::*;
    use grammar_lang::{FileId, Grammar, Location, SourceMap};

    fn analysis(files: &[&str], diagnostics: Vec<Diagnostic>) -> Analysis {
        let mut sources = SourceMap::new();
        for f in files {
            sources.add(PathBuf::from(f), String::from("S { \"x\" }\n"));
        }
        Analysis::from_core(grammar_lang::Analysis {
            sources,
            syntax: Vec::new(),
            grammar: Grammar::new(),
            diagnostics,
        })
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
    fn a_file_used_by_open_roots_is_spoken_for_by_them_else_by_itself() {
        let kiosk = analysis(&["kiosk.trellis", "words.trellis"], vec![]);
        let words = analysis(&["words.trellis"], vec![]);
        let roots = [
            (Path::new("kiosk.trellis"), &kiosk),
            (Path::new("words.trellis"), &words),
        ];
        assert_eq!(speakers(Path::new("words.trellis"), roots), vec![0]);
        assert_eq!(speakers(Path::new("kiosk.trellis"), roots), vec![0]);
        assert!(speakers(Path::new("other.trellis"), roots).is_empty());
        // With the user closed, the lexicon speaks for itself.
        assert_eq!(speakers(Path::new("words.trellis"), [roots[1]]), vec![0]);
    }

    #[test]
    fn the_same_code_at_the_same_place_is_one_finding() {
        let mut repeats = Repeats::default();
        let d = diag(Code::Unreachable, 0, 3);
        let mut other_message = d.clone();
        other_message.message = "said differently".into();
        assert!(repeats.first(Path::new("words.trellis"), &d));
        assert!(!repeats.first(Path::new("words.trellis"), &other_message));
        assert!(repeats.first(Path::new("kiosk.trellis"), &d));
        assert!(repeats.first(Path::new("words.trellis"), &diag(Code::Arity, 0, 3)));
    }
}
