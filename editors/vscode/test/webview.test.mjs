// The parse panel's page, with a real tree picture from the real server:
// `trellis lsp` (TRELLIS_BIN) is started, the ferry kiosk example opened
// and `trellis.parse` asked for a picture over JSON-RPC; the page the
// extension would show is built from that answer and drawn by headless
// Chromium (Debian's `chromium`), and the screenshot is checked.

import { test } from "node:test";
import assert from "node:assert/strict";
import { spawn, execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { createMessageConnection, StreamMessageReader, StreamMessageWriter } from "vscode-jsonrpc/node.js";
import { parsePage } from "../out/parseView.js";

const here = path.dirname(fileURLToPath(import.meta.url));
const examples = path.resolve(here, "../../../examples");

function trellisBinary() {
  const bin = process.env.TRELLIS_BIN;
  assert.ok(bin && fs.existsSync(bin), "set TRELLIS_BIN to a built trellis binary (cargo build -p trellis-cli)");
  return bin;
}

/** Asks the real server to parse `sentences` with a picture. */
async function parseWithServer(sentences) {
  const server = spawn(trellisBinary(), ["lsp"], { stdio: ["pipe", "pipe", "inherit"] });
  const connection = createMessageConnection(new StreamMessageReader(server.stdout), new StreamMessageWriter(server.stdin));
  connection.listen();
  try {
    const file = path.join(examples, "ferry_kiosk.trellis");
    const uri = pathToFileURL(file).toString();
    await connection.sendRequest("initialize", {
      processId: process.pid,
      rootUri: pathToFileURL(examples).toString(),
      capabilities: {},
    });
    await connection.sendNotification("initialized", {});
    await connection.sendNotification("textDocument/didOpen", {
      textDocument: { uri, languageId: "trellis", version: 1, text: fs.readFileSync(file, "utf8") },
    });
    const result = await connection.sendRequest("workspace/executeCommand", {
      command: "trellis.parse",
      arguments: [{ uri, sentences, picture: true }],
    });
    await connection.sendRequest("shutdown");
    await connection.sendNotification("exit");
    return result;
  } finally {
    connection.dispose();
    server.kill();
  }
}

test("the parse panel shows the server's tree picture, numbers and a failure's reason", async () => {
  const sentence = "two return tickets to tolsey";
  const result = await parseWithServer([sentence, "tickets two"]);
  const [ok, failed] = result.results;
  assert.equal(ok.parsed, true);
  assert.match(ok.picture, /^<svg /);
  assert.equal(failed.parsed, false);

  const html = parsePage(result.results, { nonce: "test-nonce", cspSource: "vscode-resource:" });
  // Every style element carries the nonce the content security policy asks.
  const styles = html.match(/<style[^>]*>/g);
  assert.equal(styles.length, 2);
  assert.ok(styles.every((s) => s.includes('nonce="test-nonce"')));
  assert.ok(html.includes(`\u201c${sentence}\u201d`));
  assert.ok(html.includes(">tolsey</text>"), "the picture's words are in the page");
  assert.match(html, /<dt>trees<\/dt><dd>\d+<\/dd>/);
  assert.match(html, /class="failed".*No parse/s);

  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "trellis-webview-"));
  const page = path.join(dir, "panel.html");
  fs.writeFileSync(page, html);
  const shot = path.join(dir, "panel.png");
  const [width, height] = [900, 700];
  execFileSync("chromium", [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--hide-scrollbars",
    `--user-data-dir=${path.join(dir, "profile")}`,
    `--window-size=${width},${height}`,
    `--screenshot=${shot}`,
    pathToFileURL(page).toString(),
  ], { stdio: "ignore" });
  const png = fs.readFileSync(shot);
  // PNG signature and IHDR size (the PNG specification, section 5).
  assert.deepEqual([...png.subarray(0, 8)], [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  assert.equal(png.readUInt32BE(16), width);
  assert.equal(png.readUInt32BE(20), height);
  // A blank page compresses to a few kilobytes at most; a drawn tree,
  // numbers and text do not.
  assert.ok(png.length > 8000, `the screenshot looks empty (${png.length} bytes)`);
  fs.rmSync(dir, { recursive: true, force: true });
});
