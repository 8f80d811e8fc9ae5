//! The commit gate (`editors/git/pre-commit`) in real temporary git
//! repositories: what a grammar team sees when it commits.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A fresh repository with the hook installed and `trellis` on its PATH.
struct Repo {
    dir: tempfile::TempDir,
}

/// The directory of the built `trellis`, put first on the hook's PATH.
fn trellis_dir() -> PathBuf {
    Path::new(env!("CARGO_BIN_EXE_trellis"))
        .parent()
        .expect("the binary is in a directory")
        .to_path_buf()
}

fn hook_script() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../editors/git/pre-commit")
}

impl Repo {
    fn new() -> Repo {
        let repo = Repo {
            dir: tempfile::tempdir().unwrap(),
        };
        repo.git(&["init", "--quiet", "--initial-branch=main"]);
        repo.git(&["config", "user.name", "Harbour Office"]);
        repo.git(&["config", "user.email", "office@harbour.example"]);
        repo.git(&["config", "commit.gpgsign", "false"]);
        let hooks = repo.dir.path().join(".git/hooks");
        fs::create_dir_all(&hooks).unwrap();
        fs::copy(hook_script(), hooks.join("pre-commit")).unwrap();
        repo
    }

    fn git(&self, args: &[&str]) -> Output {
        let path = format!(
            "{}:{}",
            trellis_dir().display(),
            std::env::var("PATH").unwrap_or_default()
        );
        Command::new("git")
            .args(args)
            .current_dir(self.dir.path())
            .env("PATH", path)
            .env_remove("NO_COLOR")
            .env_remove("GIT_DIR")
            .env_remove("GIT_INDEX_FILE")
            .output()
            .expect("git runs")
    }

    fn write(&self, name: &str, text: &str) {
        let path = self.dir.path().join(name);
        fs::create_dir_all(path.parent().unwrap()).unwrap();
        fs::write(path, text).unwrap();
    }

    fn stage(&self, names: &[&str]) {
        let mut args = vec!["add", "--"];
        args.extend_from_slice(names);
        let out = self.git(&args);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    }

    /// Tries to commit what is staged: whether the commit was made, and
    /// what the hook said.
    fn commit(&self, message: &str) -> (bool, String) {
        let out = self.git(&["commit", "--quiet", "-m", message]);
        let said = format!(
            "{}{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
        (out.status.success(), said)
    }
}

/// A kiosk grammar in canonical layout that uses a lexicon, with a test.
const KIOSK: &str = "start Request
use \"words.trellis\"

Request {
  Kind \"ticket\"
}

test \"tickets\" {
  accept \"day ticket\"
  reject \"ticket\"
}
";
const WORDS: &str = "Kind { \"day\" | \"return\" }\n";

/// The weights sum to 0.9: `sum-not-one`.
const BROKEN: &str = "start S

S {
  0.5  \"a\"
  0.4  \"b\"
}
";

fn repo_with_kiosk() -> Repo {
    let repo = Repo::new();
    repo.write("grammars/kiosk.trellis", KIOSK);
    repo.write("grammars/words.trellis", WORDS);
    repo.stage(&["grammars"]);
    let (made, said) = repo.commit("kiosk");
    assert!(made, "a clean grammar is committed: {said}");
    repo
}

#[test]
fn a_clean_grammar_is_committed() {
    repo_with_kiosk();
}

#[test]
fn a_broken_grammar_is_refused_with_its_finding_shown() {
    let repo = repo_with_kiosk();
    repo.write("grammars/harbour.trellis", BROKEN);
    repo.stage(&["grammars/harbour.trellis"]);
    let (made, said) = repo.commit("harbour");
    assert!(!made, "{said}");
    assert!(said.contains("sum-not-one"), "{said}");
    assert!(said.contains("grammars/harbour.trellis"), "{said}");
    assert!(said.contains("the commit is refused"), "{said}");
}

#[test]
fn the_staged_content_is_checked_not_the_working_tree() {
    let repo = repo_with_kiosk();
    repo.write("grammars/harbour.trellis", BROKEN);
    repo.stage(&["grammars/harbour.trellis"]);
    // Fixed in the working tree only: the commit would still record the
    // broken text.
    repo.write(
        "grammars/harbour.trellis",
        "start S\n\nS {\n  0.5  \"a\"\n  0.5  \"b\"\n}\n",
    );
    let (made, said) = repo.commit("harbour");
    assert!(!made, "{said}");
    assert!(said.contains("sum-not-one"), "{said}");
    // Staging the fix lets it through.
    repo.stage(&["grammars/harbour.trellis"]);
    let (made, said) = repo.commit("harbour");
    assert!(made, "{said}");
}

#[test]
fn a_lexicon_changed_alone_is_checked_as_part_of_the_grammars_that_use_it() {
    let repo = repo_with_kiosk();
    // The lexicon on its own is fine (a library), but the kiosk's test
    // needs "day".
    repo.write(
        "grammars/words.trellis",
        "Kind { \"single\" | \"return\" }\n",
    );
    repo.stage(&["grammars/words.trellis"]);
    let (made, said) = repo.commit("words");
    assert!(!made, "{said}");
    assert!(said.contains("tickets"), "the kiosk's test fails: {said}");
    assert!(said.contains("day"), "{said}");
}

#[test]
fn a_warning_is_refused_too() {
    let repo = repo_with_kiosk();
    // An unreachable block is a warning; the gate denies warnings.
    repo.write(
        "grammars/harbour.trellis",
        "start S\n\nS { \"a\" }\n\nLost { \"b\" }\n",
    );
    repo.stage(&["grammars/harbour.trellis"]);
    let (made, said) = repo.commit("harbour");
    assert!(!made, "{said}");
    assert!(said.contains("unreachable"), "{said}");
}

#[test]
fn a_file_out_of_canonical_layout_is_refused() {
    let repo = repo_with_kiosk();
    repo.write(
        "grammars/harbour.trellis",
        "start S\nS {   0.5 \"a\"|0.5 \"b\" }\n",
    );
    repo.stage(&["grammars/harbour.trellis"]);
    let (made, said) = repo.commit("harbour");
    assert!(!made, "{said}");
    assert!(said.contains("grammars/harbour.trellis"), "{said}");
    assert!(said.contains("trellis fmt"), "{said}");
}

#[test]
fn a_commit_without_grammar_files_is_not_checked() {
    let repo = repo_with_kiosk();
    repo.write("README.md", "ferry kiosk grammars\n");
    repo.stage(&["README.md"]);
    let (made, said) = repo.commit("readme");
    assert!(made, "{said}");
    assert!(!said.contains("trellis pre-commit"), "{said}");
}
