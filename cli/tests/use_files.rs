//! What `use` (and every other file trellis reads) accepts: only regular
//! files, up to a size limit, inside the project root when `trellis.toml`
//! confines it — each refusal a located `use-missing` error at the `use`
//! string, in words of its own, with advice that fits.

mod common;

use common::{trellis, Run};
use serde_json::Value;
use std::fs;
use std::path::Path;
use std::process::Command;

fn write(dir: &Path, name: &str, text: &str) {
    let path = dir.join(name);
    fs::create_dir_all(path.parent().unwrap()).unwrap();
    fs::write(path, text).unwrap();
}

/// A kiosk grammar whose second line uses `target`.
fn kiosk_using(target: &str) -> String {
    format!("start Request\nuse \"{target}\"\nRequest {{ \"ticket\" }}\n")
}

/// The one finding of `trellis check --format json kiosk.trellis` in `dir`.
fn the_use_error(dir: &Path) -> Value {
    let run = trellis(dir, &["check", "--format", "json", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let value: Value = serde_json::from_str(&run.stdout)
        .unwrap_or_else(|e| panic!("stdout is one JSON value ({e}): {}", run.stdout));
    let diagnostics = value["diagnostics"].as_array().expect("an array").clone();
    assert_eq!(diagnostics.len(), 1, "{diagnostics:?}");
    let d = diagnostics[0].clone();
    assert_eq!(d["code"], "use-missing", "{d}");
    assert_eq!(d["file"], "kiosk.trellis");
    // At the path string of line 2, `use "…"`: column 5 is its opening quote.
    assert_eq!(
        (d["line"].as_u64(), d["column"].as_u64()),
        (Some(2), Some(5))
    );
    d
}

fn message(d: &Value) -> &str {
    d["message"].as_str().unwrap()
}

fn help(d: &Value) -> &str {
    d["help"].as_str().unwrap()
}

#[test]
fn a_fifo_is_refused_without_being_opened_for_a_blocking_read() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("pipe.trellis"));
    // mkfifo is in coreutils. Nobody writes to the FIFO: a blocking open
    // would never return.
    let made = Command::new("mkfifo")
        .arg(dir.path().join("pipe.trellis"))
        .status()
        .expect("mkfifo runs");
    assert!(made.success());
    let d = the_use_error(dir.path());
    assert!(
        message(&d).ends_with("it is a FIFO (named pipe), not a regular file"),
        "{d}"
    );
    assert!(help(&d).contains("only regular files are read"), "{d}");

    // Named on the command line, it is refused the same way.
    let run = trellis(dir.path(), &["check", "pipe.trellis"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(run.stderr.contains("FIFO"), "{}", run.stderr);
}

#[test]
fn a_sentence_file_that_is_a_fifo_is_refused_too() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("words.trellis"));
    write(dir.path(), "words.trellis", "Kind { \"day\" }\n");
    Command::new("mkfifo")
        .arg(dir.path().join("sentences.txt"))
        .status()
        .expect("mkfifo runs");
    let run = trellis(
        dir.path(),
        &["parse", "kiosk.trellis", "--input", "sentences.txt"],
    );
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr
            .contains("cannot read sentences.txt: it is a FIFO (named pipe)"),
        "{}",
        run.stderr
    );
}

#[test]
fn a_device_that_never_ends_is_refused_before_anything_is_read() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("/dev/zero"));
    let d = the_use_error(dir.path());
    assert!(
        message(&d).ends_with("it is a character device, not a regular file"),
        "{d}"
    );
}

#[test]
fn a_directory_is_named_as_one() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("lexicon"));
    fs::create_dir(dir.path().join("lexicon")).unwrap();
    let d = the_use_error(dir.path());
    assert!(
        message(&d).ends_with("it is a directory, not a file"),
        "{d}"
    );
    assert!(help(&d).contains("inside the directory"), "{d}");
}

#[test]
fn a_missing_file_advises_fixing_the_path_or_creating_the_file() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("words.trellis"));
    let d = the_use_error(dir.path());
    assert!(message(&d).ends_with("no such file or directory"), "{d}");
    assert!(help(&d).contains("create the file"), "{d}");
    assert!(help(&d).contains("relative to the directory of"), "{d}");
}

