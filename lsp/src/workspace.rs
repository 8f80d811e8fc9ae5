//! The open documents and the latest analysis of each.
//!
//! Every open `.trellis` document is the root of its own analysis. Files a
//! root `use`s are read from their open buffer when the editor has one, from
//! disk otherwise ([`Overlay`]). Each stored result remembers which version
//! of every open buffer it read, so a result is only reused while those
//! buffers are unchanged.

use crate::convert;
use grammar_lang::FileId;
use std::collections::{BTreeMap, HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;
use tower_lsp::lsp_types::Url;
use trellis_ide::Analysis;
use trellis_project::config::{ConfigProblem, EditorLimits, Settings, Stamps};
use trellis_project::{Overlay, SyntaxCache};

/// One open document: what the editor last sent.
#[derive(Clone, Debug)]
pub struct Doc {
    pub uri: Url,
    pub version: i32,
    pub text: Arc<String>,
}

/// The open documents at one moment, keyed by normalized path; what an
/// analysis reads.
#[derive(Clone, Debug, Default)]
pub struct Snapshot {
    pub docs: HashMap<PathBuf, Doc>,
}

/// One finished analysis of a root document.
#[derive(Debug)]
pub struct RootResult {
    /// Order of the snapshot it was computed from (larger is newer).
    pub seq: u64,
    pub analysis: Analysis,
    /// For every file of the analysis: the open-buffer version it read, or
    /// `None` if it was read from disk.
    pub inputs: Vec<Option<i32>>,
    /// The URI of every file of the analysis, indexed by `FileId`.
    pub uris: Vec<Option<Url>>,
    /// A problem with `trellis.toml`, if any (the default levels applied).
    pub config_problem: Option<ConfigProblem>,
    /// The limits of the parses run with this grammar (`[editor]`).
    pub limits: EditorLimits,
    /// The configuration files as they were when the analysis read its
    /// configuration.
    pub config_stamps: Stamps,
}

impl RootResult {
    /// The version of the root document this result was computed from.
    pub fn root_version(&self) -> Option<i32> {
        self.inputs.first().copied().flatten()
    }

    pub fn uri_of(&self, file: FileId) -> Option<Url> {
        self.uris.get(file.0 as usize).cloned().flatten()
    }

    /// The paths of every file the analysis read.
    pub fn paths(&self) -> impl Iterator<Item = &Path> {
        self.analysis.sources.iter().map(|(_, f)| f.path.as_path())
    }

    /// Whether every open buffer it read still has the version it read and
    /// no file it read from disk has been opened since.
    pub fn is_current(&self, docs: &HashMap<PathBuf, Doc>) -> bool {
        self.analysis
            .sources
            .iter()
            .zip(&self.inputs)
            .all(|((_, f), v)| docs.get(&f.path).map(|d| d.version) == *v)
    }
}

/// Analyses the document at `root` as the root of a grammar, reading every
/// other file through the snapshot and taking each file's syntax from
/// `parsed` (shared by every analysis of the session: a file several open
/// grammars use is parsed once per change, not once per grammar per edit).
/// Pure apart from disk reads; runs on the blocking pool.
pub fn analyze_root(
    root: &Path,
    snapshot: &Snapshot,
    seq: u64,
    parsed: &SyntaxCache,
) -> Option<RootResult> {
    let doc = snapshot.docs.get(root)?;
    let open = |path: &Path| snapshot.docs.get(path).map(|d| d.text.as_str().to_owned());
    let settings = Settings::for_grammar(root, &Overlay::new(open));
    // Only regular files, up to the configured size, confined when
    // trellis.toml says so: a `use` of a FIFO or a device cannot block or
    // flood this worker.
    let loader = parsed.over(Overlay::new(open).reading(settings.policy.clone()));
    // The façade's analysis: what `trellis check` reports, the editor reports;
    // and, when trellis.toml asks for them, the rules no passing test uses.
    let mut analysis = trellis_ide::analyze(root, &doc.text, &loader, &settings.config);
    let uncovered = trellis_project::coverage::uncovered_findings(&analysis, &settings.config);
    analysis.add_findings(uncovered);
    let inputs = analysis
        .sources
        .iter()
        .map(|(_, f)| snapshot.docs.get(&f.path).map(|d| d.version))
        .collect();
    let uris = analysis
        .sources
        .iter()
        .map(|(_, f)| match snapshot.docs.get(&f.path) {
            Some(d) => Some(d.uri.clone()),
            None => convert::path_to_uri(&f.path),
        })
        .collect();
    Some(RootResult {
        seq,
        analysis,
        inputs,
        uris,
        config_problem: settings.problem,
        limits: settings.limits,
        config_stamps: settings.stamps,
    })
}

/// What the server knows: open documents, latest results, pending work.
#[derive(Debug, Default)]
pub struct Workspace {
    pub docs: HashMap<PathBuf, Doc>,
    /// The latest analysis of each open root, by path (sorted, so choices
    /// between several roots are deterministic).
    pub results: BTreeMap<PathBuf, Arc<RootResult>>,
    /// Roots to analyse again.
    pub dirty: HashSet<PathBuf>,
    /// Roots the worker is analysing right now.
    pub in_flight: HashSet<PathBuf>,
    /// Files whose published diagnostics must be recomputed even if no
    /// root of theirs is analysed again (a closed document).
    pub republish: HashSet<PathBuf>,
    /// The version last published for each file (`None`: not an open buffer).
    pub published: HashMap<PathBuf, Option<i32>>,
    /// How long the last analysis took, for debouncing.
    pub last_duration: Duration,
    next_seq: u64,
}

impl Workspace {
    /// A number larger than every earlier one, to order snapshots.
    pub fn next_seq(&mut self) -> u64 {
        self.next_seq += 1;
        self.next_seq
    }

    pub fn snapshot(&self) -> Snapshot {
        Snapshot {
            docs: self.docs.clone(),
        }
    }

    /// Marks every root that reads `path` (and `path` itself, if open) for
    /// analysis.
    pub fn touch(&mut self, path: &Path) {
        if self.docs.contains_key(path) {
            self.dirty.insert(path.to_path_buf());
        }
        let users: Vec<PathBuf> = self
            .results
            .iter()
            .filter(|(_, r)| r.analysis.sources.find(path).is_some())
            .map(|(root, _)| root.clone())
            .collect();
        self.dirty.extend(users);
    }

    /// Marks every open root for analysis (a file appeared or vanished, so
    /// any `use` may now resolve differently).
    pub fn touch_all(&mut self) {
        self.dirty.extend(self.docs.keys().cloned());
    }

    /// Stores `result` for `root` unless a newer one is already stored or
    /// the root is no longer open. Returns whether it was stored.
    pub fn store(&mut self, root: &Path, result: Arc<RootResult>) -> bool {
        if !self.docs.contains_key(root) {
            return false;
        }
        if let Some(old) = self.results.get(root) {
            if old.seq >= result.seq {
                return false;
            }
        }
        self.results.insert(root.to_path_buf(), result);
        true
    }

    /// The root whose analysis answers questions about `path`: an open root
    /// that `use`s it (the file in the context of its grammar), else `path`
    /// itself when it is open.
    pub fn context_root(&self, path: &Path) -> Option<PathBuf> {
        let roots = self
            .results
            .iter()
            .map(|(r, res)| (r.as_path(), &res.analysis));
        trellis_project::speakers(path, roots)
            .first()
            .and_then(|&i| self.results.keys().nth(i).cloned())
            .or_else(|| self.docs.contains_key(path).then(|| path.to_path_buf()))
    }

    /// The results whose diagnostics are published for `path`: those of the
    /// open roots that `use` it, or else its own when it is an open root.
    /// Empty when the file's diagnostics should be cleared.
    pub fn publishers(&self, path: &Path) -> Vec<Arc<RootResult>> {
        let results: Vec<&Arc<RootResult>> = self.results.values().collect();
        let roots = self
            .results
            .iter()
            .map(|(r, res)| (r.as_path(), &res.analysis));
        trellis_project::speakers(path, roots)
            .into_iter()
            .map(|i| results[i].clone())
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn doc(path: &str, version: i32, text: &str) -> (PathBuf, Doc) {
        let path = PathBuf::from(path);
        let uri = Url::from_file_path(&path).expect("an absolute path");
        let text = Arc::new(text.to_string());
        (path, Doc { uri, version, text })
    }

    const LEXICON: &str = "Deck { \"upper\" | \"lower\" }\n";

    #[test]
    fn a_file_several_open_grammars_use_is_parsed_once_per_change() {
        // Two open grammars use one open lexicon. Analysing both parses
        // each grammar and the lexicon once (3); analysing them again with
        // nothing changed parses nothing; an edit of one grammar parses
        // that grammar alone; an edit of the lexicon parses the lexicon
        // once for both.
        let mut snapshot = Snapshot::default();
        snapshot.docs.extend([
            doc(
                "/harbour/trip.trellis",
                1,
                "use \"lexicon.trellis\"\nstart Trip\nTrip { \"ferry\" Deck }\n",
            ),
            doc(
                "/harbour/tour.trellis",
                1,
                "use \"lexicon.trellis\"\nstart Tour\nTour { \"tour\" Deck }\n",
            ),
            doc("/harbour/lexicon.trellis", 1, LEXICON),
        ]);
        let parsed = SyntaxCache::new();
        let trip = Path::new("/harbour/trip.trellis");
        let tour = Path::new("/harbour/tour.trellis");
        let analyse = |snapshot: &Snapshot, root: &Path| {
            let result = analyze_root(root, snapshot, 1, &parsed).expect("an open root");
            assert!(
                !result.analysis.has_errors(),
                "{:?}",
                result.analysis.diagnostics
            );
            assert_eq!(result.analysis.sources.len(), 2);
        };
        analyse(&snapshot, trip);
        analyse(&snapshot, tour);
        assert_eq!(parsed.parses(), 3);
        analyse(&snapshot, trip);
        analyse(&snapshot, tour);
        assert_eq!(parsed.parses(), 3);

        snapshot.docs.extend([doc(
            "/harbour/trip.trellis",
            2,
            "use \"lexicon.trellis\"\nstart Trip\nTrip { \"ferry\" Deck | \"boat\" Deck }\n",
        )]);
        analyse(&snapshot, trip);
        analyse(&snapshot, tour);
        assert_eq!(parsed.parses(), 4);

        snapshot.docs.extend([doc(
            "/harbour/lexicon.trellis",
            2,
            "Deck { \"upper\" | \"lower\" | \"car\" }\n",
        )]);
        analyse(&snapshot, trip);
        analyse(&snapshot, tour);
        assert_eq!(parsed.parses(), 5);

        // A file no open grammar reads any more is forgotten.
        parsed.retain(|path| path != Path::new("/harbour/tour.trellis"));
        assert_eq!(parsed.len(), 2);
    }
}
