// Grammar tests in the editor's Testing view: every `test` block of an
// open grammar is a test item and its cases are children; running one asks
// the server (`trellis.runTest`) and marks each case passed or failed at
// its line, with the server's reason.
//
// Test blocks are found in the server's document symbols: a block is a
// symbol of kind Module whose children (its cases) are of kind Method
// (lsp/src/handlers/symbols.rs).

import * as vscode from "vscode";
import type { LanguageClient } from "vscode-languageclient/node";
import { RUN_TEST, type CaseReport, type RunTestParams, type RunTestResult, type TestReport } from "./protocol";

export class GrammarTests implements vscode.Disposable {
  private readonly controller: vscode.TestController;
  private readonly disposables: vscode.Disposable[] = [];

  constructor(private readonly client: () => LanguageClient | undefined) {
    this.controller = vscode.tests.createTestController("trellisGrammarTests", "trellis grammar tests");
    this.controller.createRunProfile("Run", vscode.TestRunProfileKind.Run, (request, token) => this.run(request, token), true);
    this.controller.resolveHandler = async (item) => {
      if (item === undefined) {
        for (const doc of vscode.workspace.textDocuments) {
          await this.discover(doc);
        }
      }
    };
    this.disposables.push(
      this.controller,
      vscode.workspace.onDidOpenTextDocument((doc) => void this.discover(doc)),
      vscode.workspace.onDidSaveTextDocument((doc) => void this.discover(doc)),
      vscode.workspace.onDidCloseTextDocument((doc) => {
        this.controller.items.delete(doc.uri.toString());
      }),
    );
  }

  dispose(): void {
    for (const d of this.disposables) {
      d.dispose();
    }
  }

  /** Rebuilds the test items of one grammar from its document symbols. */
  async discover(doc: vscode.TextDocument): Promise<void> {
    if (doc.languageId !== "trellis") {
      return;
    }
    const symbols = await vscode.commands.executeCommand<vscode.DocumentSymbol[] | undefined>(
      "vscode.executeDocumentSymbolProvider",
      doc.uri,
    );
    const blocks = (symbols ?? []).filter(
      (s) => s.kind === vscode.SymbolKind.Module && s.children.every((c) => c.kind === vscode.SymbolKind.Method),
    );
    const id = doc.uri.toString();
    if (blocks.length === 0) {
      this.controller.items.delete(id);
      return;
    }
    const file = this.controller.createTestItem(id, vscode.workspace.asRelativePath(doc.uri), doc.uri);
    for (const block of blocks) {
      const item = this.controller.createTestItem(`${id}#${block.name}`, block.name, doc.uri);
      item.range = block.selectionRange;
      for (const [n, c] of block.children.entries()) {
        const caseItem = this.controller.createTestItem(`${item.id}#${n}`, `${c.detail} \u201c${c.name}\u201d`, doc.uri);
        caseItem.range = c.selectionRange;
        item.children.add(caseItem);
      }
      file.children.add(item);
    }
    this.controller.items.add(file);
  }

  /** Runs the asked test blocks (a case runs its block; a file all of its). */
  private async run(request: vscode.TestRunRequest, token: vscode.CancellationToken): Promise<void> {
    const run = this.controller.createTestRun(request);
    const wanted: vscode.TestItem[] = [];
    if (request.include !== undefined) {
      wanted.push(...request.include);
    } else {
      this.controller.items.forEach((i) => wanted.push(i));
    }
    // Group by block: the server runs whole blocks.
    const blocks = new Map<string, vscode.TestItem>();
    for (const item of wanted) {
      const depth = item.id.split("#").length - 1;
      if (depth === 0) {
        item.children.forEach((b) => blocks.set(b.id, b));
      } else if (depth === 1) {
        blocks.set(item.id, item);
      } else if (item.parent !== undefined) {
        blocks.set(item.parent.id, item.parent);
      }
    }
    for (const block of blocks.values()) {
      if (token.isCancellationRequested || block.uri === undefined) {
        break;
      }
      block.children.forEach((c) => {
        run.started(c);
      });
      const client = this.client();
      if (client === undefined) {
        run.errored(block, new vscode.TestMessage("The trellis language server is not running."));
        continue;
      }
      const params: RunTestParams = { uri: block.uri.toString(), test: block.label };
      try {
        const result = await client.sendRequest<RunTestResult>(
          "workspace/executeCommand",
          { command: RUN_TEST, arguments: [params] },
          token,
        );
        const report = result.tests.find((t) => t.name === block.label);
        this.record(run, block, report);
      } catch (e) {
        run.errored(block, new vscode.TestMessage(e instanceof Error ? e.message : String(e)));
      }
    }
    run.end();
  }

  private record(run: vscode.TestRun, block: vscode.TestItem, report: TestReport | undefined): void {
    if (report === undefined) {
      run.errored(block, new vscode.TestMessage(`The server did not run the test \u201c${block.label}\u201d.`));
      return;
    }
    const items: vscode.TestItem[] = [];
    block.children.forEach((c) => items.push(c));
    report.cases.forEach((c, n) => {
      const item = items[n];
      if (item !== undefined) {
        this.recordCase(run, item, c);
      }
    });
    if (report.passed) {
      run.passed(block);
    } else {
      run.failed(block, new vscode.TestMessage(`${report.cases.filter((c) => !c.passed).length} case(s) failed`));
    }
  }

  private recordCase(run: vscode.TestRun, item: vscode.TestItem, report: CaseReport): void {
    if (report.passed) {
      run.passed(item);
      return;
    }
    const message = new vscode.TestMessage(report.failure.join("\n"));
    if (report.location !== null) {
      const { start, end } = report.location.range;
      message.location = new vscode.Location(
        vscode.Uri.parse(report.location.uri),
        new vscode.Range(start.line, start.character, end.line, end.character),
      );
    }
    run.failed(item, message);
  }
}
