//! README.md's "JSON output" section against the real output: every field
//! the README lists for a command is printed (those marked `?` at least
//! once over the runs below), and nothing is printed that it does not list.
//!
//! The notation (README.md states it): `{a,b?,c{…},d[{…}],e[shape]}` — `b?`
//! is optional, `c{…}` an object with those fields, `d[{…}]` an array of
//! such objects, `e[shape]` an array of the named shape listed in the same
//! section. A `null` value satisfies any shape.

mod common;
use common::{trellis, KIOSK};

use serde_json::Value;
use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::Path;
use trellis_test_support::grammars::GREENHOUSE_BEAM;

/// The fields of an object.
#[derive(Debug, Clone, PartialEq)]
struct Shape(Vec<Field>);

#[derive(Debug, Clone, PartialEq)]
struct Field {
    name: String,
    optional: bool,
    value: Holds,
}

/// What a field holds, as far as the notation says.
#[derive(Debug, Clone, PartialEq)]
enum Holds {
    /// A value whose inside is not described (a number, a string, a list of
    /// strings).
    Plain,
    Object(Shape),
    ArrayOf(Shape),
    ArrayOfNamed(String),
}

struct Reader<'a> {
    text: &'a [u8],
    at: usize,
}

impl Reader<'_> {
    fn peek(&self) -> Option<u8> {
        self.text.get(self.at).copied()
    }

    fn expect(&mut self, c: u8) {
        assert_eq!(
            self.peek(),
            Some(c),
            "README notation: expected `{}` at {} in {}",
            c as char,
            self.at,
            String::from_utf8_lossy(self.text)
        );
        self.at += 1;
    }

    fn name(&mut self) -> String {
        let start = self.at;
        while matches!(self.peek(), Some(c) if c.is_ascii_alphanumeric() || c == b'_') {
            self.at += 1;
        }
        assert!(
            self.at > start,
            "README notation: a name expected at {}",
            self.at
        );
        String::from_utf8(self.text[start..self.at].to_vec()).unwrap()
    }

    fn shape(&mut self) -> Shape {
        self.expect(b'{');
        let mut fields = Vec::new();
        loop {
            let name = self.name();
            let optional = self.peek() == Some(b'?');
            if optional {
                self.at += 1;
            }
            let value = match self.peek() {
                Some(b'{') => Holds::Object(self.shape()),
                Some(b'[') => {
                    self.at += 1;
                    let inner = if self.peek() == Some(b'{') {
                        Holds::ArrayOf(self.shape())
                    } else {
                        Holds::ArrayOfNamed(self.name())
                    };
                    self.expect(b']');
                    inner
                }
                _ => Holds::Plain,
            };
            fields.push(Field {
                name,
                optional,
                value,
            });
            match self.peek() {
                Some(b',') => self.at += 1,
                _ => break,
            }
        }
        self.expect(b'}');
        fields.sort_by(|a, b| a.name.cmp(&b.name));
        Shape(fields)
    }
}

fn parse_shape(text: &str) -> Shape {
    let mut r = Reader {
        text: text.as_bytes(),
        at: 0,
    };
    let shape = r.shape();
    assert_eq!(
        r.at,
        text.len(),
        "README notation: text after the shape in {text}"
    );
    shape
}

/// The shapes listed in README.md's "JSON output" section, by name.
fn documented() -> BTreeMap<String, Shape> {
    let readme = fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("../README.md"))
        .expect("README.md is readable");
    let section = readme
        .split("\n## JSON output\n")
        .nth(1)
        .expect("README.md has a \"JSON output\" section");
    let section = section.split("\n## ").next().unwrap();
    let mut shapes = BTreeMap::new();
    for line in section.lines().filter(|l| l.starts_with("- `")) {
        let spans: Vec<&str> = line.split('`').skip(1).step_by(2).collect();
        let (name, shape) = (spans[0], spans[spans.len() - 1]);
        assert!(shape.starts_with('{'), "no shape on the line: {line}");
        shapes.insert(name.to_string(), parse_shape(shape));
    }
    shapes
}

