/** DEVELOPERS.md lists every solver option with its default, as declared in options.ts. */
import { describe, it, expect } from "vitest";
import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { OPTION_SPECS, formatDefault, resolveOptions } from "~/engine/nlp/options";

const doc = readFileSync(fileURLToPath(new URL("../../DEVELOPERS.md", import.meta.url)), "utf8");
const start = doc.indexOf("## NLP solver options");
const section = start < 0 ? "" : doc.slice(start, doc.indexOf("\n## ", start + 5) < 0 ? undefined : doc.indexOf("\n## ", start + 5));

describe("NLP solver options", () => {
  it("DEVELOPERS.md has the section", () => {
    expect(start).toBeGreaterThanOrEqual(0);
  });
  for (const [k, spec] of Object.entries(OPTION_SPECS)) {
    it(`${k} is documented with default ${formatDefault(spec.default)}`, () => {
      expect(section).toContain(`- \`${k}\` (default ${formatDefault(spec.default)}): ${spec.help}`);
    });
  }
  it("defaults resolve to the declared values", () => {
    const r = resolveOptions(undefined) as unknown as Record<string, unknown>;
    for (const [k, spec] of Object.entries(OPTION_SPECS)) if (spec.default !== null) expect(r[k]).toBe(spec.default);
  });
});
