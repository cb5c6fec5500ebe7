/**
 * A commit's diff for the commit page: git's unified diff parsed into files and lines, each line
 * coloured on the server by highlight.js 11 (the language from the file's extension; unknown ones
 * are escaped plain text). highlight.js escapes the text it wraps in its spans, so the HTML sent
 * holds no markup from the repository. Long diffs are cut at `limit` lines in all (the page offers
 * "show more"); binary files and very long lines are named, not shown.
 */
import hljs from "highlight.js/lib/core";
import bash from "highlight.js/lib/languages/bash";
import c from "highlight.js/lib/languages/c";
import cpp from "highlight.js/lib/languages/cpp";
import css from "highlight.js/lib/languages/css";
import fortran from "highlight.js/lib/languages/fortran";
import ini from "highlight.js/lib/languages/ini";
import javascript from "highlight.js/lib/languages/javascript";
import json from "highlight.js/lib/languages/json";
import julia from "highlight.js/lib/languages/julia";
import markdown from "highlight.js/lib/languages/markdown";
import matlab from "highlight.js/lib/languages/matlab";
import python from "highlight.js/lib/languages/python";
import rust from "highlight.js/lib/languages/rust";
import sql from "highlight.js/lib/languages/sql";
import typescript from "highlight.js/lib/languages/typescript";
import xml from "highlight.js/lib/languages/xml";
import yaml from "highlight.js/lib/languages/yaml";

const LANGS = { bash, c, cpp, css, fortran, ini, javascript, json, julia, markdown, matlab, python, rust, sql, typescript, xml, yaml };
for (const [name, lang] of Object.entries(LANGS)) if (!hljs.getLanguage(name)) hljs.registerLanguage(name, lang);

const BY_EXT: Record<string, keyof typeof LANGS> = {
  ts: "typescript", tsx: "typescript", mts: "typescript", cts: "typescript", js: "javascript", mjs: "javascript", cjs: "javascript", jsx: "javascript",
  json: "json", jsonc: "json", css: "css", md: "markdown", py: "python", sh: "bash", bash: "bash", yml: "yaml", yaml: "yaml", sql: "sql",
  html: "xml", xml: "xml", svg: "xml", c: "c", h: "c", cc: "cpp", cpp: "cpp", hpp: "cpp", cxx: "cpp", rs: "rust", jl: "julia", m: "matlab",
  f: "fortran", f90: "fortran", toml: "ini", ini: "ini",
};

/** The highlight.js language of a path, or null (shown as escaped plain text). */
export function languageOf(file: string): string | null {
  const ext = /\.([A-Za-z0-9]+)$/.exec(file)?.[1]?.toLowerCase();
  return ext ? (BY_EXT[ext] ?? null) : null;
}

export function escapeHtml(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&#39;");
}

/** Longest line coloured (characters); longer ones are cut with a note (minified files). */
const MAX_LINE = 2000;

export function highlightLine(text: string, lang: string | null): string {
  const cut = text.length > MAX_LINE ? text.slice(0, MAX_LINE) : text;
  const html = lang ? hljs.highlight(cut, { language: lang, ignoreIllegals: true }).value : escapeHtml(cut);
  return cut === text ? html : `${html}<span class="diff-cut"> … ${text.length - MAX_LINE} more characters</span>`;
}

export type DiffLineKind = "add" | "del" | "ctx" | "hunk";

export interface DiffLine {
  kind: DiffLineKind;
  oldNo: number | null;
  newNo: number | null;
  /** HTML: highlight.js spans around escaped text. */
  html: string;
}

export interface DiffFile {
  path: string;
  oldPath: string | null;
  status: "added" | "deleted" | "modified" | "renamed";
  binary: boolean;
  added: number;
  removed: number;
  lines: DiffLine[];
  /** Lines of this file not shown (the cap was reached). */
  hidden: number;
  language: string | null;
}

export interface ParsedDiff {
  files: DiffFile[];
  shownLines: number;
  totalLines: number;
}

const unquote = (p: string) => (p.startsWith('"') && p.endsWith('"') ? p.slice(1, -1).replace(/\\(.)/g, "$1") : p);

/** Parses `git diff` / `git show --format=` output (no colour, no external diff). */
export function parseDiff(text: string, limit = 600): ParsedDiff {
  const files: DiffFile[] = [];
  let f: DiffFile | null = null;
  let oldNo = 0;
  let newNo = 0;
  let shown = 0;
  let total = 0;
  for (const raw of text.split("\n")) {
    if (raw.startsWith("diff --git ")) {
      const m = /^diff --git (?:"?a\/)(.+?)"? (?:"?b\/)(.+?)"?$/.exec(raw);
      const p = m ? unquote(m[2]!) : raw.slice(11);
      f = { path: p, oldPath: null, status: "modified", binary: false, added: 0, removed: 0, lines: [], hidden: 0, language: languageOf(p) };
      files.push(f);
      continue;
    }
    if (!f) continue;
    if (raw.startsWith("new file mode")) f.status = "added";
    else if (raw.startsWith("deleted file mode")) f.status = "deleted";
    else if (raw.startsWith("rename from ")) {
      f.status = "renamed";
      f.oldPath = unquote(raw.slice(12));
    } else if (raw.startsWith("rename to ")) f.path = unquote(raw.slice(10));
    else if (raw.startsWith("Binary files ")) f.binary = true;
    else if (raw.startsWith("@@")) {
      const m = /^@@ -(\d+)(?:,\d+)? \+(\d+)(?:,\d+)? @@(.*)$/.exec(raw);
      oldNo = Number(m?.[1] ?? 0);
      newNo = Number(m?.[2] ?? 0);
      total++;
      if (shown < limit) {
        f.lines.push({ kind: "hunk", oldNo: null, newNo: null, html: escapeHtml(raw) });
        shown++;
      } else f.hidden++;
    } else if ((raw.startsWith("+") && !raw.startsWith("+++ ")) || (raw.startsWith("-") && !raw.startsWith("--- ")) || raw.startsWith(" ")) {
      const kind: DiffLineKind = raw[0] === "+" ? "add" : raw[0] === "-" ? "del" : "ctx";
      if (kind === "add") f.added++;
      if (kind === "del") f.removed++;
      total++;
      if (shown < limit) {
        f.lines.push({ kind, oldNo: kind === "add" ? null : oldNo, newNo: kind === "del" ? null : newNo, html: highlightLine(raw.slice(1), f.language) });
        shown++;
      } else f.hidden++;
      if (kind !== "add") oldNo++;
      if (kind !== "del") newNo++;
    }
  }
  return { files, shownLines: shown, totalLines: total };
}
