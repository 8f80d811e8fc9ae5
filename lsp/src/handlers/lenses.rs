//! `textDocument/codeLens`: the façade's lenses (parse a sentence, sample,
//! run all tests above `start`; run one test above each test block) as
//! commands of `ext`, their arguments built from the commands' own
//! parameter types, so `workspace/executeCommand` takes them as they are.

use crate::convert;
use crate::ext::{ExtCommand, Parse, ParseParams, RunTest, RunTestParams, Sample, SampleParams};
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;
use trellis_ide::CodeLensKind;

fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}

pub async fn code_lenses(
    backend: &Backend,
    params: CodeLensParams,
) -> jsonrpc::Result<Option<Vec<CodeLens>>> {
    let uri = params.text_document.uri;
    let Some(t) = backend.target(&uri).await? else {
        return Ok(None);
    };
    backend
        .run("placing code lenses", move || {
            let run_test = |title: String, test: Option<String>| {
                let params = RunTestParams {
                    uri: uri.clone(),
                    test,
                    show: true,
                };
                RunTest::command(title, &params)
            };
            let lenses = t
                .analysis()
                .code_lenses(t.file)
                .into_iter()
                .map(|lens| {
                    let command = match lens.kind {
                        CodeLensKind::ParseSentence => Parse::command(
                            "▶ parse a sentence".to_string(),
                            // No sentence: the editor asks for one.
                            &ParseParams {
                                uri: uri.clone(),
                                sentences: Vec::new(),
                                sentence: None,
                                kbest: None,
                                show: true,
                                picture: false,
                                beam: None,
                                beam_size: None,
                            },
                        ),
                        CodeLensKind::Sample => Sample::command(
                            format!("⚄ sample {} sentences", Sample::DEFAULT_COUNT),
                            &SampleParams {
                                uri: uri.clone(),
                                count: Some(Sample::DEFAULT_COUNT),
                                seed: None,
                                trees: false,
                                show: true,
                            },
                        ),
                        CodeLensKind::RunAllTests { tests } => {
                            run_test(format!("▶ run all {tests} test{}", plural(tests)), None)
                        }
                        CodeLensKind::RunTest { test, name } => {
                            let tests = &t.analysis().grammar.tests;
                            let cases = tests.get(test).map_or(0, |t| t.cases.len());
                            run_test(
                                format!("▶ run test ({cases} case{})", plural(cases)),
                                Some(name),
                            )
                        }
                    };
                    CodeLens {
                        range: convert::range(t.source(), lens.span),
                        command: Some(command),
                        data: None,
                    }
                })
                .collect();
            Some(lenses)
        })
        .await
}
