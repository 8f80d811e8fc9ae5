//! The protocol extensions: the `workspace/executeCommand` commands trellis
//! adds to LSP, as types (like rust-analyzer's `lsp_ext.rs`).
//!
//! Each command is an [`ExtCommand`]: its name, the one argument it takes
//! (`Params`) and what it answers (`Result`). The code lenses build their
//! arguments by serializing the same `Params` that `workspace/executeCommand`
//! parses, and the results are built as these structs and serialized, so
//! the wire format is written down once, here. Field names are camelCase,
//! as everywhere in LSP.
//!
//! * [`Parse`] (`trellis.parse`): parse sentences with the grammar of an
//!   open document; trees are labelled brackets. Exact unless `beam` or
//!   `beamSize` asks for pruning, and then each result says whether it is
//!   exact, which beam pruned it, or that the beam was given up.
//! * [`Sample`] (`trellis.sample`): sample sentences (and trees) from it.
//! * [`RunTest`] (`trellis.runTest`): run one test block of the document,
//!   or every test of the grammar; counts are of cases.
//!
//! Every command refuses a grammar with errors in what it uses (the message
//! names each with its place; errors in blocks the start symbol cannot
//! reach are ignored and listed in `ignoredErrors`), runs with the weights
//! a run uses (a block allowed to sum to something other than 1 divided by
//! its sum, listed in `rescaled`) and stops when the request is cancelled,
//! inside a sentence's parse too. Parses are bounded by the `[editor]`
//! settings of trellis.toml (`parse-seconds`, `parse-chart-mib`,
//! `parse-max-kbest`). With
//! `show: true` (what the code lenses send, since no one reads a lens
//! command's result) the server also shows the outcome to the user with
//! `window/showMessage`.

use serde::de::{DeserializeOwned, Error as _};
use serde::{Deserialize, Deserializer, Serialize};
use tower_lsp::lsp_types::{Command, Location, Url};

/// A command of `workspace/executeCommand` with its typed argument and
/// result.
pub trait ExtCommand {
    /// The command's name, as advertised in the capabilities.
    const COMMAND: &'static str;
    /// The command's one argument.
    type Params: Serialize + DeserializeOwned;
    /// What the command answers.
    type Result: Serialize + DeserializeOwned;

    /// An LSP command (for a code lens) that runs this command with
    /// `params`.
    fn command(title: String, params: &Self::Params) -> Command {
        let argument = serde_json::to_value(params).expect("command parameters serialize to JSON");
        Command::new(title, Self::COMMAND.to_string(), Some(vec![argument]))
    }
}

/// The commands advertised in the server's capabilities.
pub const COMMANDS: &[&str] = &[Parse::COMMAND, Sample::COMMAND, RunTest::COMMAND];

/// The hidden command that panics inside core work on purpose (to test
/// that the server survives it); accepted only with
/// `Options::debug_commands`.
pub const DEBUG_PANIC: &str = "trellis.debug.panic";

fn is_false(b: &bool) -> bool {
    !*b
}

/// `trellis.parse`.
#[derive(Debug)]
pub enum Parse {}

impl ExtCommand for Parse {
    const COMMAND: &'static str = "trellis.parse";
    type Params = ParseParams;
    type Result = ParseResult;
}

/// The argument of `trellis.parse`: the sentences to parse are `sentences`
/// and `sentence` together (at least one is needed).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct ParseParams {
    /// The open document whose grammar parses.
    pub uri: Url,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub sentences: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sentence: Option<String>,
    /// How many best trees to list per sentence (1 when absent).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub kbest: Option<usize>,
    /// Also show the outcome to the user.
    #[serde(default, skip_serializing_if = "is_false")]
    pub show: bool,
    /// Also draw each parsed sentence's trees as an SVG picture
    /// ([`SentenceParse::picture`]), the one `trellis parse --svg` draws.
    #[serde(default, skip_serializing_if = "is_false")]
    pub picture: bool,
    /// Prune each chart span to the symbols whose best log-probability is
    /// within this width (natural log, 0 or more) of the span's best, as
    /// `trellis parse --beam` does. Absent: no width limit (and with
    /// `beamSize` absent too, an exact parse).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "beam_width"
    )]
    pub beam: Option<f64>,
    /// Keep at most this many symbols in each chart span (1 or more), as
    /// `trellis parse --beam-size` does. Absent: no limit.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "beam_size"
    )]
    pub beam_size: Option<usize>,
}

/// `beam`: a natural-log width of 0 or more (a refusal names the field).
fn beam_width<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    let Some(value) = Option::<serde_json::Value>::deserialize(d)? else {
        return Ok(None);
    };
    match value.as_f64() {
        Some(width) if width >= 0.0 => Ok(Some(width)),
        _ => Err(D::Error::custom(format!(
            "`beam` must be a natural-log width of 0 or more, such as 8, not {value}; \
             leave it out to parse without a width limit"
        ))),
    }
}

