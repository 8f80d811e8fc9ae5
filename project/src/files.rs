//! Reading grammar files: one reader, one wording for every failure.
//!
//! Every file trellis reads as text — a grammar named on the command line,
//! a file a grammar `use`s, a sentence file, `trellis.toml` — goes through
//! [`read_file`], which reads only regular files, and only up to a size
//! limit: a `use` of `/dev/zero` must not fill the memory, and a `use` of a
//! FIFO or `/dev/stdin` must not block the language server's worker. The
//! file is checked before it is opened, opened without blocking (so a FIFO
//! swapped in between cannot block), checked again on the open handle, and
//! read no further than the limit (so a file that grows cannot exceed it).

use grammar_lang::source::normalize;
use grammar_lang::{FileLoader, Unreadable};
use std::io::{ErrorKind, Read};
use std::path::{Path, PathBuf};

/// The largest file read by default, in MiB (`[files] max-size-mib` in
/// `trellis.toml` changes it).
pub const DEFAULT_MAX_SIZE_MIB: u64 = 64;

/// How grammar files are read: the size limit, and the directory `use` is
/// confined to when `trellis.toml` asks for it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ReadPolicy {
    /// The largest file read, in bytes.
    pub max_bytes: u64,
    /// The `trellis.toml` that set the limit (`None`: the default limit).
    pub limit_set_by: Option<PathBuf>,
    /// `confine-use = true`: the only directory `use` may read below.
    pub confine: Option<Confinement>,
}

/// Where `use` may read: below `root`, as `set_by` (a `trellis.toml`) says.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Confinement {
    pub root: PathBuf,
    pub set_by: PathBuf,
}

impl Default for ReadPolicy {
    fn default() -> Self {
        ReadPolicy {
            max_bytes: DEFAULT_MAX_SIZE_MIB << 20,
            limit_set_by: None,
            confine: None,
        }
    }
}

impl ReadPolicy {
    /// Whether `use` may read `path` (resolved lexically from the using
    /// file); a refusal says where the project root is and who confined it.
    pub fn check_confined(&self, path: &Path) -> Result<(), Unreadable> {
        let Some(confine) = &self.confine else {
            return Ok(());
        };
        let root = std::fs::canonicalize(&confine.root).unwrap_or_else(|_| confine.root.clone());
        // Symbolic links are followed: a link inside the root to a file
        // outside it is outside. A path that does not exist is judged as written.
        let target = std::fs::canonicalize(path).unwrap_or_else(|_| {
            normalize(&std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf()))
        });
        if target.starts_with(&root) {
            return Ok(());
        }
        Err(Unreadable::refused(
            format!(
                "it lies outside the project root {} (it is {})",
                root.display(),
                target.display()
            ),
            format!(
                "{} sets `confine-use = true`, so `use` reads only files below its directory; \
                 copy the file into the project or remove that setting if you trust the grammar",
                confine.set_by.display()
            ),
        ))
    }
}

/// Loads `use`d files from the file system, as UTF-8 text, by a [`ReadPolicy`].
#[derive(Clone, Debug, Default)]
pub struct DiskLoader {
    pub policy: ReadPolicy,
}

impl DiskLoader {
    pub fn new(policy: ReadPolicy) -> Self {
        DiskLoader { policy }
    }
}

impl FileLoader for DiskLoader {
    fn load(&self, path: &Path) -> Result<String, Unreadable> {
        self.policy.check_confined(path)?;
        read_file(path, &self.policy)
    }
}

/// Loads files from the editor's open buffers first and from disk
/// otherwise: `open` gives the text of an open buffer at a (normalized)
/// path. Confinement applies to open buffers too; the size limit only to
/// the disk (an open buffer is already in memory).
pub struct Overlay<F> {
    open: F,
    disk: DiskLoader,
}

impl<F> Overlay<F>
where
    F: Fn(&Path) -> Option<String>,
{
    /// Open buffers over the disk, read by the default policy.
    pub fn new(open: F) -> Self {
        Overlay {
            open,
            disk: DiskLoader::default(),
        }
    }

    /// The same buffers, with the disk read by `policy`.
    pub fn reading(self, policy: ReadPolicy) -> Self {
        Overlay {
            open: self.open,
            disk: DiskLoader::new(policy),
        }
    }
}

impl<F> FileLoader for Overlay<F>
where
    F: Fn(&Path) -> Option<String>,
{
    fn load(&self, path: &Path) -> Result<String, Unreadable> {
        let path = normalize(path);
        self.disk.policy.check_confined(&path)?;
        match (self.open)(&path) {
            Some(text) => Ok(text),
            None => read_file(&path, &self.disk.policy),
        }
    }
}

