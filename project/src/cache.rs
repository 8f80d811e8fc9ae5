//! Files read and parsed once per command-line run.
//!
//! A directory of grammars often shares files: a lexicon several grammars
//! `use`, or a chain of files each using the next. Analysing every root on
//! its own would read and parse a file once per grammar that reaches it —
//! quadratic on a chain. A [`FileCache`] reads each file once (keyed by its
//! canonical path and the size limit it was read under) and parses each
//! text once; every analysis of the run reads through it
//! ([`FileCache::loader`]), so the parsed results are shared.

use crate::files::{read_file, ReadPolicy};
use grammar_lang::syntax::ast::SyntaxFile;
use grammar_lang::{FileLoader, Unreadable};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex, OnceLock, PoisonError};

/// One file as read: its text, and its syntax once some analysis asked.
struct Entry {
    text: String,
    syntax: OnceLock<SyntaxFile>,
    /// The targets of its `use` declarations, as written.
    uses: OnceLock<Vec<String>>,
}

impl Entry {
    fn new(text: String) -> Arc<Entry> {
        Arc::new(Entry {
            text,
            syntax: OnceLock::new(),
            uses: OnceLock::new(),
        })
    }
}

/// Files by canonical path and the size limit each was read under.
type Entries = HashMap<(PathBuf, u64), Result<Arc<Entry>, Unreadable>>;

/// The files of one run, each read and parsed at most once.
#[derive(Default)]
pub struct FileCache {
    /// By canonical path and the size limit the file was read under.
    entries: Mutex<Entries>,
    reads: AtomicUsize,
    parses: AtomicUsize,
}

impl FileCache {
    pub fn new() -> Self {
        FileCache::default()
    }

    /// How many files were read from disk so far.
    pub fn reads(&self) -> usize {
        self.reads.load(Ordering::Relaxed)
    }

    /// How many texts were parsed so far.
    pub fn parses(&self) -> usize {
        self.parses.load(Ordering::Relaxed)
    }

    /// A loader that reads by `policy` through this cache.
    pub fn loader(&self, policy: ReadPolicy) -> CachedLoader<'_> {
        CachedLoader {
            cache: self,
            policy,
        }
    }

    /// The entry for the file at `path`, read by `policy` on first use. A
    /// path that cannot be resolved (missing, a symbolic-link loop, no
    /// permission on a directory) is not cached: the reader says why.
    fn entry(&self, path: &Path, policy: &ReadPolicy) -> Result<Arc<Entry>, Unreadable> {
        let canonical = match std::fs::canonicalize(path) {
            Ok(canonical) => canonical,
            Err(_) => {
                self.reads.fetch_add(1, Ordering::Relaxed);
                return read_file(path, policy).map(Entry::new);
            }
        };
        let key = (canonical, policy.max_bytes);
        if let Some(found) = self.lock().get(&key) {
            return found.clone();
        }
        self.reads.fetch_add(1, Ordering::Relaxed);
        let read = read_file(path, policy).map(Entry::new);
        self.lock().entry(key).or_insert(read).clone()
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, Entries> {
        // A panic elsewhere leaves the map consistent: entries are inserted whole.
        self.entries.lock().unwrap_or_else(PoisonError::into_inner)
    }

    fn parse(&self, text: &str, parse: &dyn Fn(&str) -> SyntaxFile) -> SyntaxFile {
        self.parses.fetch_add(1, Ordering::Relaxed);
        parse(text)
    }
}

/// Reads through a [`FileCache`] by one grammar's [`ReadPolicy`].
pub struct CachedLoader<'c> {
    cache: &'c FileCache,
    policy: ReadPolicy,
}

impl CachedLoader<'_> {
    /// The text of the file at `path` as a grammar's own root: read by the
    /// policy's size limit but never confined (it is not a `use`).
    pub fn root_text(&self, path: &Path) -> Result<String, Unreadable> {
        self.cache
            .entry(path, &self.policy)
            .map(|entry| entry.text.clone())
    }

    /// The targets of the `use` declarations of the file at `path`, as
    /// written, from the shared syntax (parsed with `parse` on first use);
    /// `confined` says whether the file is read as a `use`.
    pub fn uses(
        &self,
        path: &Path,
        confined: bool,
        parse: &dyn Fn(&str) -> SyntaxFile,
    ) -> Result<Vec<String>, Unreadable> {
        if confined {
            self.policy.check_confined(path)?;
        }
        let entry = self.cache.entry(path, &self.policy)?;
        let uses = entry.uses.get_or_init(|| {
            let syntax = entry
                .syntax
                .get_or_init(|| self.cache.parse(&entry.text, parse));
            syntax
                .decls
                .iter()
                .filter_map(|d| match d {
                    grammar_lang::syntax::ast::Decl::Use(u) => Some(u.path.value.to_string()),
                    _ => None,
                })
                .collect()
        });
        Ok(uses.clone())
    }
}