/// `beamSize`: a whole number of 1 or more (a refusal names the field).
fn beam_size<'de, D: Deserializer<'de>>(d: D) -> Result<Option<usize>, D::Error> {
    let Some(value) = Option::<serde_json::Value>::deserialize(d)? else {
        return Ok(None);
    };
    match value.as_u64().and_then(|n| usize::try_from(n).ok()) {
        Some(n) if n >= 1 => Ok(Some(n)),
        _ => Err(D::Error::custom(format!(
            "`beamSize` must be a whole number of symbols per chart span, 1 or more, such \
             as 20, not {value}; leave it out for no limit"
        ))),
    }
}

/// What `trellis.parse` answers: one entry per sentence, in order.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct ParseResult {
    pub results: Vec<SentenceParse>,
    /// What the run did to the grammar.
    #[serde(flatten)]
    pub ran: Ran,
}

/// What a command's run did to the grammar (`trellis_ide::Run`): the
/// blocks whose weights were divided by their sum, and the errors outside
/// what the run uses, which did not stop it.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct Ran {
    #[serde(default)]
    pub rescaled: Vec<String>,
    #[serde(default)]
    pub ignored_errors: Vec<IgnoredError>,
}

/// An error a run ignored, where it is.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct IgnoredError {
    pub code: String,
    pub message: String,
    pub location: Option<Location>,
}

/// The parse of one sentence. When the sentence could not be parsed at all
/// (`error`), the other fields are empty.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct SentenceParse {
    pub sentence: String,
    /// Whether the sentence has a tree.
    pub parsed: bool,
    /// The best tree.
    pub tree: Option<String>,
    /// The best tree's probability.
    pub probability: Option<f64>,
    /// Natural log of `probability` (exact where `probability` underflows).
    pub log_probability: Option<f64>,
    /// The sum over every tree of the sentence.
    pub sentence_probability: Option<f64>,
    /// How many trees the sentence has, in decimal (it may exceed 2^64).
    pub parse_count: Option<String>,
    /// The best trees, best first.
    pub kbest: Vec<ScoredTree>,
    /// Why the sentence has no tree.
    pub explanation: Option<String>,
    /// Why the sentence could not be parsed at all.
    pub error: Option<String>,
    /// When asked for (`picture`) and the sentence parses: an SVG document
    /// drawing its best tree (its k best side by side), in the text colour
    /// of the page it is shown in.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub picture: Option<String>,
    /// Whether the results are exact: `false` when a beam pruned the chart
    /// (`beam` says which; probabilities are then lower bounds, the best
    /// tree may be missed and `parseCount` counts surviving trees only),
    /// `true` otherwise; `null` when the sentence was not analysed.
    #[serde(default)]
    pub exact: Option<bool>,
    /// The beam that pruned the chart (`null` when the results are exact).
    #[serde(default)]
    pub beam: Option<ParseBeam>,
    /// Whether the beam asked for dropped every tree of the sentence and
    /// was given up: the sentence was parsed again exactly (`exact` is
    /// `true`).
    #[serde(default)]
    pub beam_abandoned: bool,
}

/// A beam that pruned a parse: `logWidth` is `null` when only `maxSymbols`
/// limits it, and `maxSymbols` is `null` without a limit.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct ParseBeam {
    pub log_width: Option<f64>,
    pub max_symbols: Option<usize>,
}

/// A tree with its probability.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct ScoredTree {
    pub tree: String,
    pub probability: f64,
}

/// `trellis.sample`.
#[derive(Debug)]
pub enum Sample {}

impl ExtCommand for Sample {
    const COMMAND: &'static str = "trellis.sample";
    type Params = SampleParams;
    type Result = SampleResult;
}

/// The argument of `trellis.sample`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct SampleParams {
    /// The open document whose grammar is sampled.
    pub uri: Url,
    /// How many sentences (10 when absent; at most
    /// [`Sample::MAX_COUNT`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub count: Option<usize>,
    /// The seed of the random numbers (0 when absent).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub seed: Option<u64>,
    /// Also give each sample's tree.
    #[serde(default, skip_serializing_if = "is_false")]
    pub trees: bool,
    /// Also show the outcome to the user.
    #[serde(default, skip_serializing_if = "is_false")]
    pub show: bool,
}

impl Sample {
    /// The most sentences one `trellis.sample` call produces.
    pub const MAX_COUNT: usize = 10_000;
    /// How many sentences when `count` is absent.
    pub const DEFAULT_COUNT: usize = 10;
}

/// What `trellis.sample` answers.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct SampleResult {
    /// The seed used.
    pub seed: u64,
    pub samples: Vec<SampledSentence>,
    /// Draws abandoned because their derivation grew past the sampler's
    /// limit (the grammar gives probability to derivations that never end);
    /// `samples` holds the others.
    #[serde(default)]
    pub abandoned: usize,
    /// Why the last abandoned draw was abandoned.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub abandoned_reason: Option<String>,
    /// What the run did to the grammar.
    #[serde(flatten)]
    pub ran: Ran,
}

