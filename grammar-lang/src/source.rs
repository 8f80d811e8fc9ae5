//! The set of source files one analysis reads, and how it reads them.
//!
//! The core never touches the file system: a [`FileLoader`] supplied by the
//! shell (CLI, language server, tests) resolves and reads `use`d files.

use crate::span::LineIndex;
use std::path::{Path, PathBuf};

/// Index of a file inside a [`SourceMap`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
pub struct FileId(pub u32);

/// One loaded file.
#[derive(Clone, Debug)]
pub struct SourceFile {
    pub path: PathBuf,
    pub text: String,
    pub lines: LineIndex,
}

/// Every file of one analysis, in load order (the root file is first).
#[derive(Clone, Debug, Default)]
pub struct SourceMap {
    files: Vec<SourceFile>,
}

impl SourceMap {
    pub fn new() -> Self {
        SourceMap::default()
    }

    pub fn add(&mut self, path: PathBuf, text: String) -> FileId {
        let id = FileId(self.files.len() as u32);
        let lines = LineIndex::new(&text);
        self.files.push(SourceFile { path, text, lines });
        id
    }

    pub fn get(&self, id: FileId) -> &SourceFile {
        &self.files[id.0 as usize]
    }

    pub fn find(&self, path: &Path) -> Option<FileId> {
        self.files
            .iter()
            .position(|f| f.path == path)
            .map(|i| FileId(i as u32))
    }

    pub fn iter(&self) -> impl Iterator<Item = (FileId, &SourceFile)> {
        self.files
            .iter()
            .enumerate()
            .map(|(i, f)| (FileId(i as u32), f))
    }

    pub fn len(&self) -> usize {
        self.files.len()
    }

    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }
}

/// Why a file cannot be read: what is wrong and what to do about it, both
/// phrased by the loader that knows (the project layer names every kind of
/// operating-system failure; an in-memory loader only knows "no such file").
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Unreadable {
    /// A short reason, phrased to follow "cannot read <path>: ".
    pub reason: String,
    /// What to do, one sentence.
    pub help: String,
    /// Whether nothing exists at the path: the advice then also says how
    /// the `use` path was resolved.
    pub missing: bool,
}

impl Unreadable {
    /// Nothing exists at the path.
    pub fn missing(reason: impl Into<String>) -> Self {
        Unreadable {
            reason: reason.into(),
            help: "fix the path or create the file".into(),
            missing: true,
        }
    }

    /// Something exists but cannot be used; `help` says what to do.
    pub fn refused(reason: impl Into<String>, help: impl Into<String>) -> Self {
        Unreadable {
            reason: reason.into(),
            help: help.into(),
            missing: false,
        }
    }
}

impl std::fmt::Display for Unreadable {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.reason)
    }
}

/// Reads the files a grammar `use`s. Implemented by the shells.
pub trait FileLoader {
    /// The text of the file at `path`, or why it cannot be read.
    fn load(&self, path: &Path) -> Result<String, Unreadable>;

    /// The syntax of `text`, the content of the file at `path`, parsed with
    /// `parse`. A loader that keeps parsed files for several analyses (a
    /// command-line run over many grammars that share files) returns its
    /// copy when it parsed this very text before; the default parses.
    fn syntax(
        &self,
        path: &Path,
        text: &str,
        parse: &dyn Fn(&str) -> crate::syntax::ast::SyntaxFile,
    ) -> crate::syntax::ast::SyntaxFile {
        let _ = path;
        parse(text)
    }
}

/// Resolves `use "target"` written in `from` to a path: relative paths are
/// taken relative to the directory of the using file. Purely lexical.
pub fn resolve_use(from: &Path, target: &str) -> PathBuf {
    let target = Path::new(target);
    let joined = if target.is_absolute() {
        target.to_path_buf()
    } else {
        from.parent().unwrap_or(Path::new("")).join(target)
    };
    normalize(&joined)
}

/// Removes `.` and folds `dir/..` without touching the file system.
pub fn normalize(path: &Path) -> PathBuf {
    use std::path::Component;
    let mut out = PathBuf::new();
    for comp in path.components() {
        match comp {
            Component::CurDir => {}
            Component::ParentDir => {
                let last_is_normal =
                    matches!(out.components().next_back(), Some(Component::Normal(_)));
                if last_is_normal {
                    out.pop();
                } else {
                    out.push("..");
                }
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// A loader over an in-memory set of files, for tests and editors.
#[derive(Clone, Debug, Default)]
pub struct MemoryLoader {
    pub files: Vec<(PathBuf, String)>,
}

impl MemoryLoader {
    pub fn new() -> Self {
        MemoryLoader::default()
    }

    pub fn with(mut self, path: impl Into<PathBuf>, text: impl Into<String>) -> Self {
        self.files.push((normalize(&path.into()), text.into()));
        self
    }
}

impl FileLoader for MemoryLoader {
    fn load(&self, path: &Path) -> Result<String, Unreadable> {
        let path = normalize(path);
        self.files
            .iter()
            .find(|(p, _)| *p == path)
            .map(|(_, t)| t.clone())
            .ok_or_else(|| Unreadable::missing("no such file"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn use_paths_are_relative_to_the_using_file() {
        assert_eq!(
            resolve_use(Path::new("grammars/kiosk.trellis"), "lex/words.trellis"),
            PathBuf::from("grammars/lex/words.trellis")
        );
        assert_eq!(
            resolve_use(Path::new("a/b/main.trellis"), "../shared.trellis"),
            PathBuf::from("a/shared.trellis")
        );
        assert_eq!(
            resolve_use(Path::new("main.trellis"), "./x.trellis"),
            PathBuf::from("x.trellis")
        );
    }
}
