//! `trellis sample`: draw random sentences (or trees) from a grammar.

use super::{emit, Outcome, Stream};
use crate::shared::{load_runnable, start_symbol};
use serde::Serialize;
use std::io::Write;
use std::path::PathBuf;
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{SampleError, Sampler, DEFAULT_LIMIT};

pub const LONG_ABOUT: &str = "Draw random sentences from a grammar.\n\n\
    Each sentence is built top-down from the start symbol (or --from), choosing \
    every rule with its probability. The same --seed always gives the same \
    output, on every machine. A derivation that needs more than --max-rules \
    rule applications is abandoned and counted: that happens when the grammar \
    gives probability to derivations that never end (`trellis stats` says how \
    much).\n\n\
    Exit status: 0 when every draw produced a sentence; 1 when the grammar has \
    errors or some draws were abandoned; 2 when the file cannot be read, the \
    configuration is invalid or --from names no symbol.";

/// Output format of `trellis sample`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum SampleFormat {
    /// One sentence (or tree) per line.
    Text,
    /// One JSON object {"seed", "from", "samples": [{"sentence", "tree"?}], "abandoned"}.
    Json,
}

/// Arguments of `trellis sample`.
#[derive(clap::Args, Debug, Clone)]
pub struct SampleArgs {
    /// The grammar file (its `use`d files are read too)
    #[arg(value_name = "GRAMMAR")]
    pub grammar: PathBuf,

    /// How many sentences to draw
    #[arg(short = 'n', long = "count", value_name = "N", default_value_t = 10)]
    pub count: usize,

    /// Seed of the random generator [default: taken from the clock]
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

    #[arg(long, value_enum, default_value_t = SampleFormat::Text)]
    pub format: SampleFormat,
}

#[derive(Serialize)]
struct JsonSample {
    sentence: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    tree: Option<String>,
}

#[derive(Serialize)]
struct JsonOutput<'a> {
    seed: u64,
    from: &'a str,
    samples: Vec<JsonSample>,
    abandoned: usize,
}

fn clock_seed() -> u64 {
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_nanos() as u64)
}

/// Runs `trellis sample`.
pub fn run(args: &SampleArgs) -> Outcome {
    let analysis = match load_runnable(&args.grammar, "sample") {
        Ok(l) => l,
        Err(outcome) => return outcome,
    };
    let g = &analysis.grammar;
    let from = match start_symbol(&analysis, args.from.as_deref()) {
        Ok(a) => a,
        Err(outcome) => return outcome,
    };
    let sampler = match Sampler::new(g).and_then(|s| s.check(from).map(|()| s)) {
        Ok(s) => s,
        Err(e) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            return Outcome::Findings;
        }
    };
    let seed = args.seed.unwrap_or_else(clock_seed);
    let mut rng = Xoshiro256StarStar::seed_from_u64(seed);
    // Text is written as it is drawn (a corpus of millions of sentences
    // needs no memory), JSON is collected into one document.
    let mut samples = Vec::new();
    let mut text = Vec::with_capacity(1 << 16);
    let mut stdout = std::io::stdout().lock();
    let mut abandoned = 0usize;
    let mut last_error = None;
    for _ in 0..args.count {
        let drawn = if args.trees {
            sampler
                .tree(&mut rng, from, args.max_rules)
                .map(|t| JsonSample {
                    sentence: t.words().join(" "),
                    tree: Some(t.to_brackets()),
                })
        } else {
            sampler
                .sentence(&mut rng, from, args.max_rules)
                .map(|s| JsonSample {
                    sentence: sampler.text(&s),
                    tree: None,
                })
        };
        match drawn {
            Ok(sample) if args.format == SampleFormat::Text => {
                text.extend_from_slice(
                    sample
                        .tree
                        .as_deref()
                        .unwrap_or(&sample.sentence)
                        .as_bytes(),
                );
                text.push(b'\n');
                if text.len() >= 1 << 16 {
                    if stdout.write_all(&text).is_err() {
                        // The reader went away (`trellis sample … | head`).
                        return Outcome::Clean;
                    }
                    text.clear();
                }
            }
            Ok(sample) => samples.push(sample),
            Err(e @ (SampleError::LimitExceeded { .. } | SampleError::TreeTooDeep { .. })) => {
                abandoned += 1;
                last_error = Some(e);
            }
            Err(e) => {
                emit(Stream::Stderr, &format!("error: {e}\n"));
                return Outcome::Findings;
            }
        }
    }
    match args.format {
        SampleFormat::Text => {
            let _ = stdout.write_all(&text).and_then(|()| stdout.flush());
        }
        SampleFormat::Json => {
            let doc = JsonOutput {
                seed,
                from: g.nt_name(from),
                samples,
                abandoned,
            };
            let mut out =
                serde_json::to_string(&doc).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}"));
            out.push('\n');
            let _ = stdout
                .write_all(out.as_bytes())
                .and_then(|()| stdout.flush());
        }
    }
    drop(stdout);
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
        return Outcome::Findings;
    }
    Outcome::Clean
}
