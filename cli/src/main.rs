//! `trellis`: the command line for writing and checking weighted grammars.
//!
//! This file only parses arguments, dispatches and turns how the command
//! ended into the exit status (the only place that does). Each subcommand
//! lives in its own module under [`commands`]; adding one means a new file
//! there, one variant in [`Command`] and one arm in [`main`]. Steps several
//! commands take are in [`shared`], output formats in [`render`] (one
//! module per format), streams and colour in [`output`].

mod commands;
mod output;
mod render;
mod shared;

use clap::{CommandFactory, Parser, Subcommand};
use output::{ColorChoice, Term};

/// The front end allocates many small objects (names, rules, syntax
/// nodes); mimalloc does that about a quarter faster than the system
/// allocator on the 50,000-rule benchmark (`grammar-lang/benches/check.rs`,
/// which uses it too, so it measures what this binary does).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use std::process::ExitCode;

/// Tools for hand-written weighted context-free grammars (`.trellis` files).
#[derive(Parser, Debug)]
#[command(
    name = "trellis",
    version,
    about = "Tools for hand-written weighted context-free grammars (.trellis files)",
    long_about = "Tools for hand-written weighted context-free grammars (.trellis files).\n\n\
        Exit status: 0 when nothing is wrong, 1 when a grammar has errors \
        (or warnings under --deny-warnings), 2 when trellis could not do what \
        was asked (bad arguments, unreadable files, an invalid trellis.toml).",
    propagate_version = true
)]
struct Cli {
    #[command(subcommand)]
    command: Command,

    /// When to colour output: `auto` colours a terminal unless the
    /// NO_COLOR environment variable is set (and not empty)
    #[arg(long, value_enum, global = true, value_name = "WHEN", default_value_t = ColorChoice::Auto)]
    color: ColorChoice,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Find mistakes in grammars without running them: weights that do not
    /// add up, undefined or unreachable symbols, syntax errors and more.
    #[command(long_about = commands::check::LONG_ABOUT)]
    Check(commands::check::CheckArgs),
    /// Draw random sentences or trees from a grammar, reproducibly with --seed.
    #[command(long_about = commands::sample::LONG_ABOUT)]
    Sample(commands::sample::SampleArgs),
    /// Whether the grammar's probability ends on finite sentences, expected
    /// sentence length and how often each symbol is used.
    #[command(long_about = commands::stats::LONG_ABOUT)]
    Stats(commands::stats::StatsArgs),
    /// Run the `test` blocks written in grammars: sentences to accept or
    /// reject, and expected most probable trees.
    #[command(long_about = commands::test::LONG_ABOUT)]
    Test(commands::test::TestArgs),
    /// Lay grammar files out in the canonical layout (or, with --check or
    /// --diff, say what would change).
    #[command(long_about = commands::fmt::LONG_ABOUT)]
    Fmt(commands::fmt::FmtArgs),
    /// Run the language server (LSP over standard input and output) for
    /// editors.
    #[command(long_about = commands::lsp::LONG_ABOUT)]
    Lsp(commands::lsp::LspArgs),
    /// Parse sentences: the most probable trees, their probabilities, and
    /// why a sentence does not parse.
    #[command(long_about = commands::parse::LONG_ABOUT)]
    Parse(commands::parse::ParseArgs),
    /// Learn a grammar's weights from annotated trees (a treebank in
    /// labelled brackets).
    #[command(long_about = commands::learn::LONG_ABOUT)]
    Learn(commands::learn::LearnArgs),
    /// Re-estimate the weights of a grammar from trees written in its own
    /// symbols; only the weights change.
    #[command(long_about = commands::fit::LONG_ABOUT)]
    Fit(commands::fit::FitArgs),
    /// Score predicted trees against gold trees (PARSEVAL labelled
    /// brackets: precision, recall, F1, exact match, crossing brackets).
    #[command(long_about = commands::eval::LONG_ABOUT)]
    Eval(commands::eval::EvalArgs),
    /// Write a starter project: a small grammar with tests, the lexicon it
    /// uses and a commented trellis.toml.
    #[command(long_about = commands::init::LONG_ABOUT)]
    Init(commands::init::InitArgs),
    /// Print the completion script for a shell (bash, zsh, fish, elvish or
    /// powershell).
    #[command(long_about = commands::completions::LONG_ABOUT)]
    Completions(commands::completions::CompletionsArgs),
    /// Print the manual page (roff), or write one page per command with
    /// --dir.
    #[command(long_about = commands::man::LONG_ABOUT)]
    Man(commands::man::ManArgs),
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            // Usage errors (status 2), and --help and --version (status 0).
            let _ = e.print();
            return ExitCode::from(u8::try_from(e.exit_code()).unwrap_or(2));
        }
    };
    let term = Term { color: cli.color };
    let ran = match cli.command {
        Command::Check(args) => commands::check::run(&args, term),
        Command::Sample(args) => commands::sample::run(&args, term),
        Command::Stats(args) => commands::stats::run(&args, term),
        Command::Test(args) => commands::test::run(&args, term),
        Command::Fmt(args) => commands::fmt::run(&args, term),
        Command::Lsp(args) => commands::lsp::run(&args),
        Command::Parse(args) => commands::parse::run(&args, term),
        Command::Init(args) => commands::init::run(&args),
        Command::Learn(args) => commands::learn::run(&args),
        Command::Fit(args) => commands::fit::run(&args, term),
        Command::Eval(args) => commands::eval::run(&args),
        Command::Completions(args) => commands::completions::run(&args, Cli::command()),
        Command::Man(args) => commands::man::run(&args, Cli::command()),
    };
    commands::ended(ran).into()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_argument_definitions_are_consistent() {
        // clap's own self-check: conflicting names, bad defaults, etc.
        Cli::command().debug_assert();
    }
}