/// The UTF-8 text of the file at `path`, by the default policy, or a short
/// reason why there is none followed by what to do, phrased to follow
/// "cannot read <path>: ".
pub fn read_text(path: &Path) -> Result<String, String> {
    read_file(path, &ReadPolicy::default()).map_err(|u| format!("{}; {}", u.reason, u.help))
}

/// The UTF-8 text of the regular file at `path`, no larger than the
/// policy's limit, or why it cannot be read and what to do.
pub fn read_file(path: &Path, policy: &ReadPolicy) -> Result<String, Unreadable> {
    // Checked before opening, so that a file far too large is not even opened.
    let meta = std::fs::metadata(path).map_err(|e| unreadable(&e))?;
    check_kind(&meta)?;
    check_size(meta.len(), policy)?;
    let (mut file, meta) = open_regular(path)?;
    check_size(meta.len(), policy)?;
    let mut bytes = Vec::with_capacity(usize::try_from(meta.len()).unwrap_or(0));
    // One byte past the limit tells a file that grew while being read.
    (&mut file)
        .take(policy.max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| unreadable(&e))?;
    check_size(bytes.len() as u64, policy)?;
    decode(bytes).map_err(|reason| {
        Unreadable::refused(
            reason,
            "grammar files are UTF-8 text; convert the file (for example with `iconv -t UTF-8`)",
        )
    })
}

/// Opens the regular file at `path` for reading, with its metadata, or says
/// why not: anything but a regular file is refused before it is opened
/// (opening a FIFO for reading would block), the file is opened without
/// blocking (so a FIFO swapped in between cannot block) and checked again
/// on the open handle (the path may name another file by then). For files
/// read as a stream, such as treebanks, which no size limit applies to.
pub fn open_regular(path: &Path) -> Result<(std::fs::File, std::fs::Metadata), Unreadable> {
    let meta = std::fs::metadata(path).map_err(|e| unreadable(&e))?;
    check_kind(&meta)?;
    let file = open_nonblocking(path).map_err(|e| unreadable(&e))?;
    let meta = file.metadata().map_err(|e| unreadable(&e))?;
    check_kind(&meta)?;
    Ok((file, meta))
}

#[cfg(unix)]
fn open_nonblocking(path: &Path) -> std::io::Result<std::fs::File> {
    use std::os::unix::fs::OpenOptionsExt;
    std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK)
        .open(path)
}

#[cfg(not(unix))]
fn open_nonblocking(path: &Path) -> std::io::Result<std::fs::File> {
    std::fs::File::open(path)
}

/// Refuses anything but a regular file, naming what it is.
fn check_kind(meta: &std::fs::Metadata) -> Result<(), Unreadable> {
    let kind = meta.file_type();
    if kind.is_file() {
        return Ok(());
    }
    if kind.is_dir() {
        return Err(Unreadable::refused(
            "it is a directory, not a file",
            "name a `.trellis` file inside the directory",
        ));
    }
    Err(Unreadable::refused(
        format!("it is {}, not a regular file", special_kind(&kind)),
        "only regular files are read, so that reading cannot block or run without end; \
         save the text to a file and name that file (where a command reads standard input, \
         `-` reads it)",
    ))
}

#[cfg(unix)]
fn special_kind(kind: &std::fs::FileType) -> &'static str {
    use std::os::unix::fs::FileTypeExt;
    if kind.is_fifo() {
        "a FIFO (named pipe)"
    } else if kind.is_char_device() {
        "a character device"
    } else if kind.is_block_device() {
        "a block device"
    } else if kind.is_socket() {
        "a socket"
    } else {
        "a special file"
    }
}

#[cfg(not(unix))]
fn special_kind(_: &std::fs::FileType) -> &'static str {
    "a special file"
}

fn check_size(len: u64, policy: &ReadPolicy) -> Result<(), Unreadable> {
    if len <= policy.max_bytes {
        return Ok(());
    }
    let (set_by, help) = match &policy.limit_set_by {
        Some(toml) => (
            format!("set by `[files] max-size-mib` in {}", toml.display()),
            format!(
                "raise `max-size-mib` in the `[files]` section of {} if the file is meant \
                 to be this large",
                toml.display()
            ),
        ),
        None => (
            "the default limit".to_string(),
            "if the file is meant to be this large, raise the limit with `max-size-mib` in a \
             `[files]` section of trellis.toml"
                .to_string(),
        ),
    };
    Err(Unreadable::refused(
        format!(
            "it is {}, over the {} limit ({set_by})",
            size_text(len),
            size_text(policy.max_bytes)
        ),
        help,
    ))
}

