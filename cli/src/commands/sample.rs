//! `trellis sample`: draw random sentences (or trees) from a grammar.

use super::{Outcome, Ran};
use crate::output::{emit, Format, Stream, Term};
use crate::render::json;
use crate::shared::{fail, load, note_run, prepare};
use std::io::Write;
use std::path::PathBuf;
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{SampleError, Sampler, DEFAULT_LIMIT};

pub const LONG_ABOUT: &str = "Draw random sentences from a grammar.\n\n\
    Each sentence is built top-down from the start symbol (or --from), choosing \
    every rule with its probability. The same --seed always gives the same \
    output, on every machine; without --seed the seed used is printed on \
    standard error (in JSON it is the document's `seed`). A derivation that \
    needs more than --max-rules rule applications is abandoned and counted: \
    that happens when the grammar gives probability to derivations that never \
    end (`trellis stats` says how much).\n\n\
    Blocks whose weights may sum to something other than 1 (trellis.toml sets \
    `sum-not-one` below error) are drawn from with their weights divided by \
    their sum, as `parse`, `stats` and `test` use them. Errors in blocks the \
    symbol cannot reach do not stop the run.\n\n\
    Exit status: 0 when every draw produced a sentence; 1 when the grammar has \
    errors in what the run uses or some draws were abandoned; 2 when the file cannot be read, the \
    configuration is invalid or --from names no symbol.";

/// Arguments of `trellis sample`.
#[derive(clap::Args, Debug, Clone)]
pub struct SampleArgs {
    /// The grammar file (its `use`d files are read too)
    #[arg(value_name = "GRAMMAR")]
    pub grammar: PathBuf,

    /// How many sentences to draw
    #[arg(short = 'n', long = "count", value_name = "N", default_value_t = 10)]
    pub count: usize,

    /// Seed of the random generator [default: taken from the clock and
    /// printed on standard error, or given as `seed` in JSON]
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,

    /// Start from this non-terminal instead of the grammar's `start`
    #[arg(long, value_name = "SYMBOL")]
    pub from: Option<String>,

    /// Print labelled-bracket trees instead of sentences
    #[arg(long)]
    pub trees: bool,

    /// Abandon a derivation after this many rule applications
    #[arg(long, value_name = "N", default_value_t = DEFAULT_LIMIT)]
    pub max_rules: usize,

    /// `human` prints one sentence (or tree) per line, `json` one object
    /// with every draw
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,
}

/// One draw: the sentence, and its tree when trees were asked for.
pub struct Drawn {
    pub sentence: String,
    pub tree: Option<String>,
}

fn clock_seed() -> u64 {
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_nanos() as u64)
}

/// Runs `trellis sample`.
pub fn run(args: &SampleArgs, term: Term) -> Ran {
    let analysis = load(&args.grammar)?;
    let run = prepare(
        &analysis,
        args.from.as_deref(),
        true,
        &args.grammar,
        "sample",
        term,
    )?;
    let g = run.grammar();
    let from = run.start();
    let sampler = Sampler::new(g)
        .and_then(|s| s.check(from).map(|()| s))
        .map_err(|e| fail(e, Outcome::Findings))?;
    let seed = args.seed.unwrap_or_else(clock_seed);
    if args.format == Format::Human {
        note_run(&analysis, &run);
    }
    if args.seed.is_none() && args.format == Format::Human {
        // Printed before the first draw, so even an interrupted run can be
        // drawn again; JSON carries the seed in its document instead.
        emit(
            Stream::Stderr,
            &format!("seed: {seed} (draw this sample again with --seed {seed})\n"),
        );
    }
    let mut rng = Xoshiro256StarStar::seed_from_u64(seed);
    // Human output is written as it is drawn (a corpus of millions of
    // sentences needs no memory), JSON is collected into one document.
    let mut samples = Vec::new();
    let mut lines = Lines::new();
    let mut abandoned = 0usize;
    let mut last_error = None;
    for _ in 0..args.count {
        let drawn = if args.trees {
            sampler.tree(&mut rng, from, args.max_rules).map(|t| Drawn {
                sentence: t.words().join(" "),
                tree: Some(t.to_brackets()),
            })
        } else {
            sampler
                .sentence(&mut rng, from, args.max_rules)
                .map(|s| Drawn {
                    sentence: sampler.text(&s),
                    tree: None,
                })
        };
        match drawn {
            Ok(sample) if args.format == Format::Human => {
                if lines.push(sample.tree.as_deref().unwrap_or(&sample.sentence)) {
                    // The reader went away (`trellis sample … | head`).
                    return Ok(Outcome::Clean);
                }
            }
            Ok(sample) => samples.push(sample),
            Err(e @ (SampleError::LimitExceeded { .. } | SampleError::TreeTooDeep { .. })) => {
                abandoned += 1;
                last_error = Some(e);
            }
            Err(e) => return Err(fail(e, Outcome::Findings)),
        }
    }
    match args.format {
        Format::Human => lines.finish(),
        Format::Json => json::write(&json::sample_document(
            seed,
            g.nt_name(from),
            &samples,
            abandoned,
            &json::Ran::of(&analysis, &run),
        )),
    }
    if let Some(e) = last_error {
        emit(
            Stream::Stderr,
            &format!(
                "warning: {abandoned} of {} draws abandoned: {e}; `trellis stats {}` \
                 shows how much probability is lost\n",
                args.count,
                args.grammar.display()
            ),
        );
        return Ok(Outcome::Findings);
    }
    Ok(Outcome::Clean)
}

/// Lines written to stdout in blocks of 64 KiB as they come.
struct Lines {
    buffer: Vec<u8>,
}

impl Lines {
    const BLOCK: usize = 1 << 16;

    fn new() -> Self {
        Lines {
            buffer: Vec::with_capacity(Self::BLOCK),
        }
    }

    /// Adds one line; true when stdout can no longer be written to.
    fn push(&mut self, line: &str) -> bool {
        self.buffer.extend_from_slice(line.as_bytes());
        self.buffer.push(b'\n');
        if self.buffer.len() < Self::BLOCK {
            return false;
        }
        let closed = std::io::stdout().lock().write_all(&self.buffer).is_err();
        self.buffer.clear();
        closed
    }

    /// Writes what is left.
    fn finish(self) {
        let mut stdout = std::io::stdout().lock();
        let _ = stdout.write_all(&self.buffer).and_then(|()| stdout.flush());
    }
}
