#!/usr/bin/env python3
"""The tree-sitter grammar against trellis's own parser, file by file.

For every bundled grammar (examples/*.trellis, cli/src/init/*.trellis),
every input and output of the formatter's cases
(grammar-lang/tests/data/format_cases.txt) and every text of
test/syntax_cases.txt (mistakes made while typing):

- trellis's parser (`trellis check --format json`) decides whether the text
  has syntax errors (diagnostic code `syntax`);
- `tree-sitter parse` must agree: a tree without ERROR or MISSING nodes for
  a text trellis reads cleanly, a tree with one for a text it does not
  (error tolerance: the broken text still gets a tree, and the declarations
  around the error are still there).

Prints one line per text and closes with `N passed, N failed`; exits 1 on
any disagreement.

Usage: agree.py --tree-sitter BIN --trellis BIN  (run from the repository root)
"""

import argparse
import json
import os
import re
import subprocess
import sys
import tempfile

GRAMMAR_DIR = "editors/tree-sitter-trellis"


def bundled_files():
    files = []
    for folder in ("examples", "cli/src/init"):
        files += sorted(
            os.path.join(folder, name)
            for name in os.listdir(folder)
            if name.endswith(".trellis")
        )
    return files


def format_cases(path, out_dir):
    """Writes each case's input and output to files of their own."""
    text = open(path, encoding="utf-8").read()
    written = []
    for case in re.split(r"^=== ", text, flags=re.M)[1:]:
        header, _, body = case.partition("\n")
        name = re.sub(r"[^A-Za-z0-9]+", "_", header).strip("_")[:60]
        before, sep, after = body.partition("\n---\n")
        if not sep:
            raise SystemExit(f"{path}: case {header!r} has no `---` line")
        for kind, part in (("in", before + "\n"), ("out", after.rstrip("\n") + "\n")):
            file = os.path.join(out_dir, f"{len(written):03}_{name}.{kind}.trellis")
            with open(file, "w", encoding="utf-8") as f:
                f.write(part)
            written.append(file)
    return written


def syntax_cases(path, out_dir):
    """Writes each text of syntax_cases.txt to a file of its own."""
    text = open(path, encoding="utf-8").read()
    written = []
    for case in re.split(r"^=== ", text, flags=re.M)[1:]:
        header, _, body = case.partition("\n")
        name = re.sub(r"[^A-Za-z0-9]+", "_", header).strip("_")[:60]
        file = os.path.join(out_dir, f"case_{len(written):03}_{name}.trellis")
        with open(file, "w", encoding="utf-8") as f:
            f.write(body.rstrip("\n") + "\n")
        written.append(file)
    return written


def trellis_syntax_errors(trellis, file):
    """Lines (1-based) of the syntax errors trellis's parser finds in file."""
    run = subprocess.run(
        [trellis, "check", "--format", "json", file],
        capture_output=True,
        text=True,
    )
    try:
        report = json.loads(run.stdout)
    except json.JSONDecodeError:
        raise SystemExit(f"trellis check {file}: no JSON report\n{run.stderr}")
    name = os.path.basename(file)
    return [
        d["line"]
        for d in report["diagnostics"]
        if d["code"] == "syntax" and os.path.basename(d["file"]) == name
    ]


def tree_sitter_tree(tree_sitter, file):
    """The syntax tree tree-sitter builds for file, as an S-expression, and
    whether it has an error. The S-expression leaves out hidden nodes, so a
    missing newline (a hidden token) shows only in the concrete tree, where
    `•` marks each node that has an error inside."""
    def parse(*options):
        run = subprocess.run(
            [tree_sitter, "parse", *options, "--grammar-path", GRAMMAR_DIR, file],
            capture_output=True,
            text=True,
        )
        if "source_file" not in run.stdout.split("\n", 1)[0]:
            raise SystemExit(f"tree-sitter parse {file}: no tree\n{run.stdout}{run.stderr}")
        return run.stdout

    tree = parse()
    concrete = re.sub(r"\x1b\[[0-9;]*m", "", parse("--cst"))
    root = concrete.split("\n", 1)[0]
    return tree, "•source_file" in root or "(ERROR" in tree or "(MISSING" in tree


def lost_blocks(file, tree, error_lines):
    """Lines (1-based) of the block headers, away from trellis's syntax
    errors, where tree-sitter's tree has no block: error recovery must keep
    the intact blocks of a broken file."""
    header = re.compile(r"^[^\s#\"{}]+(\s+relative)?\s*\{")
    lines = open(file, encoding="utf-8").read().split("\n")
    lost = []
    for number, line in enumerate(lines, start=1):
        if header.match(line) and number not in error_lines:
            if f"(block [{number - 1}, 0]" not in tree:
                lost.append(number)
    return lost


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--tree-sitter", required=True)
    parser.add_argument("--trellis", required=True)
    args = parser.parse_args()

    passed = failed = 0
    with tempfile.TemporaryDirectory() as tmp:
        files = (
            bundled_files()
            + format_cases("grammar-lang/tests/data/format_cases.txt", tmp)
            + syntax_cases(os.path.join(GRAMMAR_DIR, "test/syntax_cases.txt"), tmp)
        )
        for file in files:
            errors = trellis_syntax_errors(args.trellis, file)
            tree, broken = tree_sitter_tree(args.tree_sitter, file)
            shown = os.path.relpath(file, tmp) if file.startswith(tmp) else file
            # Recovery keeps a broken example's intact blocks. (Not asked of
            # every typing mistake: after a block whose `}` is missing,
            # trellis ends the block where the next one starts, tree-sitter
            # takes the rest of the file as that block's error.)
            bundled = not file.startswith(tmp)
            lost = lost_blocks(file, tree, errors) if broken and bundled else []
            if bool(errors) == broken and not lost:
                passed += 1
                state = f"syntax errors at lines {errors}" if errors else "clean"
                print(f"ok    {shown}: {state} for both")
            elif lost:
                failed += 1
                print(f"FAIL  {shown}: no block node for the blocks at lines {lost}\n{tree}")
            else:
                failed += 1
                print(
                    f"FAIL  {shown}: trellis finds syntax errors at lines {errors}, "
                    f"tree-sitter {'finds' if broken else 'does not find'} any\n{tree}"
                )
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