/// Checks `value` against `shape`, naming the place by `path`; records in
/// `seen` the path of every optional field found.
fn conforms(
    value: &Value,
    shape: &Shape,
    shapes: &BTreeMap<String, Shape>,
    path: &str,
    seen: &mut BTreeSet<String>,
) {
    let Some(object) = value.as_object() else {
        assert!(value.is_null(), "{path}: an object expected, found {value}");
        return;
    };
    let printed: BTreeSet<&str> = object.keys().map(String::as_str).collect();
    let listed: BTreeSet<&str> = shape.0.iter().map(|f| f.name.as_str()).collect();
    let unlisted: Vec<&&str> = printed.difference(&listed).collect();
    assert!(
        unlisted.is_empty(),
        "{path}: printed but not in README.md: {unlisted:?}"
    );
    for field in &shape.0 {
        let here = format!("{path}.{}", field.name);
        let Some(v) = object.get(&field.name) else {
            assert!(field.optional, "{here}: in README.md but not printed");
            continue;
        };
        if field.optional {
            seen.insert(here.clone());
        }
        let each = |inner: &Shape, seen: &mut BTreeSet<String>| match v {
            Value::Array(items) => {
                for item in items {
                    conforms(item, inner, shapes, &format!("{here}[]"), seen);
                }
            }
            Value::Null => {}
            other => panic!("{here}: an array expected, found {other}"),
        };
        match &field.value {
            Holds::Plain => {}
            Holds::Object(inner) => conforms(v, inner, shapes, &here, seen),
            Holds::ArrayOf(inner) => each(inner, seen),
            Holds::ArrayOfNamed(name) => {
                let inner = shapes
                    .get(name)
                    .unwrap_or_else(|| panic!("{here}: README.md lists no shape `{name}`"));
                each(inner, seen)
            }
        }
    }
}

/// Every optional field of `shape`, by the path [`conforms`] gives it.
fn optional_paths(
    shape: &Shape,
    shapes: &BTreeMap<String, Shape>,
    path: &str,
    out: &mut BTreeSet<String>,
) {
    for field in &shape.0 {
        let here = format!("{path}.{}", field.name);
        if field.optional {
            out.insert(here.clone());
        }
        match &field.value {
            Holds::Plain => {}
            Holds::Object(inner) => optional_paths(inner, shapes, &here, out),
            Holds::ArrayOf(inner) => optional_paths(inner, shapes, &format!("{here}[]"), out),
            Holds::ArrayOfNamed(name) => {
                optional_paths(&shapes[name], shapes, &format!("{here}[]"), out)
            }
        }
    }
}

/// Runs each argument list, checks every JSON line printed against the
/// README's shape for `command`, and that every optional field was printed
/// by some run.
fn check_command(command: &str, dir: &Path, runs: &[&[&str]]) {
    let shapes = documented();
    let shape = shapes
        .get(command)
        .unwrap_or_else(|| panic!("README.md documents no JSON for `{command}`"));
    let mut seen = BTreeSet::new();
    for args in runs {
        let mut full = vec![command, "--format", "json"];
        full.extend_from_slice(args);
        let run = trellis(dir, &full);
        assert!(run.code <= 1, "{full:?}: {}", run.stderr);
        assert!(!run.stdout.is_empty(), "{full:?} printed nothing");
        for line in run.stdout.lines() {
            let value: Value = serde_json::from_str(line)
                .unwrap_or_else(|e| panic!("{full:?}: not JSON ({e}): {line}"));
            conforms(&value, shape, &shapes, command, &mut seen);
        }
    }
    let mut optional = BTreeSet::new();
    optional_paths(shape, &shapes, command, &mut optional);
    let never: Vec<&String> = optional.difference(&seen).collect();
    assert!(
        never.is_empty(),
        "README.md lists fields for `{command}` that no run printed: {never:?}"
    );
}

