//! `trellis check --format sarif`: a SARIF 2.1.0 log (the OASIS Static
//! Analysis Results Interchange Format), which code-scanning services read.
//!
//! One run; the tool's driver is `trellis` with its version and one rule
//! per diagnostic code (its one-line description, and help that says how to
//! set its level); one result per finding with its rule, level, message,
//! place, the related places and the help line.
//!
//! Places: artifact URIs are relative to the working directory (the base
//! `%SRCROOT%`, given as an absolute `file:` URI in `originalUriBaseIds`)
//! when the file lies below it, absolute `file:` URIs otherwise. Lines and
//! columns are 1-based; columns count Unicode code points, as the run's
//! `columnKind` (`unicodeCodePoints`) says — the same columns as the JSON
//! output and the human report. An end position is the one just after the
//! span.

use super::{clamp, file, position, relative_to, Position};
use grammar_lang::{Code, Diagnostic, FileId, Severity, SourceMap, Span};
use serde::Serialize;
use std::path::{Component, Path};

const SCHEMA: &str = "https://json.schemastore.org/sarif-2.1.0.json";
const BASE: &str = "%SRCROOT%";

/// The whole log.
#[derive(Serialize)]
pub struct SarifLog {
    #[serde(rename = "$schema")]
    schema: &'static str,
    version: &'static str,
    runs: Vec<Run>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Run {
    tool: Tool,
    #[serde(skip_serializing_if = "Option::is_none")]
    original_uri_base_ids: Option<BaseIds>,
    column_kind: &'static str,
    results: Vec<SarifResult>,
}

#[derive(Serialize)]
struct BaseIds {
    #[serde(rename = "%SRCROOT%")]
    src_root: ArtifactLocation,
}

#[derive(Serialize)]
struct Tool {
    driver: Driver,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Driver {
    name: &'static str,
    version: &'static str,
    semantic_version: &'static str,
    rules: Vec<Rule>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Rule {
    id: &'static str,
    short_description: Text,
    full_description: Text,
    help: Text,
    default_configuration: Configuration,
}

#[derive(Serialize)]
struct Configuration {
    /// `none` for a code that is off unless trellis.toml turns it on.
    level: &'static str,
    enabled: bool,
}

#[derive(Serialize)]
struct Text {
    text: String,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct SarifResult {
    rule_id: &'static str,
    rule_index: usize,
    level: &'static str,
    message: Text,
    locations: Vec<Location>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    related_locations: Vec<Location>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Location {
    #[serde(skip_serializing_if = "Option::is_none")]
    id: Option<usize>,
    physical_location: PhysicalLocation,
    #[serde(skip_serializing_if = "Option::is_none")]
    message: Option<Text>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct PhysicalLocation {
    artifact_location: ArtifactLocation,
    region: Region,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct ArtifactLocation {
    uri: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    uri_base_id: Option<&'static str>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Region {
    start_line: u32,
    start_column: u32,
    end_line: u32,
    end_column: u32,
}

/// SARIF's level for a severity.
fn level(severity: Severity) -> &'static str {
    match severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Note => "note",
    }
}

/// The rule describing `code`.
fn rule(code: Code) -> Rule {
    let description = code.description().to_string();
    let help = if code.is_check() {
        format!(
            "{description} Set its level in trellis.toml under [checks], e.g. `{} = \"warning\"` \
             (\"error\", \"warning\", \"note\" or \"off\"); `trellis check --help` lists every check.",
            code.as_str()
        )
    } else {
        format!(
            "{description} Not reported by `trellis check`; the language server shows it \
             when trellis.toml has `[editor]` with `uncovered-rules = \"hint\"`."
        )
    };
    let on = code.is_check() && !code.off_by_default();
    Rule {
        id: code.as_str(),
        short_description: Text {
            text: description.clone(),
        },
        full_description: Text { text: description },
        help: Text { text: help },
        default_configuration: Configuration {
            level: if on {
                level(code.default_severity())
            } else {
                "none"
            },
            enabled: on,
        },
    }
}

/// The log for `findings` (each with the sources its file ids index),
/// with URIs relative to `cwd` where possible.
pub fn check_log<'a>(
    findings: impl IntoIterator<Item = (&'a Diagnostic, &'a SourceMap)>,
    cwd: Option<&Path>,
) -> SarifLog {
    let rules: Vec<Rule> = Code::ALL.iter().map(|&c| rule(c)).collect();
    let results = findings
        .into_iter()
        .map(|(d, sources)| {
            let mut text = d.message.clone();
            if let Some(help) = &d.help {
                text.push_str("\nhelp: ");
                text.push_str(help);
            }
            SarifResult {
                rule_id: d.code.as_str(),
                rule_index: Code::ALL.iter().position(|&c| c == d.code).unwrap_or(0),
                level: level(d.severity),
                message: Text { text },
                locations: vec![location(
                    sources,
                    d.location.file,
                    d.location.span,
                    cwd,
                    None,
                )],
                related_locations: d
                    .related
                    .iter()
                    .enumerate()
                    .map(|(i, r)| {
                        location(
                            sources,
                            r.location.file,
                            r.location.span,
                            cwd,
                            Some((i + 1, r.message.clone())),
                        )
                    })
                    .collect(),
            }
        })
        .collect();
    SarifLog {
        schema: SCHEMA,
        version: "2.1.0",
        runs: vec![Run {
            tool: Tool {
                driver: Driver {
                    name: "trellis",
                    version: env!("CARGO_PKG_VERSION"),
                    semantic_version: env!("CARGO_PKG_VERSION"),
                    rules,
                },
            },
            original_uri_base_ids: cwd.map(|cwd| BaseIds {
                src_root: ArtifactLocation {
                    uri: directory_uri(cwd),
                    uri_base_id: None,
                },
            }),
            column_kind: "unicodeCodePoints",
            results,
        }],
    }
}

fn location(
    sources: &SourceMap,
    id: FileId,
    span: Span,
    cwd: Option<&Path>,
    related: Option<(usize, String)>,
) -> Location {
    let (artifact, start, end) = match file(sources, id) {
        Some(f) => {
            let range = clamp(&f.text, span);
            (
                artifact(&f.path, cwd),
                position(f, range.start),
                position(f, range.end),
            )
        }
        None => {
            let start = Position { line: 1, column: 1 };
            (
                ArtifactLocation {
                    uri: String::new(),
                    uri_base_id: None,
                },
                start,
                start,
            )
        }
    };
    let (id, message) = match related {
        Some((id, message)) => (Some(id), Some(Text { text: message })),
        None => (None, None),
    };
    Location {
        id,
        physical_location: PhysicalLocation {
            artifact_location: artifact,
            region: Region {
                start_line: start.line,
                start_column: start.column,
                end_line: end.line,
                end_column: end.column,
            },
        },
        message,
    }
}

/// Where `path` is, for SARIF: relative to `cwd` (against `%SRCROOT%`)
/// when it lies below it, an absolute `file:` URI otherwise.
fn artifact(path: &Path, cwd: Option<&Path>) -> ArtifactLocation {
    match relative_to(path, cwd) {
        Ok(relative) => ArtifactLocation {
            uri: encode_path(&relative),
            uri_base_id: Some(BASE),
        },
        Err(absolute) if absolute.is_absolute() => ArtifactLocation {
            uri: file_uri(&absolute),
            uri_base_id: None,
        },
        // No working directory to resolve against: the path as given.
        Err(relative) => ArtifactLocation {
            uri: encode_path(&relative),
            uri_base_id: None,
        },
    }
}

/// `dir` as an absolute `file:` URI ending in `/`, as a base must.
fn directory_uri(dir: &Path) -> String {
    let mut uri = file_uri(dir);
    if !uri.ends_with('/') {
        uri.push('/');
    }
    uri
}

/// An absolute path as a `file:` URI.
fn file_uri(path: &Path) -> String {
    let encoded = encode_path(path);
    if encoded.starts_with('/') {
        format!("file://{encoded}")
    } else {
        // A Windows path: `C:/…`.
        format!("file:///{encoded}")
    }
}

/// The components of `path` joined by `/`, each percent-encoded except for
/// the characters URIs allow unescaped in a path segment (RFC 3986).
fn encode_path(path: &Path) -> String {
    let mut out = String::new();
    for component in path.components() {
        match component {
            Component::RootDir => {
                if !out.ends_with('/') {
                    out.push('/');
                }
                continue;
            }
            Component::Prefix(prefix) => {
                out.push_str(&prefix.as_os_str().to_string_lossy().replace('\\', "/"));
                continue;
            }
            _ => {}
        }
        if !out.is_empty() && !out.ends_with('/') {
            out.push('/');
        }
        for byte in component.as_os_str().to_string_lossy().bytes() {
            let plain = byte.is_ascii_alphanumeric()
                || matches!(
                    byte,
                    b'-' | b'.'
                        | b'_'
                        | b'~'
                        | b'!'
                        | b'$'
                        | b'&'
                        | b'\''
                        | b'('
                        | b')'
                        | b'*'
                        | b'+'
                        | b','
                        | b';'
                        | b'='
                        | b'@'
                );
            if plain {
                out.push(byte as char);
            } else {
                out.push_str(&format!("%{byte:02X}"));
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::render::tests::{one_file, span_of};
    use grammar_lang::Location as At;

    const FERRY: &str = "start Trip\nTrip {\n  1/2 \"Fähre\" Kind\n  1/2 Kind\n}\n";

    fn log_of(d: &Diagnostic, path: &str, cwd: &str) -> serde_json::Value {
        let sources = one_file(path, FERRY);
        let log = check_log([(d, &sources)], Some(Path::new(cwd)));
        serde_json::to_value(&log).unwrap()
    }

    #[test]
    fn a_finding_is_a_result_with_its_rule_level_place_and_help() {
        let d = Diagnostic::new(
            Code::Undefined,
            At::new(FileId(0), span_of(FERRY, "Kind")),
            "`Kind` is used but has no block",
        )
        .with_related(
            At::new(FileId(0), span_of(FERRY, "\"Fähre\"")),
            "next to this",
        )
        .with_help("define `Kind`");
        let log = log_of(&d, "grammars/kiosk.trellis", "/work");
        assert_eq!(log["version"], "2.1.0");
        let run = &log["runs"][0];
        assert_eq!(run["columnKind"], "unicodeCodePoints");
        assert_eq!(
            run["originalUriBaseIds"]["%SRCROOT%"]["uri"],
            "file:///work/"
        );
        let result = &run["results"][0];
        assert_eq!(result["ruleId"], "undefined");
        let index = result["ruleIndex"].as_u64().unwrap() as usize;
        assert_eq!(run["tool"]["driver"]["rules"][index]["id"], "undefined");
        assert_eq!(result["level"], "error");
        assert_eq!(
            result["message"]["text"],
            "`Kind` is used but has no block\nhelp: define `Kind`"
        );
        let place = &result["locations"][0]["physicalLocation"];
        assert_eq!(place["artifactLocation"]["uri"], "grammars/kiosk.trellis");
        assert_eq!(place["artifactLocation"]["uriBaseId"], "%SRCROOT%");
        assert_eq!(
            place["region"],
            serde_json::json!({"startLine": 3, "startColumn": 15, "endLine": 3, "endColumn": 19})
        );
        // `"Fähre"` is 7 code points (8 bytes) from column 7.
        let related = &result["relatedLocations"][0];
        assert_eq!(related["id"], 1);
        assert_eq!(related["message"]["text"], "next to this");
        assert_eq!(
            related["physicalLocation"]["region"],
            serde_json::json!({"startLine": 3, "startColumn": 7, "endLine": 3, "endColumn": 14})
        );
    }

    #[test]
    fn every_code_is_a_rule_with_its_description_and_default_level() {
        let log = serde_json::to_value(check_log([], None)).unwrap();
        let rules = log["runs"][0]["tool"]["driver"]["rules"]
            .as_array()
            .unwrap();
        assert_eq!(rules.len(), Code::ALL.len());
        for (rule, &code) in rules.iter().zip(Code::ALL) {
            assert_eq!(rule["id"], code.as_str());
            assert_eq!(rule["shortDescription"]["text"], code.description());
            assert!(rule["help"]["text"]
                .as_str()
                .unwrap()
                .starts_with(code.description()));
        }
        let by_id = |id: &str| rules.iter().find(|r| r["id"] == id).unwrap();
        assert_eq!(
            by_id("unreachable")["defaultConfiguration"]["level"],
            "warning"
        );
        assert_eq!(by_id("uncovered")["defaultConfiguration"]["enabled"], false);
        assert!(log["runs"][0].get("originalUriBaseIds").is_none());
    }

    #[test]
    fn files_outside_the_working_directory_get_absolute_file_uris() {
        let outside = artifact(
            Path::new("/srv/grammars/a b.trellis"),
            Some(Path::new("/work")),
        );
        assert_eq!(outside.uri, "file:///srv/grammars/a%20b.trellis");
        assert!(outside.uri_base_id.is_none());
        let up = artifact(
            Path::new("../shared/x.trellis"),
            Some(Path::new("/work/here")),
        );
        assert_eq!(up.uri, "file:///work/shared/x.trellis");
        let below = artifact(Path::new("./g/#1 ü.trellis"), Some(Path::new("/work")));
        assert_eq!(below.uri, "g/%231%20%C3%BC.trellis");
        assert_eq!(below.uri_base_id, Some(BASE));
    }
}
