//! Reading grammar files: one loader, one wording for every failure.

use grammar_lang::FileLoader;
use std::io::ErrorKind;
use std::path::Path;

/// Loads `use`d files from the file system, as UTF-8 text.
#[derive(Clone, Copy, Debug, Default)]
pub struct DiskLoader;

impl FileLoader for DiskLoader {
    fn load(&self, path: &Path) -> Result<String, String> {
        read_text(path)
    }
}

/// Loads files from the editor's open buffers first and from disk
/// otherwise: `open` gives the text of an open buffer at a (normalized)
/// path.
pub struct Overlay<F>(pub F);

impl<F> FileLoader for Overlay<F>
where
    F: Fn(&Path) -> Option<String>,
{
    fn load(&self, path: &Path) -> Result<String, String> {
        let path = grammar_lang::source::normalize(path);
        match (self.0)(&path) {
            Some(text) => Ok(text),
            None => read_text(&path),
        }
    }
}

/// The UTF-8 text of the file at `path`, or a short reason why there is none,
/// phrased to follow "cannot read <path>: ".
pub fn read_text(path: &Path) -> Result<String, String> {
    let bytes = std::fs::read(path).map_err(|e| io_reason(&e))?;
    decode(bytes)
}

/// Turns file bytes into text, naming the first bad byte and its line.
pub fn decode(bytes: Vec<u8>) -> Result<String, String> {
    String::from_utf8(bytes).map_err(|e| {
        let offset = e.utf8_error().valid_up_to();
        let bytes = e.as_bytes();
        let line = 1 + bytes[..offset].iter().filter(|&&b| b == b'\n').count();
        format!(
            "it is not UTF-8 text (invalid byte 0x{:02X} on line {line}); save it as UTF-8",
            bytes[offset]
        )
    })
}

/// Replaces the file at `path` with `text` atomically: the text goes to a
/// temporary file in the same directory, which takes the old file's
/// permissions and is then renamed over it, so a reader (or an interrupted
/// run) sees the old file or the new one, never half of one. The error is a
/// short reason, phrased to follow "cannot write <path>: ".
pub fn write_atomic(path: &Path, text: &str) -> Result<(), String> {
    use std::io::Write;
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let dir = match path.parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir,
        _ => Path::new("."),
    };
    let name = path
        .file_name()
        .ok_or_else(|| "it is not a file name".to_string())?
        .to_string_lossy();
    let permissions = std::fs::metadata(path).ok().map(|m| m.permissions());
    let mut attempt = 0;
    let (temp, mut file) = loop {
        let n = COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        let temp = dir.join(format!(".{name}.{}-{n}.tmp", std::process::id()));
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&temp)
        {
            Ok(file) => break (temp, file),
            Err(e) if e.kind() == ErrorKind::AlreadyExists && attempt < 100 => attempt += 1,
            Err(e) => return Err(io_reason(&e)),
        }
    };
    let written = file
        .write_all(text.as_bytes())
        .and_then(|()| file.sync_all())
        .and_then(|()| match permissions {
            Some(p) => std::fs::set_permissions(&temp, p),
            None => Ok(()),
        })
        .and_then(|()| std::fs::rename(&temp, path));
    drop(file);
    written.map_err(|e| {
        let _ = std::fs::remove_file(&temp);
        io_reason(&e)
    })
}

/// A short, stable description of an I/O failure.
pub fn io_reason(e: &std::io::Error) -> String {
    match e.kind() {
        ErrorKind::NotFound => "no such file or directory".to_string(),
        ErrorKind::PermissionDenied => "permission denied".to_string(),
        ErrorKind::IsADirectory => "it is a directory".to_string(),
        _ => e.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn invalid_utf8_names_the_byte_and_its_line() {
        // 0xFF never occurs in UTF-8 (RFC 3629, section 1).
        let err = decode(b"start S\nS { \"f\xFFhre\" }\n".to_vec()).unwrap_err();
        assert!(err.contains("not UTF-8"), "{err}");
        assert!(err.contains("0xFF"), "{err}");
        assert!(err.contains("line 2"), "{err}");
    }

    #[test]
    fn valid_utf8_with_non_ascii_text_is_kept_as_is() {
        let text = "S { \"Fähre\" }\n";
        assert_eq!(decode(text.as_bytes().to_vec()).unwrap(), text);
    }

    #[test]
    fn an_atomic_write_replaces_the_text_keeps_permissions_and_leaves_no_temporary_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("g.trellis");
        std::fs::write(&path, "old\n").unwrap();
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o640)).unwrap();
        }
        write_atomic(&path, "new\n").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "new\n");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(&path).unwrap().permissions().mode();
            assert_eq!(mode & 0o777, 0o640);
        }
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names, vec![std::ffi::OsString::from("g.trellis")]);
    }

    #[test]
    fn a_failed_atomic_write_says_why() {
        let dir = tempfile::tempdir().unwrap();
        let err = write_atomic(&dir.path().join("no/such/dir/g.trellis"), "x").unwrap_err();
        assert_eq!(err, "no such file or directory");
    }

    #[test]
    fn a_missing_file_is_reported_plainly() {
        let dir = tempfile::tempdir().unwrap();
        let err = DiskLoader
            .load(&dir.path().join("absent.trellis"))
            .unwrap_err();
        assert_eq!(err, "no such file or directory");
    }

    #[test]
    fn a_directory_is_not_a_grammar_file() {
        let dir = tempfile::tempdir().unwrap();
        let err = read_text(dir.path()).unwrap_err();
        assert_eq!(err, "it is a directory");
    }

    #[test]
    fn an_open_buffer_wins_over_the_disk_and_the_disk_answers_the_rest() {
        let dir = tempfile::tempdir().unwrap();
        let on_disk = dir.path().join("words.trellis");
        std::fs::write(&on_disk, "W { \"disk\" }\n").unwrap();
        let open = dir.path().join("kiosk.trellis");
        let overlay = Overlay(|p: &Path| (p == open).then(|| "K { \"buffer\" }\n".to_string()));
        assert_eq!(overlay.load(&open).unwrap(), "K { \"buffer\" }\n");
        assert_eq!(overlay.load(&on_disk).unwrap(), "W { \"disk\" }\n");
        // The same message as the disk loader's, whichever loader reads.
        let missing = dir.path().join("absent.trellis");
        assert_eq!(overlay.load(&missing), DiskLoader.load(&missing));
    }
}