/// The bundled examples, and next to them a small grammar whose tests fail
/// and tie and one with errors.
fn setup() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    let examples = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    for name in [
        "ferry_kiosk.trellis",
        "ferry_lexicon.trellis",
        "broken.trellis",
    ] {
        fs::copy(examples.join(name), dir.path().join(name)).unwrap();
    }
    fs::write(
        dir.path().join("kiosk.trellis"),
        format!(
            "{KIOSK}\ntest \"t\" {{\n  accept \"a day ticket\" as (Request (Ticket \"a\" (Kind \"day\") \"ticket\"))\n  reject \"day ticket\"\n  accept \"dya ticket\"\n}}\n"
        ),
    )
    .unwrap();
    fs::write(dir.path().join("greenhouse.trellis"), GREENHOUSE_BEAM).unwrap();
    fs::write(
        dir.path().join("erring.trellis"),
        "start S\nS {\n  1/2 \"a\"\n}\ntest \"t\" {\n  accept \"a\"\n}\n",
    )
    .unwrap();
    dir
}

#[test]
fn readme_lists_every_command_and_the_diagnostic() {
    let names: Vec<String> = documented().into_keys().collect();
    assert_eq!(
        names,
        [
            "check",
            "diagnostic",
            "fit",
            "fmt",
            "parse",
            "sample",
            "stats",
            "test"
        ]
    );
}

#[test]
fn check_prints_what_readme_documents() {
    let dir = setup();
    check_command(
        "check",
        dir.path(),
        &[&["ferry_kiosk.trellis"], &["broken.trellis"]],
    );
}

#[test]
fn fit_prints_what_readme_documents() {
    let dir = setup();
    fs::write(
        dir.path().join("trees.mrg"),
        "(Request (Ticket (Kind day) ticket))\n(Request a (Ticket a (Kind single) ticket))\n",
    )
    .unwrap();
    check_command(
        "fit",
        dir.path(),
        &[&["--dry-run", "kiosk.trellis", "trees.mrg"]],
    );
}

#[test]
fn fmt_prints_what_readme_documents() {
    let dir = setup();
    check_command(
        "fmt",
        dir.path(),
        &[
            &["--check", "ferry_kiosk.trellis", "broken.trellis"],
            &["--diff", "ferry_lexicon.trellis"],
        ],
    );
}

#[test]
fn parse_prints_what_readme_documents() {
    let dir = setup();
    let grammar = "ferry_kiosk.trellis";
    check_command(
        "parse",
        dir.path(),
        &[
            &[
                grammar,
                "two return tickets to marrowby please",
                "two tikcets please",
            ],
            &[
                grammar,
                "--kbest",
                "2",
                "two return tickets to marrowby please",
            ],
            &[
                grammar,
                "--max-chart-mib",
                "0",
                "two return tickets to marrowby please",
            ],
            &[
                grammar,
                "--beam",
                "0",
                "--beam-size",
                "1",
                // Pruned: "two" is one symbol in one tree, another in the other.
                "two adults",
            ],
            // The beam drops every tree and is given up (see the grammar).
            &["greenhouse.trellis", "--beam-size", "1", "water ivy"],
        ],
    );
}

#[test]
fn test_prints_what_readme_documents() {
    let dir = setup();
    check_command(
        "test",
        dir.path(),
        &[
            &["ferry_kiosk.trellis"],
            &["kiosk.trellis", "erring.trellis"],
            &["kiosk.trellis", "erring.trellis", "--coverage"],
        ],
    );
}

#[test]
fn sample_prints_what_readme_documents() {
    let dir = setup();
    check_command(
        "sample",
        dir.path(),
        &[
            &["ferry_kiosk.trellis", "-n", "3", "--seed", "7"],
            &["ferry_kiosk.trellis", "-n", "3", "--seed", "7", "--trees"],
        ],
    );
}

#[test]
fn stats_prints_what_readme_documents() {
    let dir = setup();
    check_command("stats", dir.path(), &[&["ferry_kiosk.trellis"]]);
}
