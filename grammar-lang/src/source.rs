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

/// Reads the files a grammar `use`s. Implemented by the shells.
pub trait FileLoader {
    /// The text of the file at `path`, or a short reason it cannot be read.
    fn load(&self, path: &Path) -> Result<String, String>;
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
    fn load(&self, path: &Path) -> Result<String, String> {
        let path = normalize(path);
        self.files
            .iter()
            .find(|(p, _)| *p == path)
            .map(|(_, t)| t.clone())
            .ok_or_else(|| "no such file".to_string())
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
