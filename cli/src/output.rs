//! Where output goes and how it looks: the output formats every command
//! shares, the streams, and the one decision about colour.

use std::ffi::OsStr;
use std::io::IsTerminal;

/// The output formats of `check`, `test`, `sample` and `stats`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    /// For people: source snippets, reports and tables.
    // `text` was the name of this format for `parse` and `sample`.
    #[value(alias = "text")]
    Human,
    /// One JSON document, for editors and scripts (README.md, "JSON
    /// output", lists its fields).
    Json,
}

/// The output formats of `check`: the shared ones and the two that code
/// hosts and CI systems read.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum CheckFormat {
    /// Source snippets with every finding.
    #[value(alias = "text")]
    Human,
    /// One JSON object {"diagnostics": [...]}.
    Json,
    /// A SARIF 2.1.0 log: one run, a rule per check, a result per finding.
    Sarif,
    /// GitHub Actions workflow commands (`::error file=…::…`), one line per
    /// finding, shown on the pull request's diff.
    Github,
}

impl From<Format> for CheckFormat {
    fn from(format: Format) -> Self {
        match format {
            Format::Human => CheckFormat::Human,
            Format::Json => CheckFormat::Json,
        }
    }
}

/// The output formats of `test`: the shared ones and JUnit XML.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum TestFormat {
    /// A report per grammar with the failing cases and why.
    #[value(alias = "text")]
    Human,
    /// One JSON object with every grammar, test and case.
    Json,
    /// JUnit XML: a test suite per test block, a test case per
    /// `accept`/`reject` case, for CI systems.
    Junit,
}

impl From<TestFormat> for CheckFormat {
    /// How findings that stop a test run (an invalid trellis.toml) are
    /// shown: JUnit has no place for them, so they are shown for people
    /// on standard error.
    fn from(format: TestFormat) -> Self {
        match format {
            TestFormat::Human | TestFormat::Junit => CheckFormat::Human,
            TestFormat::Json => CheckFormat::Json,
        }
    }
}

/// The output formats of `parse`: the shared ones and `brackets`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum ParseFormat {
    /// A readable report per sentence.
    #[value(alias = "text")]
    Human,
    /// One JSON object per sentence, one per line.
    Json,
    /// Labelled brackets with bare words, one tree per line (an empty line
    /// for a sentence without parse; with --kbest, a blank line between sentences).
    Brackets,
}

/// When to colour output (`--color`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum ColorChoice {
    /// Colour a terminal, unless `NO_COLOR` is set to a non-empty value.
    #[default]
    Auto,
    /// Always colour, even into a pipe or a file.
    Always,
    /// Never colour.
    Never,
}

/// Where output goes, which decides whether it may be coloured.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Stream {
    Stdout,
    Stderr,
}

/// What every command is told about the terminal: the `--color` choice.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Term {
    pub color: ColorChoice,
}

impl Term {
    /// Whether to colour output written to `stream`. The only place that
    /// decides it.
    pub fn color(self, stream: Stream) -> bool {
        let terminal = match stream {
            Stream::Stdout => std::io::stdout().is_terminal(),
            Stream::Stderr => std::io::stderr().is_terminal(),
        };
        color_allowed(
            self.color,
            terminal,
            std::env::var_os("NO_COLOR").as_deref(),
        )
    }
}

/// `always` and `never` are obeyed; `auto` colours a terminal unless
/// `NO_COLOR` is set to a non-empty value (https://no-color.org: "when
/// present and not an empty string"; a command-line flag overrides it).
fn color_allowed(choice: ColorChoice, terminal: bool, no_color: Option<&OsStr>) -> bool {
    match choice {
        ColorChoice::Always => true,
        ColorChoice::Never => false,
        ColorChoice::Auto => terminal && no_color.is_none_or(|v| v.is_empty()),
    }
}

/// Writes `text` to `stream`. A closed pipe (`trellis check | head`) is not
/// an error worth reporting, so write failures are ignored.
pub fn emit(stream: Stream, text: &str) {
    use std::io::Write;
    let _ = match stream {
        Stream::Stdout => {
            let mut out = std::io::stdout().lock();
            out.write_all(text.as_bytes()).and_then(|()| out.flush())
        }
        Stream::Stderr => {
            let mut err = std::io::stderr().lock();
            err.write_all(text.as_bytes()).and_then(|()| err.flush())
        }
    };
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn auto_colours_a_terminal_without_a_non_empty_no_color() {
        let auto = ColorChoice::Auto;
        assert!(color_allowed(auto, true, None));
        assert!(color_allowed(auto, true, Some(OsStr::new(""))));
        assert!(!color_allowed(auto, true, Some(OsStr::new("1"))));
        assert!(!color_allowed(auto, false, None));
    }

    #[test]
    fn always_and_never_are_obeyed_whatever_the_stream_and_no_color() {
        for terminal in [true, false] {
            for no_color in [None, Some(OsStr::new("1"))] {
                assert!(color_allowed(ColorChoice::Always, terminal, no_color));
                assert!(!color_allowed(ColorChoice::Never, terminal, no_color));
            }
        }
    }
}
