//! `trellis init`: write a starter project to begin from.

use super::{Outcome, Ran};
use crate::output::{emit, Stream};
use crate::shared::fail;
use std::path::{Path, PathBuf};

/// The full description shown by `trellis init --help`.
pub const LONG_ABOUT: &str = "Write a starter project to begin a grammar from.\n\n\
    Three files are written into DIR (created if missing; default: the \
    current directory): logbook.trellis, a small grammar of a lighthouse \
    keeper's logbook entries with `test` blocks; lexicon.trellis, the word \
    lists it `use`s; and trellis.toml, every setting commented out at its \
    default. The project checks clean, is in canonical layout and passes its \
    own tests, so `trellis check`, `trellis fmt --check` and `trellis test` \
    all succeed before the first edit.\n\n\
    Existing files are never overwritten: when one of the three is already \
    there, nothing is written.\n\n\
    Exit status: 0 when the files were written; 2 when one of them already \
    exists or a file or directory cannot be written.";

/// The starter files, by the name they are written under.
pub const FILES: [(&str, &str); 3] = [
    ("logbook.trellis", include_str!("../init/logbook.trellis")),
    ("lexicon.trellis", include_str!("../init/lexicon.trellis")),
    ("trellis.toml", include_str!("../init/trellis.toml")),
];

/// Arguments of `trellis init`.
#[derive(clap::Args, Debug, Clone)]
pub struct InitArgs {
    /// The directory to write the starter project into (created if
    /// missing)
    #[arg(value_name = "DIR", default_value = ".")]
    pub dir: PathBuf,
}

/// Runs `trellis init`.
pub fn run(args: &InitArgs) -> Ran {
    let dir = &args.dir;
    let existing: Vec<String> = FILES
        .iter()
        .map(|(name, _)| dir.join(name))
        .filter(|path| path.symlink_metadata().is_ok())
        .map(|path| path.display().to_string())
        .collect();
    if !existing.is_empty() {
        return Err(fail(
            format!(
                "{} already exist{}; nothing was written (move {} away, or choose another directory)",
                existing.join(", "),
                if existing.len() == 1 { "s" } else { "" },
                if existing.len() == 1 { "it" } else { "them" },
            ),
            Outcome::Failure,
        ));
    }
    if let Err(e) = std::fs::create_dir_all(dir) {
        return Err(fail(
            format!("cannot create {}: {e}", dir.display()),
            Outcome::Failure,
        ));
    }
    for (name, text) in FILES {
        write_new(&dir.join(name), text)?;
    }
    let shown = dir.display();
    let cd = if dir == Path::new(".") {
        String::new()
    } else {
        format!("  cd {shown}\n")
    };
    emit(
        Stream::Stdout,
        &format!(
            "wrote logbook.trellis, lexicon.trellis and trellis.toml in {shown}\n\n\
             next:\n{cd}  trellis check     find mistakes\n  trellis test      run the grammar's tests\n  \
             trellis sample    draw random entries\n"
        ),
    );
    Ok(Outcome::Clean)
}

/// Writes a file that must not exist yet (checked again at creation, so a
/// file made in between is not overwritten either).
fn write_new(path: &Path, text: &str) -> Result<(), super::Stop> {
    use std::io::Write;
    let written = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path)
        .and_then(|mut file| file.write_all(text.as_bytes()));
    written.map_err(|e| {
        fail(
            format!("cannot write {}: {e}", path.display()),
            Outcome::Failure,
        )
    })
}
