#!/usr/bin/env bash
# The hooks of .pre-commit-hooks.yaml, run by the pre-commit framework
# itself (https://pre-commit.com, from PyPI) in a temporary repository: a
# clean grammar is committed, a broken one is refused with its finding, a
# badly laid out one is refused by the layout hook.
#
# Needs: git, pre-commit on PATH, and a built trellis (target/debug or
# TRELLIS_BIN_DIR). Run from anywhere; CI runs it after the cargo tests.
set -euo pipefail

root="$(cd "$(dirname "$0")/../.." && pwd)"
bin_dir="${TRELLIS_BIN_DIR:-$root/target/debug}"
if [ ! -x "$bin_dir/trellis" ]; then
  echo "no trellis binary in $bin_dir; build it first (cargo build -p trellis-cli)" >&2
  exit 2
fi
export PATH="$bin_dir:$PATH"
command -v pre-commit >/dev/null || { echo "pre-commit is not installed (pip install pre-commit)" >&2; exit 2; }

work="$(mktemp -d "${TMPDIR:-/tmp}/trellis-hooks.XXXXXX")"
trap 'rm -rf "$work"' EXIT
export PRE_COMMIT_HOME="$work/cache"

# The hooks repository: this checkout as committed (the framework clones it
# at a revision, as it would clone trellis from its public address).
rev="$(git -C "$root" rev-parse HEAD)"

repo="$work/grammars"
mkdir -p "$repo"
cd "$repo"
git init --quiet --initial-branch=main
git config user.name "Harbour Office"
git config user.email "office@harbour.example"
git config commit.gpgsign false
cat > .pre-commit-config.yaml <<YAML
repos:
  - repo: $root
    rev: $rev
    hooks:
      - id: trellis-check
      - id: trellis-fmt
      - id: trellis-test
YAML
git add .pre-commit-config.yaml
git commit --quiet --no-verify -m "hook configuration"
pre-commit install --install-hooks >/dev/null

fail() { echo "FAILED: $*" >&2; exit 1; }

# 1. A clean grammar in canonical layout, with a lexicon and a test.
mkdir -p grammars
printf 'start Request\nuse "words.trellis"\n\nRequest {\n  Kind "ticket"\n}\n\ntest "tickets" {\n  accept "day ticket"\n}\n' > grammars/kiosk.trellis
printf 'Kind { "day" | "return" }\n' > grammars/words.trellis
git add grammars
git commit --quiet -m "kiosk" > "$work/out1" 2>&1 || { cat "$work/out1"; fail "a clean grammar was refused"; }
echo "ok: a clean grammar is committed"

# 2. A grammar whose weights sum to 0.9 is refused, with the finding shown.
printf 'start S\n\nS {\n  0.5  "a"\n  0.4  "b"\n}\n' > grammars/harbour.trellis
git add grammars/harbour.trellis
if git commit --quiet -m "harbour" > "$work/out2" 2>&1; then
  cat "$work/out2"; fail "a broken grammar was committed"
fi
grep -q "sum-not-one" "$work/out2" || { cat "$work/out2"; fail "the finding was not shown"; }
echo "ok: a broken grammar is refused with its finding"

# 3. Fixed weights but a layout out of canon: the layout hook refuses it.
printf 'start S\nS {   0.5 "a"|0.5 "b" }\n' > grammars/harbour.trellis
git add grammars/harbour.trellis
if git commit --quiet -m "harbour" > "$work/out3" 2>&1; then
  cat "$work/out3"; fail "a file out of canonical layout was committed"
fi
grep -q "trellis fmt --check" "$work/out3" || { cat "$work/out3"; fail "the layout hook did not run"; }
echo "ok: a file out of canonical layout is refused"

# 4. The same file formatted is committed.
trellis fmt grammars/harbour.trellis
git add grammars/harbour.trellis
git commit --quiet -m "harbour" > "$work/out4" 2>&1 || { cat "$work/out4"; fail "the formatted grammar was refused"; }
echo "ok: the formatted grammar is committed"
