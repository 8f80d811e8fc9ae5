#!/usr/bin/env python3
"""The reports CI systems read, read back by independent libraries.

Runs the built `trellis` and checks its reports with readers that do not
share code with it:

* `check --format sarif` on examples/broken.trellis is loaded with
  sarif-pydantic (a typed model of SARIF 2.1.0) and with sarif-tools (the
  `sarif` command's library, and its `summary` command). Every property
  must be one the model knows; the rules must be exactly the codes
  `trellis check --help` lists (plus `config`) with the same descriptions;
  the results must be exactly the findings of `check --format json`, with
  the same rule, level, file and region.
* `check --format github` on the same file: each line is one workflow
  command, and unescaped by the runner's rules it gives back the JSON
  finding's place, code and message.
* `test --format junit` on a grammar with failing cases and one with
  errors is parsed with junitparser: the counts, and each case's name,
  class name, failure message and text against `test --format json`.

Usage: validate.py [--trellis PATH]   (run from anywhere; default:
target/debug/trellis of the repository, or $CARGO_TARGET_DIR's). Exits 1
on the first mismatch, with what differed.
"""

import argparse
import json
import os
import re
import subprocess
import sys
import tempfile
from collections import Counter
from pathlib import Path

import junitparser
import sarif_pydantic
from pydantic import BaseModel
from sarif import loader as sarif_loader

ROOT = Path(__file__).resolve().parents[2]

# SARIF 2.1.0 properties that sarif-pydantic 0.6.2 does not model (they are
# in the OASIS standard): run.columnKind (section 3.14.15).
UNMODELLED = {("Run", "columnKind")}


class Mismatch(Exception):
    pass


def expect(condition, message):
    if not condition:
        raise Mismatch(message)


