// The HTML of the parse result panel. Pure (no `vscode` import) so that it
// can be rendered and screenshotted outside the editor.

import type { SentenceParse } from "./protocol";

/** Six significant digits, as the server and the command line write them. */
export function probability(p: number): string {
  if (p === 0) {
    return "0";
  }
  if (Math.abs(p) < 1e-4) {
    const [mantissa, exponent] = p.toExponential(5).split("e");
    return `${trimZeros(mantissa ?? "")}e${exponent ?? ""}`;
  }
  const magnitude = Math.floor(Math.log10(Math.abs(p)));
  const decimals = magnitude >= 5 ? 0 : 5 - magnitude;
  return trimZeros(p.toFixed(decimals));
}

function trimZeros(s: string): string {
  return s.includes(".") ? s.replace(/0+$/, "").replace(/\.$/, "") : s;
}

export function escapeHtml(text: string): string {
  return text
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;");
}

/** Options of the page: the nonce of its one style element and the
 * webview's own source for the content security policy. */
export interface PageOptions {
  nonce: string;
  cspSource: string;
}

/** One sentence's section: picture, numbers, or why it did not parse. */
function section(result: SentenceParse, nonce: string): string {
  const head = `<h2>\u201c${escapeHtml(result.sentence)}\u201d</h2>`;
  if (result.error !== null) {
    return `<section class="failed">${head}<p class="why">Not parsed: ${escapeHtml(result.error)}</p></section>`;
  }
  if (!result.parsed) {
    const why = result.explanation ?? "the grammar has no tree for it";
    return `<section class="failed">${head}<p>No parse.</p><pre class="why">${escapeHtml(why)}</pre></section>`;
  }
  const facts: string[] = [];
  if (result.probability !== null) {
    facts.push(`<dt>best tree</dt><dd>p = ${probability(result.probability)}</dd>`);
  }
  if (result.sentenceProbability !== null) {
    facts.push(`<dt>sentence</dt><dd>p = ${probability(result.sentenceProbability)} (all its trees)</dd>`);
  }
  if (result.parseCount !== null) {
    facts.push(`<dt>trees</dt><dd>${escapeHtml(result.parseCount)}</dd>`);
  }
  // The picture is SVG drawn by the trellis server from the grammar; it is
  // inserted as markup, the one place the page takes markup from outside.
  // Its one style element gets the page's nonce, which the content
  // security policy requires of every style.
  const picture =
    result.picture !== undefined
      ? `<div class="picture">${result.picture.replace("<style>", `<style nonce="${nonce}">`)}</div>`
      : "";
  const tree = result.tree !== null ? `<pre class="brackets">${escapeHtml(result.tree)}</pre>` : "";
  return `<section class="parsed">${head}${picture}<dl>${facts.join("")}</dl>${tree}</section>`;
}

/** The whole page for the results of one `Parse sentence…`. */
export function parsePage(results: SentenceParse[], options: PageOptions): string {
  const csp = [
    "default-src 'none'",
    `style-src 'nonce-${options.nonce}'`,
    `img-src ${options.cspSource} data:`,
  ].join("; ");
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>trellis parse</title>
<style nonce="${options.nonce}">
  body { font-family: var(--vscode-font-family, sans-serif); color: var(--vscode-foreground, #1f2328); background: var(--vscode-editor-background, #ffffff); padding: 0 1em; }
  h2 { font-size: 1.1em; font-weight: 600; }
  .picture { overflow-x: auto; }
  dl { display: grid; grid-template-columns: max-content auto; gap: 0.2em 1em; }
  dt { opacity: 0.75; }
  dd { margin: 0; font-family: var(--vscode-editor-font-family, monospace); }
  pre { white-space: pre-wrap; font-family: var(--vscode-editor-font-family, monospace); }
  .failed .why { color: var(--vscode-errorForeground, #b42318); }
</style>
</head>
<body>
${results.map((r) => section(r, options.nonce)).join("\n")}
</body>
</html>
`;
}