impl FileLoader for CachedLoader<'_> {
    fn load(&self, path: &Path) -> Result<String, Unreadable> {
        self.policy.check_confined(path)?;
        self.cache
            .entry(path, &self.policy)
            .map(|entry| entry.text.clone())
    }

    fn syntax(&self, path: &Path, text: &str, parse: &dyn Fn(&str) -> SyntaxFile) -> SyntaxFile {
        match self.cache.entry(path, &self.policy) {
            // The cached copy only stands for this very text.
            Ok(entry) if entry.text == text => entry
                .syntax
                .get_or_init(|| self.cache.parse(text, parse))
                .clone(),
            _ => self.cache.parse(text, parse),
        }
    }
}

/// Parsed files kept between the analyses of a long session (the language
/// server): every analysis of every open grammar reads its files' syntax
/// through it ([`SyntaxCache::over`]), so a file that several grammars
/// `use`, or that did not change since the last edit elsewhere, is parsed
/// once and not once per grammar per edit. An entry stands for one path
/// and the very text it was parsed from: a changed text (an edit, a file
/// changed on disk) is parsed again and replaces it.
#[derive(Default)]
pub struct SyntaxCache {
    entries: Mutex<HashMap<PathBuf, Arc<Parsed>>>,
    parses: AtomicUsize,
}

/// A text and its syntax.
struct Parsed {
    text: String,
    syntax: SyntaxFile,
}

impl std::fmt::Debug for SyntaxCache {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SyntaxCache")
            .field("files", &self.len())
            .field("parses", &self.parses())
            .finish()
    }
}

impl SyntaxCache {
    pub fn new() -> Self {
        SyntaxCache::default()
    }

    /// How many texts were parsed so far.
    pub fn parses(&self) -> usize {
        self.parses.load(Ordering::Relaxed)
    }

    /// How many files are kept.
    pub fn len(&self) -> usize {
        self.lock().len()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Forgets the files for which `keep` is false (those no open grammar
    /// reads any more), so that the cache holds what the session uses.
    pub fn retain(&self, keep: impl Fn(&Path) -> bool) {
        self.lock().retain(|path, _| keep(path));
    }

    /// `loader`, with the syntax of each file it loads taken from this
    /// cache.
    pub fn over<L: FileLoader>(&self, loader: L) -> SharingLoader<'_, L> {
        SharingLoader {
            cache: self,
            inner: loader,
        }
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, HashMap<PathBuf, Arc<Parsed>>> {
        // Entries are inserted whole: a panic elsewhere leaves the map usable.
        self.entries.lock().unwrap_or_else(PoisonError::into_inner)
    }

    fn syntax(&self, path: &Path, text: &str, parse: &dyn Fn(&str) -> SyntaxFile) -> SyntaxFile {
        let found = self.lock().get(path).cloned();
        if let Some(parsed) = found.filter(|p| p.text == text) {
            return parsed.syntax.clone();
        }
        // Parsed outside the lock: analyses of other grammars go on.
        self.parses.fetch_add(1, Ordering::Relaxed);
        let syntax = parse(text);
        self.lock().insert(
            path.to_path_buf(),
            Arc::new(Parsed {
                text: text.to_owned(),
                syntax: syntax.clone(),
            }),
        );
        syntax
    }
}

/// A loader whose files' syntax comes from a [`SyntaxCache`].
pub struct SharingLoader<'c, L> {
    cache: &'c SyntaxCache,
    inner: L,
}

impl<L: FileLoader> FileLoader for SharingLoader<'_, L> {
    fn load(&self, path: &Path) -> Result<String, Unreadable> {
        self.inner.load(path)
    }

    fn syntax(&self, path: &Path, text: &str, parse: &dyn Fn(&str) -> SyntaxFile) -> SyntaxFile {
        self.cache.syntax(path, text, parse)
    }
}
