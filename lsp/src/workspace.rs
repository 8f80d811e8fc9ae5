//! The open documents and the latest analysis of each.
//!
//! Every open `.trellis` document is the root of its own analysis. Files a
//! root `use`s are read from their open buffer when the editor has one, from
//! disk otherwise ([`Overlay`]). Each stored result remembers which version
//! of every open buffer it read, so a result is only reused while those
//! buffers are unchanged.

use crate::convert;
use grammar_lang::config::Config;
use grammar_lang::ide::{EngineFacts, IdeIndex};
use grammar_lang::{analyze, Analysis, FileId, FileLoader};
use std::collections::{BTreeMap, HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::{Arc, OnceLock};
use std::time::Duration;
use tower_lsp::lsp_types::Url;

/// The name of the configuration file looked up above a grammar.
pub const CONFIG_FILE: &str = "trellis.toml";

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

/// Reads files from open buffers first and from disk otherwise.
pub struct Overlay<'a>(pub &'a Snapshot);

impl FileLoader for Overlay<'_> {
    fn load(&self, path: &Path) -> Result<String, String> {
        let path = grammar_lang::source::normalize(path);
        if let Some(doc) = self.0.docs.get(&path) {
            return Ok(doc.text.as_str().to_owned());
        }
        read_disk(&path)
    }
}

/// The UTF-8 text of a file on disk, or a short reason there is none.
pub fn read_disk(path: &Path) -> Result<String, String> {
    let bytes = std::fs::read(path).map_err(|e| match e.kind() {
        std::io::ErrorKind::NotFound => "no such file or directory".to_string(),
        std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
        std::io::ErrorKind::IsADirectory => "it is a directory".to_string(),
        _ => e.to_string(),
    })?;
    String::from_utf8(bytes).map_err(|e| {
        format!(
            "it is not UTF-8 text (invalid byte at offset {}); save it as UTF-8",
            e.utf8_error().valid_up_to()
        )
    })
}

/// The configuration in `found`, the nearest `trellis.toml` above a
/// grammar (see [`config_stamps`]), or the default one when there is none.
/// An unreadable or invalid file gives the default configuration and a
/// message saying why.
pub fn config_for(found: Option<&Path>, loader: &dyn FileLoader) -> (Config, Option<String>) {
    let Some(found) = found else {
        return (Config::default(), None);
    };
    match loader.load(found) {
        Err(reason) => (
            Config::default(),
            Some(format!("cannot read {}: {reason}", found.display())),
        ),
        Ok(text) => match Config::from_toml(&text) {
            Ok(config) => (config, None),
            Err(errors) => {
                let list: Vec<String> = errors.iter().map(|e| e.message.clone()).collect();
                (
                    Config::default(),
                    Some(format!(
                        "{} is invalid, using the default checks: {}",
                        found.display(),
                        list.join("; ")
                    )),
                )
            }
        },
    }
}

/// What identifies a version of a file on disk: its modification time and
/// length.
pub type ConfigStamp = (Option<std::time::SystemTime>, u64);

/// Each place a configuration file could be, with its stamp (`None`: none there).
pub type ConfigStamps = Vec<(PathBuf, Option<ConfigStamp>)>;

/// The stamp of every place a `trellis.toml` could configure the grammar
/// at `root` (its directory and each one above it, nearest first); `None`
/// where there is no such file. The first file found is the one that
/// configures the grammar.
pub fn config_stamps(root: &Path) -> ConfigStamps {
    root.ancestors()
        .skip(1)
        .map(|dir| {
            let candidate = dir.join(CONFIG_FILE);
            let stamp = std::fs::metadata(&candidate)
                .ok()
                .filter(|m| m.is_file())
                .map(|m| (m.modified().ok(), m.len()));
            (candidate, stamp)
        })
        .collect()
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
    /// A problem with `trellis.toml`, if any.
    pub config_problem: Option<String>,
    /// The configuration files as they were when the analysis read its
    /// configuration (see [`config_stamps`]).
    pub config_stamps: ConfigStamps,
    /// The editor services' index, built on first use.
    index: OnceLock<IdeIndex>,
    /// The engine's numbers for hover, computed on first use (`None` when
    /// the grammar has errors or no start symbol: the numbers would describe
    /// a grammar other than the one meant).
    facts: OnceLock<Option<EngineFacts>>,
}

impl RootResult {
    /// The index of the editor services for this analysis.
    pub fn index(&self) -> &IdeIndex {
        self.index.get_or_init(|| IdeIndex::new(&self.analysis))
    }

    /// Termination probabilities and expected rule uses from the engine.
    pub fn facts(&self) -> Option<&EngineFacts> {
        self.facts
            .get_or_init(|| {
                if self.analysis.has_errors() {
                    return None;
                }
                let report = trellis_engine::consistency::analyze(&self.analysis.grammar).ok()?;
                Some(EngineFacts {
                    termination: report
                        .symbols
                        .iter()
                        .map(|s| s.termination_probability)
                        .collect(),
                    rule_expected_uses: report
                        .rule_expected_uses
                        .iter()
                        .map(|u| u.unwrap_or(f64::INFINITY))
                        .collect(),
                })
            })
            .as_ref()
    }

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
/// other file through the snapshot. Pure apart from disk reads; runs on the
/// blocking pool.
pub fn analyze_root(root: &Path, snapshot: &Snapshot, seq: u64) -> Option<RootResult> {
    let doc = snapshot.docs.get(root)?;
    let loader = Overlay(snapshot);
    // Taken before reading: an edit in between only costs one more analysis.
    let config_stamps = config_stamps(root);
    let nearest = config_stamps
        .iter()
        .find(|(_, stamp)| stamp.is_some())
        .map(|(path, _)| path.as_path());
    let (config, config_problem) = config_for(nearest, &loader);
    let mut analysis = analyze(root, &doc.text, &loader, &config);
    // What `trellis check` reports, the editor reports: the engine's
    // `leaky` finding joins the static ones (on grammars without errors).
    trellis_engine::consistency::add_leak_finding(&mut analysis, &config);
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
        config_problem,
        config_stamps,
        index: OnceLock::new(),
        facts: OnceLock::new(),
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
        self.results
            .iter()
            .find(|(root, r)| root.as_path() != path && r.analysis.sources.find(path).is_some())
            .map(|(root, _)| root.clone())
            .or_else(|| self.docs.contains_key(path).then(|| path.to_path_buf()))
    }

    /// The results whose diagnostics are published for `path`: those of the
    /// open roots that `use` it, or else its own when it is an open root.
    /// Empty when the file's diagnostics should be cleared.
    pub fn publishers(&self, path: &Path) -> Vec<Arc<RootResult>> {
        let users: Vec<Arc<RootResult>> = self
            .results
            .iter()
            .filter(|(root, r)| root.as_path() != path && r.analysis.sources.find(path).is_some())
            .map(|(_, r)| r.clone())
            .collect();
        if !users.is_empty() {
            return users;
        }
        self.results.get(path).cloned().into_iter().collect()
    }
}