/// A size in MiB, or in bytes below one MiB.
fn size_text(bytes: u64) -> String {
    const MIB: u64 = 1 << 20;
    if bytes < MIB {
        format!("{bytes} bytes")
    } else if bytes & (MIB - 1) == 0 {
        format!("{} MiB", bytes / MIB)
    } else {
        format!("{:.1} MiB", bytes as f64 / MIB as f64)
    }
}

/// One failure of the operating system as a reason and what to do, each
/// kind in its own words.
pub fn unreadable(e: &std::io::Error) -> Unreadable {
    #[cfg(unix)]
    if e.raw_os_error() == Some(libc::ELOOP) {
        return Unreadable::refused(
            "the path runs into a loop of symbolic links",
            "one of the symbolic links on the path points back at itself, directly or through \
             others; make it point at the file (`ls -l` shows where each link points)",
        );
    }
    match e.kind() {
        ErrorKind::NotFound => Unreadable::missing("no such file or directory"),
        ErrorKind::PermissionDenied => Unreadable::refused(
            "permission denied",
            "the file exists but your user may not read it (or may not enter a directory on the \
             path); ask its owner, or change its permissions, e.g. `chmod a+r`",
        ),
        ErrorKind::IsADirectory => Unreadable::refused(
            "it is a directory, not a file",
            "name a `.trellis` file inside the directory",
        ),
        ErrorKind::NotADirectory => Unreadable::refused(
            "a part of the path that should be a directory is a file",
            "fix the path: every name before the last one must be a directory",
        ),
        ErrorKind::InvalidFilename => {
            Unreadable::refused("the file name is too long or not valid", "fix the path")
        }
        _ => Unreadable::refused(
            format!("the system refused: {e}"),
            "check the file and the disk it is on, then try again",
        ),
    }
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
///
/// A symbolic link is followed: the file it points to is replaced and the
/// link stays. A path that is not a regular file (`/dev/null`,
/// `/dev/stdout`, a named pipe) is written into as it is, never renamed
/// over: replacing a device node with a regular file would break the
/// machine for every other program.
pub fn write_atomic(path: &Path, text: &str) -> Result<(), String> {
    use std::io::Write;
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let resolved;
    let path = match std::fs::symlink_metadata(path) {
        Ok(m) if m.file_type().is_symlink() => {
            // A dangling link names the file to create.
            resolved = match std::fs::canonicalize(path) {
                Ok(target) => target,
                Err(_) => {
                    let target = std::fs::read_link(path).map_err(|e| io_reason(&e))?;
                    match path.parent() {
                        Some(dir) if target.is_relative() => dir.join(target),
                        _ => target,
                    }
                }
            };
            resolved.as_path()
        }
        _ => path,
    };
    if let Ok(m) = std::fs::metadata(path) {
        if !m.is_file() {
            if m.is_dir() {
                return Err("it is a directory; name a file".into());
            }
            return std::fs::OpenOptions::new()
                .write(true)
                .truncate(true)
                .open(path)
                .and_then(|mut f| f.write_all(text.as_bytes()))
                .map_err(|e| io_reason(&e));
        }
    }
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

/// A short, stable description of an I/O failure (writing, listing a
/// directory).
pub fn io_reason(e: &std::io::Error) -> String {
    unreadable(e).reason
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

    #[cfg(unix)]
    #[test]
    fn an_atomic_write_through_a_symbolic_link_replaces_the_target_and_keeps_the_link() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("real.trellis");
        let link = dir.path().join("link.trellis");
        std::fs::write(&target, "old\n").unwrap();
        std::os::unix::fs::symlink("real.trellis", &link).unwrap();
        write_atomic(&link, "new\n").unwrap();
        assert!(std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new\n");
        // A dangling link names the file to create.
        std::fs::remove_file(&target).unwrap();
        write_atomic(&link, "again\n").unwrap();
        assert!(std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "again\n");
    }

    /// `-o /dev/null` once replaced the device node with a regular file; a
    /// named pipe stands in for it here (the same kind of path, safe to
    /// break).
    #[cfg(unix)]
    #[test]
    fn an_atomic_write_into_a_named_pipe_writes_into_it_and_keeps_the_pipe() {
        use std::os::unix::fs::FileTypeExt;
        let dir = tempfile::tempdir().unwrap();
        let pipe = dir.path().join("out.pipe");
        let made = std::process::Command::new("mkfifo").arg(&pipe).status();
        assert!(
            made.is_ok_and(|s| s.success()),
            "mkfifo (coreutils) is needed"
        );
        let reader = {
            let pipe = pipe.clone();
            std::thread::spawn(move || std::fs::read_to_string(pipe).unwrap())
        };
        write_atomic(&pipe, "through the pipe\n").unwrap();
        assert_eq!(reader.join().unwrap(), "through the pipe\n");
        assert!(std::fs::symlink_metadata(&pipe)
            .unwrap()
            .file_type()
            .is_fifo());
    }

    #[test]
    fn an_atomic_write_onto_a_directory_says_so() {
        let dir = tempfile::tempdir().unwrap();
        let err = write_atomic(dir.path(), "x").unwrap_err();
        assert!(err.contains("directory"), "{err}");
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
        let err = DiskLoader::default()
            .load(&dir.path().join("absent.trellis"))
            .unwrap_err();
        assert_eq!(err.reason, "no such file or directory");
        assert!(err.missing);
    }

    #[test]
    fn a_directory_is_not_a_grammar_file() {
        let dir = tempfile::tempdir().unwrap();
        let err = read_text(dir.path()).unwrap_err();
        assert!(err.starts_with("it is a directory, not a file; "), "{err}");
    }

    #[test]
    fn an_open_buffer_wins_over_the_disk_and_the_disk_answers_the_rest() {
        let dir = tempfile::tempdir().unwrap();
        let on_disk = dir.path().join("words.trellis");
        std::fs::write(&on_disk, "W { \"disk\" }\n").unwrap();
        let open = dir.path().join("kiosk.trellis");
        let overlay =
            Overlay::new(|p: &Path| (p == open).then(|| "K { \"buffer\" }\n".to_string()));
        assert_eq!(overlay.load(&open).unwrap(), "K { \"buffer\" }\n");
        assert_eq!(overlay.load(&on_disk).unwrap(), "W { \"disk\" }\n");
        // The same message as the disk loader's, whichever loader reads.
        let missing = dir.path().join("absent.trellis");
        assert_eq!(overlay.load(&missing), DiskLoader::default().load(&missing));
    }

    fn small(max_bytes: u64) -> ReadPolicy {
        ReadPolicy {
            max_bytes,
            ..ReadPolicy::default()
        }
    }

    #[test]
    fn a_file_over_the_limit_is_refused_with_its_size_and_the_limit() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("big.trellis");
        std::fs::write(&path, "W { \"x\" }\n".repeat(100)).unwrap();
        let err = read_file(&path, &small(10)).unwrap_err();
        assert_eq!(
            err.reason,
            "it is 1000 bytes, over the 10 bytes limit (the default limit)"
        );
        assert!(err.help.contains("max-size-mib"), "{}", err.help);
        assert!(read_file(&path, &small(1000)).is_ok());
    }

    #[test]
    fn sizes_are_shown_in_mib_from_one_mib() {
        assert_eq!(size_text(80 << 20), "80 MiB");
        assert_eq!(size_text(3 << 19), "1.5 MiB");
        assert_eq!(size_text(1023), "1023 bytes");
    }

    #[cfg(unix)]
    #[test]
    fn a_character_device_is_refused_before_it_is_read() {
        // /dev/zero never ends: reading it would fill the memory.
        let err = read_file(Path::new("/dev/zero"), &ReadPolicy::default()).unwrap_err();
        assert_eq!(err.reason, "it is a character device, not a regular file");
    }

    #[cfg(unix)]
    #[test]
    fn a_symlink_loop_has_its_own_words() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("a.trellis");
        let b = dir.path().join("b.trellis");
        std::os::unix::fs::symlink(&b, &a).unwrap();
        std::os::unix::fs::symlink(&a, &b).unwrap();
        let err = read_file(&a, &ReadPolicy::default()).unwrap_err();
        assert_eq!(err.reason, "the path runs into a loop of symbolic links");
        assert!(!err.missing);
    }

    #[test]
    fn confinement_refuses_a_path_outside_the_root_and_allows_one_inside() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("project");
        std::fs::create_dir(&root).unwrap();
        std::fs::write(root.join("words.trellis"), "W { \"x\" }\n").unwrap();
        std::fs::write(dir.path().join("outside.trellis"), "O { \"x\" }\n").unwrap();
        let policy = ReadPolicy {
            confine: Some(Confinement {
                root: root.clone(),
                set_by: root.join("trellis.toml"),
            }),
            ..ReadPolicy::default()
        };
        let loader = DiskLoader::new(policy);
        assert!(loader.load(&root.join("words.trellis")).is_ok());
        let err = loader
            .load(&normalize(&root.join("../outside.trellis")))
            .unwrap_err();
        assert!(
            err.reason.contains("outside the project root"),
            "{}",
            err.reason
        );
        assert!(err.help.contains("confine-use = true"), "{}", err.help);
        // A symbolic link inside the root does not lead outside it.
        #[cfg(unix)]
        {
            let link = root.join("link.trellis");
            std::os::unix::fs::symlink(dir.path().join("outside.trellis"), &link).unwrap();
            assert!(loader.load(&link).is_err());
        }
    }
}
