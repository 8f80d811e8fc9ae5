"""trellis eval against an independent PARSEVAL implementation.

PYEVALB (PyPI, a Python port of the EVALB scorer) scores random pairs of
trees over the same words; `trellis eval --format json` must give the same
matched, gold and predicted bracket counts and crossing brackets for every
pair, and the same totals.

The pairs have no unary phrasal nodes, so no tree holds the same labelled
span twice: PYEVALB matches brackets as sets and trellis (like EVALB) as
multisets, and the two agree exactly when there are no repeats.

Usage: compare.py --trellis PATH [--pairs N] [--seed S]
"""

import argparse
import json
import random
import subprocess
import sys
import tempfile
from pathlib import Path

from PYEVALB import parser, scorer

LABELS = ["S", "NP", "VP", "PP", "ADJP", "SBAR"]
TAGS = ["DT", "NN", "VB", "IN", "JJ", "CD"]
WORDS = ["ferry", "leaves", "at", "nine", "two", "tickets", "oxna", "daily"]


def random_tree(rng, words, tags):
    """A random bracketing of words[0..n] above their pre-terminals: every
    phrasal node has at least two children (no unary phrasal nodes)."""

    def build(lo, hi, root=False):
        n = hi - lo
        if n == 1 and not root:
            return f"({tags[lo]} {words[lo]})"
        # Split [lo, hi) into 2..min(4, n) consecutive non-empty parts.
        if n == 1:
            return f"({rng.choice(LABELS)} ({tags[lo]} {words[lo]}) )".replace(" )", ")")
        parts = rng.randint(2, min(4, n))
        cuts = sorted(rng.sample(range(lo + 1, hi), parts - 1))
        bounds = [lo] + cuts + [hi]
        children = " ".join(build(a, b) for a, b in zip(bounds, bounds[1:]))
        return f"({rng.choice(LABELS)} {children})"

    return build(0, len(words), root=True)


def main():
    args = argparse.ArgumentParser()
    args.add_argument("--trellis", required=True)
    args.add_argument("--pairs", type=int, default=400)
    args.add_argument("--seed", type=int, default=20261203)
    opts = args.parse_args()
    rng = random.Random(opts.seed)

    gold_lines, test_lines = [], []
    for _ in range(opts.pairs):
        n = rng.randint(2, 12)
        words = [rng.choice(WORDS) for _ in range(n)]
        gold_tags = [rng.choice(TAGS) for _ in range(n)]
        test_tags = [rng.choice(TAGS) for _ in range(n)]
        seed = rng.random()
        gold_lines.append(random_tree(random.Random(seed), words, gold_tags))
        # A third of the predictions share the gold bracketing (only the
        # tags differ), so matching is exercised as well as mismatching.
        test_seed = seed if rng.random() < 1 / 3 else rng.random()
        test_lines.append(random_tree(random.Random(test_seed), words, test_tags))

    with tempfile.TemporaryDirectory() as tmp:
        gold_file = Path(tmp, "gold.mrg")
        test_file = Path(tmp, "test.mrg")
        gold_file.write_text("\n".join(gold_lines) + "\n")
        test_file.write_text("\n".join(test_lines) + "\n")
        out = subprocess.run(
            [opts.trellis, "eval", str(gold_file), str(test_file), "--format", "json"],
            check=True,
            capture_output=True,
            text=True,
        )
    ours = json.loads(out.stdout)

    theirs = scorer.Scorer()
    totals = {"matched": 0, "gold": 0, "predicted": 0}
    failures = 0
    for i, (g, t) in enumerate(zip(gold_lines, test_lines)):
        r = theirs.score_trees(parser.create_from_bracket_string(g), parser.create_from_bracket_string(t))
        mine = ours["sentences"][i]
        expected = (r.matched_brackets, r.gold_brackets, r.test_brackets, r.cross_brackets)
        got = (mine["matched"], mine["gold"], mine["predicted"], mine["crossing"])
        if expected != got:
            failures += 1
            print(f"pair {i + 1}: PYEVALB {expected}, trellis {got}\n  gold {g}\n  test {t}", file=sys.stderr)
        totals["matched"] += r.matched_brackets
        totals["gold"] += r.gold_brackets
        totals["predicted"] += r.test_brackets
    for key, value in totals.items():
        if ours["total"][key] != value:
            failures += 1
            print(f"total {key}: PYEVALB {value}, trellis {ours['total'][key]}", file=sys.stderr)
    if failures:
        sys.exit(f"{failures} disagreements between trellis eval and PYEVALB")
    print(f"trellis eval agrees with PYEVALB on {len(gold_lines)} random tree pairs "
          f"({totals['gold']} gold, {totals['predicted']} predicted, {totals['matched']} matched brackets)")


if __name__ == "__main__":
    main()
