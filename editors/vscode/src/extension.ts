// The trellis extension: starts `trellis lsp` for `.trellis` files and adds
// the editor's side of its commands — a parse result panel with the tree
// picture, sampled sentences in a new document, and grammar tests in the
// Testing view. Code lenses from the server are routed to these.

import * as crypto from "crypto";
import * as vscode from "vscode";
import { LanguageClient, type LanguageClientOptions, RevealOutputChannelOn } from "vscode-languageclient/node";
import { parsePage } from "./parseView";
import { PARSE, RUN_TEST, SAMPLE, type ParseParams, type ParseResult, type SampleParams, type SampleResult } from "./protocol";
import { serverExecutable } from "./server";
import { GrammarTests } from "./testing";

let client: LanguageClient | undefined;
let output: vscode.OutputChannel | undefined;
let panel: vscode.WebviewPanel | undefined;

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  output = vscode.window.createOutputChannel("trellis language server");
  const tests = new GrammarTests(() => client);
  context.subscriptions.push(
    output,
    tests,
    vscode.commands.registerCommand("trellis.editor.parseSentence", (uri?: string, sentence?: string) =>
      parseSentence(context, uri, sentence),
    ),
    vscode.commands.registerCommand("trellis.editor.sampleSentences", (uri?: string) => sampleSentences(uri)),
    vscode.commands.registerCommand("trellis.editor.restartServer", () => restart(context, tests)),
    vscode.commands.registerCommand("trellis.editor.showServerLog", () => {
      output?.show(true);
    }),
    vscode.commands.registerCommand("trellis.editor.runTest", (uri?: string) => runTestsOf(uri)),
  );
  await start(context, tests);
}

export async function deactivate(): Promise<void> {
  await client?.stop();
  client = undefined;
}

/** Starts the server; false when it cannot be found (the user was told). */
async function start(context: vscode.ExtensionContext, tests: GrammarTests): Promise<boolean> {
  const executable = await serverExecutable(context.extensionUri);
  if (executable === undefined || output === undefined) {
    return false;
  }
  const options: LanguageClientOptions = {
    documentSelector: [{ language: "trellis" }],
    outputChannel: output,
    revealOutputChannelOn: RevealOutputChannelOn.Never,
    middleware: {
      // The server's lenses carry its own commands; in VS Code they open
      // the parse panel, a document of samples, or the Testing view.
      provideCodeLenses: async (document, token, next) => {
        const lenses = (await next(document, token)) ?? [];
        for (const lens of lenses) {
          const command = lens.command;
          if (command === undefined) {
            continue;
          }
          const uri = document.uri.toString();
          if (command.command === PARSE) {
            lens.command = { ...command, command: "trellis.editor.parseSentence", arguments: [uri] };
          } else if (command.command === SAMPLE) {
            lens.command = { ...command, command: "trellis.editor.sampleSentences", arguments: [uri] };
          } else if (command.command === RUN_TEST) {
            lens.command = { ...command, command: "trellis.editor.runTest", arguments: [uri] };
          }
        }
        return lenses;
      },
    },
  };
  client = new LanguageClient("trellis", "trellis language server", executable, options);
  await client.start();
  for (const doc of vscode.workspace.textDocuments) {
    await tests.discover(doc);
  }
  return true;
}

async function restart(context: vscode.ExtensionContext, tests: GrammarTests): Promise<void> {
  if (client !== undefined) {
    await client.stop();
    client = undefined;
  }
  if (await start(context, tests)) {
    void vscode.window.showInformationMessage("trellis: the language server was restarted.");
  }
}

/** The grammar to work on: the given one, or the active trellis editor's. */
function grammarUri(uri?: string): string | undefined {
  if (uri !== undefined) {
    return uri;
  }
  const doc = vscode.window.activeTextEditor?.document;
  if (doc?.languageId === "trellis") {
    return doc.uri.toString();
  }
  void vscode.window.showWarningMessage("trellis: open a .trellis grammar first.");
  return undefined;
}

function running(): LanguageClient | undefined {
  if (client === undefined) {
    void vscode.window.showErrorMessage("trellis: the language server is not running (see its log).");
  }
  return client;
}

async function executeCommand<R>(c: LanguageClient, command: string, argument: object): Promise<R> {
  return c.sendRequest<R>("workspace/executeCommand", { command, arguments: [argument] });
}

async function parseSentence(context: vscode.ExtensionContext, uri?: string, given?: string): Promise<void> {
  const grammar = grammarUri(uri);
  const c = running();
  if (grammar === undefined || c === undefined) {
    return;
  }
  const sentence =
    given ??
    (await vscode.window.showInputBox({
      title: "Parse sentence",
      prompt: "A sentence to parse with this grammar (words separated by spaces)",
      placeHolder: "two return tickets to marrowby please",
    }));
  if (sentence === undefined || sentence.trim() === "") {
    return;
  }
  try {
    const params: ParseParams = { uri: grammar, sentence, kbest: 1, picture: true };
    const result = await executeCommand<ParseResult>(c, PARSE, params);
    showParse(context, result);
  } catch (e) {
    void vscode.window.showErrorMessage(`trellis: ${e instanceof Error ? e.message : String(e)}`);
  }
}

function showParse(context: vscode.ExtensionContext, result: ParseResult): void {
  if (panel === undefined) {
    panel = vscode.window.createWebviewPanel("trellisParse", "trellis parse", vscode.ViewColumn.Beside, {
      enableScripts: false,
      localResourceRoots: [],
    });
    panel.onDidDispose(() => (panel = undefined), null, context.subscriptions);
  }
  const nonce = crypto.randomBytes(16).toString("base64");
  panel.webview.html = parsePage(result.results, { nonce, cspSource: panel.webview.cspSource });
  panel.reveal(vscode.ViewColumn.Beside, true);
}

async function sampleSentences(uri?: string): Promise<void> {
  const grammar = grammarUri(uri);
  const c = running();
  if (grammar === undefined || c === undefined) {
    return;
  }
  const count = vscode.workspace.getConfiguration("trellis").get<number>("sample.count", 20);
  // A fresh seed each time, written into the document so a draw can be repeated.
  const seed = crypto.randomInt(0, 2 ** 48);
  try {
    const params: SampleParams = { uri: grammar, count, seed };
    const result = await executeCommand<SampleResult>(c, SAMPLE, params);
    const name = vscode.Uri.parse(grammar).path.split("/").pop() ?? grammar;
    const lines = [`# ${result.samples.length} sentences sampled from ${name}, seed ${result.seed}`];
    lines.push(...result.samples.map((s) => s.sentence));
    const doc = await vscode.workspace.openTextDocument({ content: lines.join("\n") + "\n", language: "plaintext" });
    await vscode.window.showTextDocument(doc, { preview: false });
  } catch (e) {
    void vscode.window.showErrorMessage(`trellis: ${e instanceof Error ? e.message : String(e)}`);
  }
}

async function runTestsOf(uri?: string): Promise<void> {
  const grammar = grammarUri(uri);
  if (grammar === undefined) {
    return;
  }
  // The Testing view runs them, so results land at their lines.
  await vscode.commands.executeCommand("testing.runAll");
}
