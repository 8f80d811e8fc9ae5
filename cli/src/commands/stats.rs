//! `trellis stats`: does the grammar's probability end on finite sentences,
//! and what do its sentences look like on average?

use super::{emit, use_color, Outcome, Stream};
use crate::render::{self, HumanRenderer};
use crate::shared::{load_runnable, start_symbol};
use serde::Serialize;
use std::path::PathBuf;
use trellis_engine::consistency::{self, ConsistencyReport};

pub const LONG_ABOUT: &str = "Show the probabilistic properties of a grammar.\n\n\
    For the start symbol (or --from): whether derivations end with probability 1 \
    (\"tight\") and how much probability leaks to derivations that never end; the \
    spectral radius of the expected-count matrix (below 1: finite expected size; \
    1: critical; above 1: the grammar may leak); the expected sentence length and \
    number of rule applications; and for every non-terminal the probability that \
    its derivations end and how often a sentence uses it on average.\n\n\
    Exit status: 0 for a tight grammar; 1 when the grammar has errors or leaks \
    probability; 2 when the file cannot be read, the configuration is invalid or \
    --from names no symbol.";

/// Output format of `trellis stats`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum StatsFormat {
    /// A table for people.
    Human,
    /// One JSON object {"tight", "spectral_radius", "leak", "expected_length", "symbols": [...], ...}.
    Json,
}

/// Arguments of `trellis stats`.
#[derive(clap::Args, Debug, Clone)]
pub struct StatsArgs {
    /// The grammar file (its `use`d files are read too)
    #[arg(value_name = "GRAMMAR")]
    pub grammar: PathBuf,

    /// Analyse derivations from this non-terminal instead of `start`
    #[arg(long, value_name = "SYMBOL")]
    pub from: Option<String>,

    #[arg(long, value_enum, default_value_t = StatsFormat::Human)]
    pub format: StatsFormat,
}

#[derive(Serialize)]
struct JsonSymbol<'a> {
    name: &'a str,
    reachable: bool,
    termination_probability: f64,
    /// `null` when infinite.
    expected_uses: Option<f64>,
}

#[derive(Serialize)]
struct JsonStats<'a> {
    from: &'a str,
    tight: bool,
    spectral_radius: f64,
    regime: &'static str,
    leak: f64,
    expected_length: Option<f64>,
    expected_derivation_size: Option<f64>,
    symbols: Vec<JsonSymbol<'a>>,
    diagnostics: Vec<render::JsonDiagnostic>,
}

/// Runs `trellis stats`.
pub fn run(args: &StatsArgs) -> Outcome {
    let analysis = match load_runnable(&args.grammar, "stats") {
        Ok(analysis) => analysis,
        Err(outcome) => return outcome,
    };
    let analysis = &analysis;
    let g = &analysis.grammar;
    let from = match start_symbol(analysis, args.from.as_deref()) {
        Ok(a) => a,
        Err(outcome) => return outcome,
    };
    let report = match consistency::analyze_from(g, from) {
        Ok(r) => r,
        Err(e) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            return Outcome::Failure;
        }
    };
    // At the level trellis.toml sets, as `check` reports it.
    let leaky = analysis.leak_finding(&report);
    match args.format {
        StatsFormat::Json => {
            let doc = JsonStats {
                from: g.nt_name(from),
                tight: report.tight,
                spectral_radius: report.spectral_radius,
                regime: report.regime.as_str(),
                leak: report.leak,
                expected_length: report.expected_length,
                expected_derivation_size: report.expected_derivation_size,
                symbols: report
                    .symbols
                    .iter()
                    .map(|s| JsonSymbol {
                        name: &s.name,
                        reachable: s.reachable,
                        termination_probability: s.termination_probability,
                        expected_uses: s.expected_uses,
                    })
                    .collect(),
                diagnostics: leaky
                    .iter()
                    .map(|d| render::json_diagnostic(d, &analysis.sources))
                    .collect(),
            };
            let mut out =
                serde_json::to_string(&doc).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}"));
            out.push('\n');
            emit(Stream::Stdout, &out);
        }
        StatsFormat::Human => {
            let mut out = human(g, &report);
            if let Some(d) = &leaky {
                out.push('\n');
                out.push_str(
                    &HumanRenderer::new(&analysis.sources, use_color(Stream::Stdout)).render(d),
                );
            }
            emit(Stream::Stdout, &out);
        }
    }
    if report.tight {
        Outcome::Clean
    } else {
        Outcome::Findings
    }
}

/// A number for the table: up to 6 significant decimals, no trailing zeros.
fn num(x: f64) -> String {
    if x != 0.0 && x.abs() < 1e-4 {
        return format!("{x:.3e}");
    }
    let s = format!("{x:.6}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

fn human(g: &grammar_lang::Grammar, r: &ConsistencyReport) -> String {
    let mut out = String::new();
    let name = g.nt_name(r.root);
    let infinite = "infinite";
    out.push_str(&format!("derivations from {name}\n"));
    out.push_str(&format!(
        "  tight                     {}\n",
        if r.tight {
            "yes".to_string()
        } else {
            format!("no: {} of the probability is lost", num(r.leak))
        }
    ));
    out.push_str(&format!(
        "  spectral radius           {} ({})\n",
        num(r.spectral_radius),
        r.regime.as_str()
    ));
    out.push_str(&format!(
        "  expected length           {}\n",
        r.expected_length
            .map_or(infinite.to_string(), |v| format!("{} words", num(v)))
    ));
    out.push_str(&format!(
        "  expected derivation size  {}\n",
        r.expected_derivation_size
            .map_or(infinite.to_string(), |v| format!("{} rules", num(v)))
    ));
    let width = r
        .symbols
        .iter()
        .filter(|s| s.reachable)
        .map(|s| s.name.chars().count())
        .max()
        .unwrap_or(0)
        .max("symbol".len());
    out.push_str(&format!(
        "\n  {:width$}  {:>12}  {:>14}\n",
        "symbol", "P(ends)", "uses/sentence"
    ));
    for s in r.symbols.iter().filter(|s| s.reachable) {
        out.push_str(&format!(
            "  {:width$}  {:>12}  {:>14}\n",
            s.name,
            num(s.termination_probability),
            s.expected_uses.map_or(infinite.to_string(), num)
        ));
    }
    let unreachable = r.symbols.iter().filter(|s| !s.reachable).count();
    if unreachable > 0 {
        out.push_str(&format!(
            "  ({unreachable} symbol{} not reachable from {name} left out)\n",
            if unreachable == 1 { "" } else { "s" }
        ));
    }
    out
}