def trellis(binary, *args, cwd=ROOT, codes=(0, 1)):
    run = subprocess.run(
        [str(binary), "--color", "never", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        encoding="utf-8",
    )
    expect(
        run.returncode in codes,
        f"trellis {' '.join(args)} exited {run.returncode}:\n{run.stderr}",
    )
    return run


def documented_codes(binary):
    """Code -> description, from `trellis check --help`."""
    text = trellis(binary, "check", "--help", codes=(0,)).stdout
    section = text.split("Checks (", 1)[1]
    codes = {}
    for line in section.splitlines()[1:]:
        m = re.match(r"^  ([a-z-]+)\s+(error|warning|note|off)\s+(.*?)( \((always|editor only)\))?$", line)
        if not m:
            break
        codes[m.group(1)] = m.group(3)
    expect(len(codes) >= 20, f"too few checks found in `check --help`: {sorted(codes)}")
    return codes


def extra_properties(model, path="log"):
    """Every property anywhere in `model` that its class does not model."""
    found = []
    if isinstance(model, BaseModel):
        for name in (model.model_extra or {}):
            if (type(model).__name__, name) not in UNMODELLED:
                found.append(f"{path}.{name} ({type(model).__name__})")
        for name in type(model).model_fields:
            found += extra_properties(getattr(model, name), f"{path}.{name}")
    elif isinstance(model, list):
        for i, item in enumerate(model):
            found += extra_properties(item, f"{path}[{i}]")
    return found


def check_sarif(binary, workdir):
    findings = json.loads(
        trellis(binary, "check", "--format", "json", "examples/broken.trellis").stdout
    )["diagnostics"]
    run = trellis(binary, "check", "--format", "sarif", "examples/broken.trellis")
    expect(run.returncode == 1, "check --format sarif of broken.trellis must exit 1")
    path = Path(workdir) / "broken.sarif"
    path.write_text(run.stdout, encoding="utf-8")

    # sarif-pydantic: the typed model.
    log = sarif_pydantic.load(path)
    extras = extra_properties(log)
    expect(not extras, f"SARIF properties the model does not know: {extras}")
    expect(log.version == "2.1.0", f"version {log.version}")
    expect(len(log.runs) == 1, f"{len(log.runs)} runs")
    sarif_run = log.runs[0]
    driver = sarif_run.tool.driver
    version = trellis(binary, "--version", codes=(0,)).stdout.split()[-1]
    expect(
        (driver.name, driver.version) == ("trellis", version),
        f"driver {driver.name} {driver.version}, expected trellis {version}",
    )
    codes = documented_codes(binary)
    rules = {r.id: r for r in driver.rules}
    expect(
        set(rules) == set(codes) | {"config"},
        f"rules {sorted(rules)} but check --help lists {sorted(codes)} (and config)",
    )
    for code, description in codes.items():
        rule = rules[code]
        expect(
            rule.short_description.text == description,
            f"rule {code}: {rule.short_description.text!r}, help says {description!r}",
        )
        expect(
            rule.help is not None and rule.help.text.startswith(description),
            f"rule {code} has no help text starting with its description",
        )
    rule_order = [r.id for r in driver.rules]

    got = Counter()
    for result in sarif_run.results:
        expect(result.rule_id in rules, f"result of unknown rule {result.rule_id}")
        expect(
            rule_order[result.rule_index] == result.rule_id,
            f"ruleIndex {result.rule_index} is not {result.rule_id}",
        )
        place = result.locations[0].physical_location
        region = place.region
        got[
            (
                result.rule_id,
                result.level.value,
                place.artifact_location.uri,
                region.start_line,
                region.start_column,
                region.end_line,
                region.end_column,
                result.message.text.split("\nhelp: ")[0],
            )
        ] += 1
        for related in result.related_locations or []:
            expect(
                related.message and related.message.text,
                f"a related location of {result.rule_id} without a message",
            )
    wanted = Counter(
        (
            d["code"],
            d["severity"],
            d["file"],
            d["line"],
            d["column"],
            d["end_line"],
            d["end_column"],
            d["message"],
        )
        for d in findings
    )
    expect(
        got == wanted,
        f"SARIF results differ from the JSON findings:\n  only in SARIF: "
        f"{list((got - wanted).elements())}\n  only in JSON: {list((wanted - got).elements())}",
    )
    shown = {key[0] for key in got}
    for code in ("syntax", "sum-not-one", "undefined", "unreachable", "use-missing", "arity"):
        expect(code in shown, f"broken.trellis shows no {code} in SARIF")

    # sarif-tools: its loader and its `summary` command.
    records = sarif_loader.load_sarif_file(str(path)).get_records()
    expect(
        len(records) == len(findings),
        f"sarif-tools reads {len(records)} results, expected {len(findings)}",
    )
    expect(
        Counter((r["Code"], r["Location"], int(r["Line"])) for r in records)
        == Counter((d["code"], d["file"], d["line"]) for d in findings),
        "sarif-tools reads other codes or places than the JSON findings",
    )
    summary = subprocess.run(
        [sys.executable, "-m", "sarif", "summary", str(path)],
        capture_output=True,
        text=True,
    )
    expect(summary.returncode == 0, f"sarif summary failed: {summary.stderr}")
    errors = sum(1 for d in findings if d["severity"] == "error")
    expect(
        f"error: {errors}" in summary.stdout,
        f"sarif summary does not count {errors} errors:\n{summary.stdout}",
    )
    print(f"sarif: {len(findings)} results and {len(rules)} rules read back")


def unescape(text, property_value):
    """The runner's unescaping of a workflow command's message or property."""
    pairs = [("%0D", "\r"), ("%0A", "\n")]
    if property_value:
        pairs += [("%3A", ":"), ("%2C", ",")]
    pairs.append(("%25", "%"))
    out, i = [], 0
    while i < len(text):
        for escaped, plain in pairs:
            if text.startswith(escaped, i):
                out.append(plain)
                i += len(escaped)
                break
        else:
            out.append(text[i])
            i += 1
    return "".join(out)


def check_github(binary):
    findings = json.loads(
        trellis(binary, "check", "--format", "json", "examples/broken.trellis").stdout
    )["diagnostics"]
    run = trellis(binary, "check", "--format", "github", "examples/broken.trellis")
    lines = run.stdout.splitlines()
    expect(len(lines) == len(findings), f"{len(lines)} annotations for {len(findings)} findings")
    command = {"error": "error", "warning": "warning", "note": "notice"}
    for line, d in zip(lines, findings):
        m = re.fullmatch(r"::(error|warning|notice) ([^:]*)::(.*)", line)
        expect(m, f"not a workflow command: {line}")
        expect(m.group(1) == command[d["severity"]], f"{m.group(1)} for a {d['severity']}")
        props = dict(p.split("=", 1) for p in m.group(2).split(","))
        props = {k: unescape(v, True) for k, v in props.items()}
        expect(
            props
            == {
                "file": d["file"],
                "line": str(d["line"]),
                "col": str(d["column"]),
                "endLine": str(d["end_line"]),
                "endColumn": str(d["end_column"]),
                "title": f"trellis {d['code']}",
            },
            f"annotation properties {props} for {d}",
        )
        message = unescape(m.group(3), False)
        expect(message.split("\n")[0] == d["message"], f"message {message!r} for {d['message']!r}")
        if d["help"]:
            expect(message.endswith("\nhelp: " + d["help"]), f"no help line in {message!r}")
    print(f"github: {len(lines)} annotations read back")


KIOSK = """start Request

Request {
  1/2  Ticket
  1/2  "a" Ticket
}

Ticket {
  1/2  Kind "ticket"
  1/2  "a" Kind "ticket"
}

Kind { "day" | "single" | "return" | "fähre" }

test "orders & <returns> “quoted”" {
  accept "day ticket"
  accept "fähre ticket"
  reject "day ticket"
  accept "dya ticket"
  accept "a day ticket" as (Request (Ticket "a" (Kind "day") "ticket"))
}

test "plain" {
  reject "ticket"
}
"""

ERRING = 'start S\nS {\n  1/2 "a"\n}\ntest "t" {\n  accept "a"\n  reject "b"\n}\n'


def check_junit(binary, workdir):
    Path(workdir, "kiosk.trellis").write_text(KIOSK, encoding="utf-8")
    Path(workdir, "erring.trellis").write_text(ERRING, encoding="utf-8")
    args = ["kiosk.trellis", "erring.trellis"]
    doc = json.loads(trellis(binary, "test", "--format", "json", *args, cwd=workdir).stdout)
    run = trellis(binary, "test", "--format", "junit", *args, cwd=workdir)
    expect(run.returncode == 1, "a run with failing cases must exit 1")
    path = Path(workdir, "report.xml")
    path.write_text(run.stdout, encoding="utf-8")

    xml = junitparser.JUnitXml.fromfile(str(path))
    suites = list(xml)
    tests = [(g, t) for g in doc["grammars"] for t in g["tests"]]
    expect(len(suites) == len(tests), f"{len(suites)} suites for {len(tests)} test blocks")
    total = Counter()
    for suite, (grammar, test) in zip(suites, tests):
        expect(suite.name == test["name"], f"suite {suite.name!r} for test {test['name']!r}")
        cases = list(suite)
        if not grammar["ran"]:
            # The JSON lists no cases of a test that did not run; the
            # report has one per case written, each an error.
            expect(len(cases) == 2, f"{suite.name}: {len(cases)} cases, ERRING has 2")
            for case in cases:
                results = case.result
                expect(
                    len(results) == 1 and isinstance(results[0], junitparser.Error),
                    f"{case.name}: not run, but {results}",
                )
                expect(results[0].message == grammar["reason"], f"reason {results[0].message!r}")
                expect("sum-not-one" in (results[0].text or ""), "the grammar's error is not shown")
            expect(
                (suite.tests, suite.failures, suite.errors) == (2, 0, 2),
                f"{suite.name}: counts {(suite.tests, suite.failures, suite.errors)}",
            )
            total.update(tests=suite.tests, failures=suite.failures, errors=suite.errors)
            continue
        expect(len(cases) == len(test["cases"]), f"{suite.name}: {len(cases)} cases")
        failed = sum(1 for c in test["cases"] if not c["passed"])
        errors = 0
        expect(
            (suite.tests, suite.failures, suite.errors, suite.skipped)
            == (len(cases), failed, errors, 0),
            f"{suite.name}: counts {(suite.tests, suite.failures, suite.errors, suite.skipped)}",
        )
        total.update(tests=suite.tests, failures=suite.failures, errors=suite.errors)
        for case, want in zip(cases, test["cases"]):
            written = f'{want["expect"]} "{want["sentence"]}"'
            if want.get("expected_tree"):
                written += f' as {want["expected_tree"]}'
            expect(case.name == written, f"case name {case.name!r}, expected {written!r}")
            expect(
                case.classname == f"{grammar['file']}/{test['name']}",
                f"classname {case.classname!r}",
            )
            expect(case._elem.get("file") == want["file"], f"file of {written}")
            expect(case._elem.get("line") == str(want["line"]), f"line of {written}")
            results = case.result
            if want["passed"]:
                expect(case.is_passed, f"{written} passed, but the report says {results}")
            else:
                expect(
                    len(results) == 1 and isinstance(results[0], junitparser.Failure),
                    f"{written}: failed, but {results}",
                )
                expect(results[0].message == want["failure"][0], f"message {results[0].message!r}")
                expect(
                    results[0].text == "\n".join(want["failure"]),
                    f"{written}: failure text {results[0].text!r}, expected {want['failure']!r}",
                )
    expect(
        (xml.tests, xml.failures, xml.errors) == (total["tests"], total["failures"], total["errors"]),
        f"totals {(xml.tests, xml.failures, xml.errors)} against the suites' {dict(total)}",
    )
    expect(total["failures"] == 2 and total["errors"] == 2, f"expected 2 failures, 2 errors: {dict(total)}")
    print(f"junit: {len(suites)} suites, {total['tests']} cases read back")


def default_binary():
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    return target / "debug" / "trellis"


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--trellis", type=Path, default=default_binary())
    args = parser.parse_args()
    binary = args.trellis.resolve()
    if not binary.is_file():
        print(f"validate.py: no trellis binary at {binary}; build it first", file=sys.stderr)
        return 2
    try:
        with tempfile.TemporaryDirectory() as workdir:
            check_sarif(binary, workdir)
            check_github(binary)
            check_junit(binary, workdir)
    except Mismatch as e:
        print(f"validate.py: MISMATCH: {e}", file=sys.stderr)
        return 1
    print("validate.py: every report read back as expected")
    return 0


if __name__ == "__main__":
    sys.exit(main())
