/** The server's body caps (scripts/body-limits.mjs) against the documented upload limits in app/models. */
import { describe, expect, it } from "vitest";
import { bodyPolicy, FORM_LIMIT, PROBLEM_UPLOAD_LIMIT, RUN_UPLOAD_LIMIT } from "../../scripts/body-limits.mjs";
import { MAX_PROBLEM_UPLOAD_BYTES, MAX_REFERENCE_UPLOAD_BYTES } from "~/models/problems.server";
import { MAX_INGEST_BYTES } from "~/models/runs.server";

describe("body caps by route", () => {
  it("agree with the models' upload limits", () => {
    expect(RUN_UPLOAD_LIMIT).toBe(MAX_INGEST_BYTES);
    expect(PROBLEM_UPLOAD_LIMIT).toBeGreaterThan(MAX_PROBLEM_UPLOAD_BYTES + MAX_REFERENCE_UPLOAD_BYTES);
    // A 5,000-character comment of 3-byte characters, percent-encoded (9 bytes each), fits a form.
    expect(FORM_LIMIT).toBeGreaterThan(5000 * 9);
  });

  it("picks the cap, length rule and caller rule from method and path", () => {
    expect(bodyPolicy("GET", "/compare").hasBody).toBe(false);
    expect(bodyPolicy("POST", "/api/runs").limit).toBe(RUN_UPLOAD_LIMIT);
    expect(bodyPolicy("POST", "/problems/new.data").limit).toBe(PROBLEM_UPLOAD_LIMIT);
    expect(bodyPolicy("POST", "/signin").limit).toBe(FORM_LIMIT);
    const upload = bodyPolicy("POST", "/api/runs");
    expect(upload.check({ "transfer-encoding": "chunked" })).toMatchObject({ ok: false, status: 401 });
    expect(upload.check({ authorization: "Bearer x", "transfer-encoding": "chunked" })).toMatchObject({ ok: false, status: 413 });
    expect(upload.check({ authorization: "Bearer x", "content-length": "100" })).toEqual({ ok: true });
    const api = bodyPolicy("POST", "/api/regressions/7");
    expect(api.check({ "content-length": "10" })).toMatchObject({ ok: false, status: 401 });
    expect(api.check({ cookie: "__arcwatch=abc", "content-length": String(FORM_LIMIT + 1) })).toMatchObject({ ok: false, status: 413 });
    expect(bodyPolicy("POST", "/signin").check({ "content-length": "-1" })).toMatchObject({ ok: false, status: 400 });
    // A form without a length is allowed through and counted while it streams.
    expect(bodyPolicy("POST", "/signin").check({ "transfer-encoding": "chunked" })).toEqual({ ok: true });
  });
});