#[cfg(unix)]
#[test]
fn a_symlink_loop_is_said_in_words_not_as_a_raw_os_error() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("a.trellis"));
    std::os::unix::fs::symlink("b.trellis", dir.path().join("a.trellis")).unwrap();
    std::os::unix::fs::symlink("a.trellis", dir.path().join("b.trellis")).unwrap();
    let d = the_use_error(dir.path());
    assert!(
        message(&d).ends_with("the path runs into a loop of symbolic links"),
        "{d}"
    );
    assert!(!message(&d).contains("os error"), "{d}");
    assert!(help(&d).contains("symbolic link"), "{d}");
    assert!(!help(&d).contains("create the file"), "{d}");
}

#[cfg(unix)]
#[test]
fn permission_denied_advises_permissions_not_creating_the_file() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", &kiosk_using("words.trellis"));
    let words = dir.path().join("words.trellis");
    fs::write(&words, "Kind { \"day\" }\n").unwrap();
    fs::set_permissions(&words, fs::Permissions::from_mode(0o000)).unwrap();
    if fs::read(&words).is_ok() {
        // Running as root (as in some CI containers): root reads any file,
        // so there is no refusal to observe.
        return;
    }
    let d = the_use_error(dir.path());
    assert!(message(&d).ends_with("permission denied"), "{d}");
    assert!(help(&d).contains("chmod"), "{d}");
    assert!(!help(&d).contains("create the file"), "{d}");
}

#[test]
fn a_file_over_the_configured_size_limit_is_refused_with_both_sizes() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "trellis.toml", "[files]\nmax-size-mib = 1\n");
    write(dir.path(), "kiosk.trellis", &kiosk_using("words.trellis"));
    // A block and 2 MiB of comment lines.
    let line = "# ferry timetable notes, kept for the record\n";
    let words = format!(
        "Kind {{ \"day\" }}\n{}",
        line.repeat((2 << 20) / line.len())
    );
    write(dir.path(), "words.trellis", &words);
    let d = the_use_error(dir.path());
    assert!(
        message(&d)
            .contains("MiB, over the 1 MiB limit (set by `[files] max-size-mib` in trellis.toml)"),
        "{d}"
    );
    assert!(help(&d).contains("raise `max-size-mib`"), "{d}");

    // Without the setting, the default limit is far above 2 MiB.
    fs::remove_file(dir.path().join("trellis.toml")).unwrap();
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert!(!run.stdout.contains("use-missing"), "{}", run.stdout);
}

#[test]
fn confine_use_keeps_use_inside_the_project_root() {
    let dir = tempfile::tempdir().unwrap();
    let project = dir.path().join("project");
    write(&project, "trellis.toml", "[files]\nconfine-use = true\n");
    write(&project, "lexicon/days.trellis", "Day { \"monday\" }\n");
    write(dir.path(), "shared/words.trellis", "Kind { \"day\" }\n");

    write(
        &project,
        "kiosk.trellis",
        &kiosk_using("../shared/words.trellis"),
    );
    let d = the_use_error(&project);
    assert!(message(&d).contains("outside the project root"), "{d}");
    assert!(help(&d).contains("confine-use = true"), "{d}");

    // Inside the root, `use` reads as usual.
    write(
        &project,
        "kiosk.trellis",
        &kiosk_using("lexicon/days.trellis"),
    );
    let run: Run = trellis(&project, &["check", "--format", "json", "kiosk.trellis"]);
    assert!(!run.stdout.contains("use-missing"), "{}", run.stdout);

    // Without the setting, the file outside is read.
    write(&project, "trellis.toml", "");
    write(
        &project,
        "kiosk.trellis",
        &kiosk_using("../shared/words.trellis"),
    );
    let run = trellis(&project, &["check", "--format", "json", "kiosk.trellis"]);
    assert!(!run.stdout.contains("use-missing"), "{}", run.stdout);
}
