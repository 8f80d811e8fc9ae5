// Finding and starting `trellis lsp`.

import * as fs from "fs";
import * as path from "path";
import * as vscode from "vscode";
import { Executable } from "vscode-languageclient/node";

/** The configured `trellis` program, resolved on PATH when it is a bare
 * name; `undefined` when it cannot be found. */
export function findServer(configured: string): string | undefined {
  if (configured.includes(path.sep) || path.isAbsolute(configured)) {
    return isExecutable(configured) ? configured : undefined;
  }
  const dirs = (process.env.PATH ?? "").split(path.delimiter).filter((d) => d !== "");
  for (const dir of dirs) {
    const candidate = path.join(dir, configured);
    if (isExecutable(candidate)) {
      return candidate;
    }
  }
  return undefined;
}

function isExecutable(file: string): boolean {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return fs.statSync(file).isFile();
  } catch {
    return false;
  }
}

/** How to run the server, or `undefined` after telling the user why not. */
export async function serverExecutable(extensionUri: vscode.Uri): Promise<Executable | undefined> {
  const config = vscode.workspace.getConfiguration("trellis");
  const configured = config.get<string>("server.path", "trellis");
  const extra = config.get<string[]>("server.extraArgs", []);
  const found = findServer(configured);
  if (found === undefined) {
    const open = "Installation instructions";
    const settings = "Open settings";
    const choice = await vscode.window.showErrorMessage(
      `trellis: cannot find the program \`${configured}\` to start the language server. ` +
        "Install trellis (cargo install --path cli from its repository) or set trellis.server.path.",
      open,
      settings,
    );
    if (choice === open) {
      // The extension's own README says how to install the server.
      await vscode.commands.executeCommand("markdown.showPreview", vscode.Uri.joinPath(extensionUri, "README.md"));
    } else if (choice === settings) {
      await vscode.commands.executeCommand("workbench.action.openSettings", "trellis.server.path");
    }
    return undefined;
  }
  return { command: found, args: ["lsp", ...extra] };
}