/// One sample.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct SampledSentence {
    pub sentence: String,
    /// Its tree, when `trees` was asked for.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tree: Option<String>,
}

/// `trellis.runTest`.
#[derive(Debug)]
pub enum RunTest {}

impl ExtCommand for RunTest {
    const COMMAND: &'static str = "trellis.runTest";
    type Params = RunTestParams;
    type Result = RunTestResult;
}

/// The argument of `trellis.runTest`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct RunTestParams {
    /// The open document.
    pub uri: Url,
    /// The test block of this name in that document; every test of the
    /// grammar when absent.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub test: Option<String>,
    /// Also show the outcome to the user.
    #[serde(default, skip_serializing_if = "is_false")]
    pub show: bool,
}

/// What `trellis.runTest` answers.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct RunTestResult {
    /// Cases that held.
    pub passed: usize,
    /// Cases that failed.
    pub failed: usize,
    /// Each test run, in order.
    pub tests: Vec<TestReport>,
    /// What the run did to the grammar.
    #[serde(flatten)]
    pub ran: Ran,
}

/// One test block and its cases.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct TestReport {
    pub name: String,
    pub location: Option<Location>,
    /// Whether every case held.
    pub passed: bool,
    pub cases: Vec<CaseReport>,
}

/// One case of a test block.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct CaseReport {
    /// `accept` or `reject`.
    pub expect: String,
    pub sentence: String,
    pub location: Option<Location>,
    pub passed: bool,
    /// Whether the best tree shares its probability with another.
    pub tied: bool,
    /// The best tree.
    pub tree: Option<String>,
    /// The best tree's probability.
    pub probability: Option<f64>,
    /// Why the case failed, as readable lines (empty when it held).
    pub failure: Vec<String>,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn uri() -> Url {
        Url::parse("file:///g.trellis").unwrap()
    }

    #[test]
    fn params_serialize_only_what_is_set_and_parse_back() {
        let params = RunTestParams {
            uri: uri(),
            test: None,
            show: true,
        };
        let command = RunTest::command("run".into(), &params);
        assert_eq!(command.command, "trellis.runTest");
        let argument = &command.arguments.unwrap()[0];
        assert_eq!(
            *argument,
            serde_json::json!({"uri": "file:///g.trellis", "show": true})
        );
        let back: RunTestParams = serde_json::from_value(argument.clone()).unwrap();
        assert_eq!(back, params);
    }

    #[test]
    fn a_beam_out_of_range_is_refused_naming_the_field() {
        let parse = |extra: serde_json::Value| {
            let mut value = serde_json::json!({"uri": "file:///g.trellis", "sentence": "a"});
            for (k, v) in extra.as_object().unwrap() {
                value[k] = v.clone();
            }
            serde_json::from_value::<ParseParams>(value).map_err(|e| e.to_string())
        };
        let ok = parse(serde_json::json!({"beam": 8, "beamSize": 20})).unwrap();
        assert_eq!((ok.beam, ok.beam_size), (Some(8.0), Some(20)));
        let none = parse(serde_json::json!({"beam": null})).unwrap();
        assert_eq!((none.beam, none.beam_size), (None, None));
        for (extra, says) in [
            (serde_json::json!({"beam": -1.5}), "`beam` must be a natural-log width of 0 or more, such as 8, not -1.5"),
            (serde_json::json!({"beam": "wide"}), "not \"wide\""),
            (serde_json::json!({"beamSize": 0}), "`beamSize` must be a whole number of symbols per chart span, 1 or more, such as 20, not 0"),
            (serde_json::json!({"beamSize": -3}), "not -3"),
            (serde_json::json!({"beamSize": 2.5}), "not 2.5"),
        ] {
            let e = parse(extra.clone()).unwrap_err();
            assert!(e.contains(says), "{extra}: {e}");
        }
    }

    #[test]
    fn params_refuse_unknown_fields() {
        let parsed = serde_json::from_value::<ParseParams>(
            serde_json::json!({"uri": "file:///g.trellis", "sentense": "a"}),
        );
        assert!(parsed.is_err());
    }

    #[test]
    fn results_are_camel_case() {
        let result = ParseResult {
            results: vec![SentenceParse {
                sentence: "a".into(),
                parse_count: Some("1".into()),
                sentence_probability: Some(0.5),
                log_probability: Some(-1.0),
                ..SentenceParse::default()
            }],
            ran: Ran {
                rescaled: vec!["S".into()],
                ignored_errors: vec![IgnoredError {
                    code: "undefined".into(),
                    message: "`X` is used but has no block".into(),
                    location: None,
                }],
            },
        };
        let value = serde_json::to_value(&result).unwrap();
        assert_eq!(value["rescaled"][0], "S");
        assert_eq!(value["ignoredErrors"][0]["code"], "undefined");
        let entry = &value["results"][0];
        assert_eq!(entry["parseCount"], "1");
        assert_eq!(entry["sentenceProbability"], 0.5);
        assert_eq!(entry["logProbability"], -1.0);
    }
}
