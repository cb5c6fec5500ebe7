/**
 * The one vocabulary (app/vocabulary.ts) covers every name the engine, the runner and the
 * database can produce, so no page has to print a raw identifier. The lists are read from the
 * producers' own source or exports (never copied here), so a new status or metric that is not
 * added to the vocabulary fails this test. The scheme colours are checked against the published
 * palette and for being far apart.
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { JOB_STATUSES, REGRESSION_KINDS, REGRESSION_STATUSES, RUN_STATUSES } from "~/db/schema";
import { HISTORY_METRIC_KEYS } from "~/models/history.server";
import { THRESHOLD_KEYS } from "~/models/settings.server";
import { SCHEMES as ENGINE_SCHEMES } from "~/models/problems.server";
import * as V from "~/vocabulary";

const ROOT = path.resolve(import.meta.dirname, "..", "..");
const read = (f: string) => fs.readFileSync(path.join(ROOT, f), "utf8");

describe("vocabulary covers every produced name", () => {
  it("every NLP solver status (the NlpStatus union in app/engine/nlp/types.ts)", () => {
    const src = read("app/engine/nlp/types.ts");
    const union = src.slice(src.indexOf("export type NlpStatus ="), src.indexOf(";", src.indexOf("export type NlpStatus =")));
    const names = [...union.matchAll(/"([a-z_]+)"/g)].map((m) => m[1]!);
    expect(names.length).toBeGreaterThan(5);
    for (const n of names) expect(V.statusEntry("case", n), n).not.toBeNull();
  });

  it("every case status the runner and the shooting transcription write", () => {
    const names = new Set<string>();
    const sources = (dir: string) => fs.readdirSync(path.join(ROOT, dir)).filter((x) => x.endsWith(".ts")).map((x) => `${dir}/${x}`);
    for (const f of ["app/engine/shooting/direct.ts", ...sources("bench/runner"), ...sources("app/runs")]) {
      for (const m of read(f).matchAll(/status: "([a-z_]+)"/g)) names.add(m[1]!);
      for (const m of read(f).matchAll(/\| "([a-z_]+_failed)"/g)) names.add(m[1]!);
    }
    // Statuses of other tables that share the `status:` spelling in the runner's source.
    const other = new Set([...Object.keys(RUN_STATUSES_SET), "fixed", "open", "acknowledged", "expected"]);
    for (const n of names) if (!other.has(n)) expect(V.statusEntry("case", n), n).not.toBeNull();
    expect(V.statusEntry("case", "timeout")).not.toBeNull();
    expect(V.statusEntry("case", "error")).not.toBeNull();
  });

  it("run, job and triage statuses and finding kinds of the schema", () => {
    for (const s of RUN_STATUSES) expect(V.statusEntry("run", s), s).not.toBeNull();
    for (const s of JOB_STATUSES) expect(V.statusEntry("job", s), s).not.toBeNull();
    for (const s of REGRESSION_STATUSES) expect(V.statusEntry("regression", s), s).not.toBeNull();
    for (const k of REGRESSION_KINDS) expect(V.kindLabel(k)).not.toMatch(/unknown/);
  });

  it("every metric the detector records (app/runs/rules.ts, app/runs/pooled.ts) and every history metric", () => {
    const src = read("app/runs/rules.ts") + read("app/runs/pooled.ts");
    const recorded = new Set([...src.matchAll(/metric: "([a-z_]+)"/g)].map((m) => m[1]!));
    const table = src.slice(src.indexOf("const ACCURACY_METRICS = ["), src.indexOf("] as const;", src.indexOf("const ACCURACY_METRICS = [")));
    for (const m of table.matchAll(/\["([a-z_]+)", "[A-Za-z]+"\]/g)) recorded.add(m[1]!);
    expect(recorded.has("objective_error_rel")).toBe(true);
    expect(recorded.has("median_seconds")).toBe(true);
    for (const r of recorded) expect(V.metricOf(r), r).not.toBeNull();
    for (const k of HISTORY_METRIC_KEYS) expect(V.metricOf(k), k).not.toBeNull();
  });

  it("every number kept per case (the runner's extra numbers in app/runs/record.ts)", () => {
    const src = read("app/runs/record.ts");
    const block = src.slice(src.indexOf("const extra = {"), src.indexOf("};", src.indexOf("const extra = {")));
    const keys = [...block.matchAll(/^\s+([a-zA-Z0-9]+):/gm)].map((m) => m[1]!).filter((k) => k !== "variant");
    expect(keys.length).toBeGreaterThan(5);
    for (const k of keys) expect(V.metricOf(k), k).not.toBeNull();
  });

  it("every threshold setting has a human label, and values print without float noise", () => {
    for (const k of THRESHOLD_KEYS) expect(V.thresholdLabel(k), k).not.toMatch(/unknown|[a-z][A-Z]/);
    expect(V.formatSetting(Math.log(1.1))).toBe("0.0953102");
    expect(V.formatSetting(1e-9)).toBe("1e-9");
  });

  it("an unknown name is shown as unknown, never passed through silently", () => {
    expect(V.metricLabel("no_such_metric")).toBe("unknown metric (no_such_metric)");
    expect(V.statusLabel("case", "weird")).toBe("unknown status (weird)");
  });
});

const RUN_STATUSES_SET = Object.fromEntries(RUN_STATUSES.map((s) => [s, true]));

describe("symbols and colours", () => {
  it("one symbol per direction, distinct", () => {
    expect(V.DIRECTION.regression.symbol).not.toBe(V.DIRECTION.improvement.symbol);
  });

  it("every engine scheme has a label and a palette colour", () => {
    for (const s of ENGINE_SCHEMES) {
      expect(V.schemeLabel(s)).toBeTruthy();
      expect(V.schemeColour(s)).toBe(`var(--aw-scheme-${s})`);
    }
  });

  it("scheme colours are Okabe–Ito colours, the same in app/app.css, and far apart", () => {
    // Okabe & Ito (2008), "Color Universal Design": orange E69F00, sky blue 56B4E9, bluish green
    // 009E73, yellow F0E442, blue 0072B2, vermillion D55E00, reddish purple CC79A7, black.
    const OKABE_ITO = new Set(["#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7", "#000000"]);
    const css = read("app/app.css").toLowerCase();
    for (const theme of ["light", "dark"] as const) {
      const colours = Object.values(V.SCHEME_PALETTE).map((p) => p[theme]);
      for (const c of colours) expect(OKABE_ITO.has(c), c).toBe(true);
      expect(new Set(colours).size).toBe(colours.length);
      // Pairwise RGB distance above 60 of 441 (common practice, no source; a crude proxy: the
      // palette's own claim is distinguishability under the common colour-vision deficiencies).
      // The two browns this replaces (#b4530f, #8a6100) were 46 apart.
      const rgb = (h: string) => [1, 3, 5].map((i) => parseInt(h.slice(i, i + 2), 16));
      for (let i = 0; i < colours.length; i++)
        for (let j = i + 1; j < colours.length; j++) {
          const [a, b] = [rgb(colours[i]!), rgb(colours[j]!)];
          expect(Math.hypot(a[0]! - b[0]!, a[1]! - b[1]!, a[2]! - b[2]!)).toBeGreaterThan(60);
        }
    }
    for (const [s, p] of Object.entries(V.SCHEME_PALETTE)) expect(css).toContain(`--aw-scheme-${s}: ${p.light.toLowerCase()}`);
  });
});
