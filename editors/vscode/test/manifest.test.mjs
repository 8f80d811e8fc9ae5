// The packaged extension (.vsix, made by `npm run package` with the
// official packaging tool @vscode/vsce) holds a manifest that activates on
// trellis files, contributes the language, its grammar and the commands,
// and carries the compiled code and its runtime dependency.

import { test } from "node:test";
import assert from "node:assert/strict";
import path from "node:path";
import { fileURLToPath } from "node:url";
import AdmZip from "adm-zip";

const here = path.dirname(fileURLToPath(import.meta.url));
const vsix = path.join(here, "..", "trellis-grammars.vsix");

test("the packaged manifest activates on trellis files and contributes what the extension uses", () => {
  let zip;
  try {
    zip = new AdmZip(vsix);
  } catch (e) {
    assert.fail(`cannot open ${vsix} (run npm run package first): ${e}`);
  }
  const entries = new Set(zip.getEntries().map((e) => e.entryName));
  const manifest = JSON.parse(zip.readAsText("extension/package.json"));

  assert.ok(manifest.activationEvents.includes("onLanguage:trellis"));
  const language = manifest.contributes.languages.find((l) => l.id === "trellis");
  assert.deepEqual(language.extensions, [".trellis"]);
  assert.ok(entries.has(`extension/${path.posix.normalize(language.configuration)}`));

  const grammar = manifest.contributes.grammars.find((g) => g.language === "trellis");
  assert.equal(grammar.scopeName, "source.trellis");
  assert.ok(entries.has(`extension/${path.posix.normalize(grammar.path)}`), "the TextMate grammar is packaged");

  const commands = manifest.contributes.commands.map((c) => c.command).sort();
  assert.deepEqual(commands, [
    "trellis.editor.parseSentence",
    "trellis.editor.restartServer",
    "trellis.editor.sampleSentences",
    "trellis.editor.showServerLog",
  ]);
  assert.equal(manifest.contributes.configuration.properties["trellis.server.path"].default, "trellis");

  // The entry point is compiled and packaged with the client library.
  assert.ok(entries.has(`extension/${path.posix.normalize(manifest.main)}`), "the compiled entry point");
  assert.ok(entries.has("extension/node_modules/vscode-languageclient/package.json"));
  // Sources, tests and development tools stay out.
  assert.ok(![...entries].some((e) => e.startsWith("extension/src/") || e.startsWith("extension/test/")));
  assert.ok(![...entries].some((e) => e.startsWith("extension/node_modules/typescript/")));
});
