//! A run reads and parses each file once, however many grammars reach it,
//! and analyses only the roots that stand as grammars of their own.

use std::fs;
use std::path::{Path, PathBuf};
use trellis_project::{analyse_paths_with, select, FileCache};

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    fs::write(&path, text).unwrap();
    path
}

#[test]
fn a_lexicon_two_grammars_use_is_read_and_parsed_once() {
    let dir = tempfile::tempdir().unwrap();
    let ferry = write(
        dir.path(),
        "ferry.trellis",
        "start Request\nuse \"words.trellis\"\nRequest { Kind \"ticket\" }\n",
    );
    let greenhouse = write(
        dir.path(),
        "greenhouse.trellis",
        "start Command\nuse \"words.trellis\"\nCommand { \"water\" Kind }\n",
    );
    write(
        dir.path(),
        "words.trellis",
        "Kind { \"day\" | \"return\" }\n",
    );
    let cache = FileCache::new();
    let analysed = analyse_paths_with(&[ferry, greenhouse], &cache)
        .ok()
        .unwrap();
    // Both named grammars are analysed, and each holds the lexicon.
    assert_eq!(analysed.checked.len(), 2);
    for c in &analysed.checked {
        assert_eq!(c.analysis.sources.len(), 2);
        assert!(!c.analysis.has_errors(), "{:?}", c.analysis.diagnostics);
    }
    // Three files: three reads and three parses, not four.
    assert_eq!(cache.reads(), 3);
    assert_eq!(cache.parses(), 3);
}

#[test]
fn a_use_chain_found_in_a_directory_is_analysed_once_from_its_head() {
    let dir = tempfile::tempdir().unwrap();
    let n = 6;
    for i in 0..n {
        let mut text = String::new();
        if i == 0 {
            text.push_str("start B0\n");
        }
        if i + 1 < n {
            text.push_str(&format!(
                "use \"link{}.trellis\"\nB{i} {{ \"w{i}\" B{} | \"end\" }}\n",
                i + 1,
                i + 1
            ));
        } else {
            text.push_str(&format!("B{i} {{ \"end\" }}\n"));
        }
        write(dir.path(), &format!("link{i}.trellis"), &text);
    }
    let cache = FileCache::new();
    let analysed = analyse_paths_with(&[dir.path().to_path_buf()], &cache)
        .ok()
        .unwrap();
    // Only the head stands as a grammar; the others are part of it.
    let roots: Vec<_> = analysed
        .checked
        .iter()
        .map(|c| c.root.path.file_name().unwrap().to_owned())
        .collect();
    assert_eq!(roots, ["link0.trellis"]);
    assert_eq!(analysed.checked[0].analysis.sources.len(), n);
    // Each file read once and parsed once for the whole run.
    assert_eq!(cache.reads(), n);
    assert_eq!(cache.parses(), n);
    let selection = select(&analysed.checked, trellis_project::identity);
    assert_eq!(selection.files, n);
    assert!(selection.findings.is_empty(), "{:?}", selection.findings);
}
