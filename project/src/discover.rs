//! Finding the grammar files a command-line run is about: files named,
//! and every `.trellis` file under a named directory.

use crate::files::io_reason;
use grammar_lang::source::normalize;
use std::collections::HashMap;
use std::path::{Path, PathBuf};

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
                failures.push(format!("cannot check {}: {}", arg.display(), io_reason(&e)));
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
                io_reason(&e)
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

/// The paths given, or the current directory when there are none.
pub fn paths_or_here(paths: &[PathBuf]) -> Vec<PathBuf> {
    if paths.is_empty() {
        vec![PathBuf::from(".")]
    } else {
        paths.to_vec()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

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
