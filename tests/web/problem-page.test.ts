/**
 * The problem page's data (GET /api/problems/:id): every part of the problem, end conditions
 * included, with one TeX name per symbol; and the form builder's error columns, counted from the
 * start of the line the user typed.
 */
import { describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("problem-page");
const { getDb } = await import("~/db/client.server");
const { getProblemDetail, readProblemSubmission } = await import("~/models/problems.server");
const { emptyBuilderValues } = await import("~/components/problems/form-model");

describe("problem detail", () => {
  it("pika-rover-dash: x(0) = 0 and x(t_f) = 40, as in problems/pika-rover-dash/problem.json", async () => {
    const r = await getProblemDetail(getDb(), "pika-rover-dash");
    if (!r.ok) throw new Error(r.message);
    const byName = new Map(r.detail.endConditions.map((c) => [c.name, c]));
    expect(byName.get("initial(x)")).toEqual({ kind: "initial", name: "initial(x)", tex: "x(t_{0})", lower: 0, upper: 0 });
    expect(byName.get("final(x)")).toEqual({ kind: "final", name: "final(x)", tex: "x(t_{f})", lower: 40, upper: 40 });
    expect(byName.get("final(v)")?.lower).toBe(0);
  }, 180_000); // the first read starts a solver thread (seconds on a loaded machine)

  it("kestrel-2-ascent: the intermediate rho prints as ρ on its left-hand side too", async () => {
    const r = await getProblemDetail(getDb(), "kestrel-2-ascent");
    if (!r.ok) throw new Error(r.message);
    expect(r.detail.names.rho).toBe("\\rho");
    expect(r.detail.tex["dynamics.v"]).toContain("D"); // the drag intermediate appears by name
    expect(r.detail.endConditions.filter((c) => c.kind === "final").map((c) => c.tex)).toEqual(["m(t_{f})"]);
  });
});

describe("form builder error columns", () => {
  it("count from the start of the typed line, with its line number", async () => {
    const v = { ...emptyBuilderValues(), title: "Columns", description: "d", states: "x, m, , , 0, 1\nv, m/s, , , 0, 0", controls: "u, m/s^2, -1, 1", dynamics: "x' = v\n  v' = u + uu", tf: "1", running: "u^2" };
    const form = new FormData();
    form.set("mode", "form");
    form.set("id", "columns-check");
    for (const [k, val] of Object.entries(v)) form.set(k, val);
    const sub = await readProblemSubmission(form);
    // "  v' = u + uu": 'uu' starts at the 12th character of the typed line (two spaces, "v' = ",
    // then "u + "); inside the expression "u + uu" it is column 5.
    expect(sub.errors.dynamics).toMatch(/^line 2, column 12: unknown name 'uu'/);
  });
});
