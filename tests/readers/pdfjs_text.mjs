// Prints the text pdf.js (npm pdfjs-dist, pinned in package.json) extracts from a PDF:
// per page, item strings in getTextContent order, a newline after items marked hasEOL,
// pages separated by form feed. Usage: node pdfjs_text.mjs FILE.pdf (NODE_PATH = node_modules).
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { pathToFileURL } from "node:url";

// pdf.js 5+ uses Promise.withResolvers (Node 22); Debian's and this machine's Node 20 lack it.
if (!Promise.withResolvers) {
  Promise.withResolvers = function () {
    let resolve, reject;
    const promise = new Promise((res, rej) => { resolve = res; reject = rej; });
    return { promise, resolve, reject };
  };
}
const require = createRequire(process.env.NODE_PATH + "/");
const entry = require.resolve("pdfjs-dist/legacy/build/pdf.mjs");
const pdfjs = await import(pathToFileURL(entry).href);
const data = new Uint8Array(readFileSync(process.argv[2]));
const doc = await pdfjs.getDocument({ data, verbosity: 0, isEvalSupported: false }).promise;
const pages = [];
for (let i = 1; i <= doc.numPages; i++) {
  const page = await doc.getPage(i);
  const content = await page.getTextContent();
  pages.push(content.items.map((it) => (it.str ?? "") + (it.hasEOL ? "\n" : "")).join(""));
}
process.stdout.write(pages.join("\f"));
