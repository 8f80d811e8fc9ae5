// The TextMate grammar, run by the editor's own engine (vscode-textmate
// with the Oniguruma regular expressions VS Code uses), over every example
// grammar; the scopes of each token are compared with reviewed snapshots
// in test/snapshots/. After a deliberate change, regenerate them with
// `UPDATE_SNAPSHOTS=1 npm test` and review the diff.

import { test } from "node:test";
import assert from "node:assert/strict";
import fs from "node:fs";
import path from "node:path";
import { createRequire } from "node:module";
import { fileURLToPath } from "node:url";
import vsctm from "vscode-textmate";
import oniguruma from "vscode-oniguruma";

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, "../../..");
const require = createRequire(import.meta.url);

async function registry() {
  const wasm = fs.readFileSync(require.resolve("vscode-oniguruma/release/onig.wasm"));
  await oniguruma.loadWASM(wasm.buffer.slice(wasm.byteOffset, wasm.byteOffset + wasm.byteLength));
  return new vsctm.Registry({
    onigLib: Promise.resolve({
      createOnigScanner: (patterns) => new oniguruma.OnigScanner(patterns),
      createOnigString: (s) => new oniguruma.OnigString(s),
    }),
    loadGrammar: async (scopeName) => {
      if (scopeName !== "source.trellis") {
        return null;
      }
      const file = path.join(here, "../syntaxes/trellis.tmLanguage.json");
      return vsctm.parseRawGrammar(fs.readFileSync(file, "utf8"), file);
    },
  });
}

/** Every grammar the project ships: the examples and `trellis init`'s. */
function exampleFiles() {
  const dirs = [path.join(root, "examples"), path.join(root, "cli/src/init")];
  return dirs.flatMap((dir) =>
    fs
      .readdirSync(dir)
      .filter((f) => f.endsWith(".trellis"))
      .sort()
      .map((f) => path.join(dir, f)),
  );
}

/** One line per token: `line:column text → scopes` (the root scope left out). */
function scopesOf(grammar, text) {
  const out = [];
  let state = vsctm.INITIAL;
  text.split(/\r?\n/).forEach((line, n) => {
    const result = grammar.tokenizeLine(line, state);
    for (const token of result.tokens) {
      const piece = line.slice(token.startIndex, token.endIndex);
      if (piece.trim() === "") {
        continue;
      }
      const scopes = token.scopes.filter((s) => s !== "source.trellis").join(" ");
      out.push(`${n + 1}:${token.startIndex + 1} ${JSON.stringify(piece)} → ${scopes || "(none)"}`);
    }
    state = result.ruleStack;
  });
  return out.join("\n") + "\n";
}

const reg = await registry();
const grammar = await reg.loadGrammar("source.trellis");

for (const file of exampleFiles()) {
  const name = path.basename(file);
  test(`scopes of ${path.relative(root, file)} match the reviewed snapshot`, () => {
    const actual = scopesOf(grammar, fs.readFileSync(file, "utf8"));
    const snapshot = path.join(here, "snapshots", `${path.basename(path.dirname(file))}-${name}.scopes`);
    if (process.env.UPDATE_SNAPSHOTS === "1") {
      fs.writeFileSync(snapshot, actual);
    }
    assert.ok(fs.existsSync(snapshot), `no snapshot ${snapshot}: run UPDATE_SNAPSHOTS=1 npm test and review it`);
    assert.equal(actual, fs.readFileSync(snapshot, "utf8"));
  });
}

test("the kinds of token a grammar writer sees are told apart", () => {
  const text = [
    "## A doc comment",
    "grammar harbour",
    "start Request",
    'use "lexicon.trellis"',
    "Request relative {",
    '  3  Kind "ticket"  # a comment',
    '  1/2 "a \\" quote" | 45% Kind',
    "}",
    'test "orders" {',
    '  accept "day ticket" as (Request (Kind "day") "ticket")',
    '  reject "ticket day"',
    "}",
  ].join("\n");
  const lines = scopesOf(grammar, text).split("\n");
  const scope = (where, piece) => {
    const line = lines.find((l) => l.startsWith(`${where} ${JSON.stringify(piece)}`));
    assert.ok(line, `no token ${piece} at ${where}:\n${lines.join("\n")}`);
    return line.split(" → ")[1];
  };
  assert.match(scope("1:1", "## A doc comment"), /comment\.line\.documentation/);
  assert.match(scope("2:1", "grammar"), /keyword/);
  assert.match(scope("3:7", "Request"), /entity\.name\.type\.start/);
  assert.match(scope("5:1", "Request"), /entity\.name\.type\.block/);
  assert.match(scope("5:9", "relative"), /storage\.modifier\.relative/);
  assert.match(scope("6:3", "3"), /constant\.numeric\.weight/);
  assert.match(scope("6:6", "Kind"), /variable\.other\.symbol/);
  assert.match(scope("6:21", "# a comment"), /comment\.line\.number-sign/);
  assert.match(scope("7:3", "1/2"), /constant\.numeric\.weight/);
  assert.match(scope("7:10", '\\"'), /constant\.character\.escape/);
  assert.match(scope("7:22", "45%"), /constant\.numeric\.weight/);
  assert.match(scope("10:3", "accept"), /keyword/);
  assert.match(scope("10:27", "Request"), /entity\.name\.tag\.category/);
});
