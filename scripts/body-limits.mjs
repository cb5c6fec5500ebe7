/**
 * Request body caps by route, applied by scripts/serve.mjs before any route code reads a body.
 *
 * | routes                                        | cap     | length required | caller required          |
 * |-----------------------------------------------|---------|-----------------|--------------------------|
 * | POST /api/runs, /api/ingest (run uploads)      | 32 MiB  | yes             | Authorization header     |
 * | /api/problems…, /problems… (problem files)     | 5 MiB   | yes             | cookie or token on /api/ |
 * | everything else (forms, small JSON)            | 64 KiB  | no (counted)    | cookie or token on /api/ |
 *
 * The upload caps repeat the documented limits in app/models (MAX_INGEST_BYTES = 32 MiB;
 * MAX_PROBLEM_UPLOAD_BYTES 512 KiB + MAX_REFERENCE_UPLOAD_BYTES 4 MiB plus form overhead);
 * tests/web/body-limits.test.ts checks that they agree. The 64 KiB form cap is several times
 * the largest form field (a 5,000-character comment, percent-encoded).
 */
import { Transform } from "node:stream";

const KiB = 1024;
const MiB = 1024 * 1024;

export const RUN_UPLOAD_LIMIT = 32 * MiB;
export const PROBLEM_UPLOAD_LIMIT = 5 * MiB;
export const FORM_LIMIT = 64 * KiB;

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);
const SESSION_COOKIE = "__arcwatch";

export class BodyTooLarge extends Error {}

/**
 * The cap and rules for one request.
 * @param {string} method
 * @param {string} pathname
 */
export function bodyPolicy(method, pathname) {
  const hasBody = !SAFE_METHODS.has(method.toUpperCase());
  const path = pathname.replace(/\.data$/, "");
  const api = path.startsWith("/api/");
  let limit = FORM_LIMIT;
  let label = "forms";
  let lengthRequired = false;
  let tokenRequired = false;
  if (/^\/api\/(runs|ingest)\/?$/.test(path)) {
    limit = RUN_UPLOAD_LIMIT;
    label = "run uploads";
    lengthRequired = true;
    tokenRequired = true;
  } else if (/^\/(api\/)?problems(\/|$)/.test(path)) {
    limit = PROBLEM_UPLOAD_LIMIT;
    label = "problem uploads";
    lengthRequired = true;
  }
  return {
    hasBody,
    limit,
    label,
    /**
     * Decides from the headers alone, before the body is read.
     * @param {import("node:http").IncomingHttpHeaders} headers
     * @returns {{ ok: true } | { ok: false, status: number, message: string }}
     */
    check(headers) {
      if (tokenRequired && !headers.authorization) return { ok: false, status: 401, message: "Send Authorization: Bearer <token>." };
      if (api && !headers.authorization && !String(headers.cookie ?? "").includes(`${SESSION_COOKIE}=`))
        return { ok: false, status: 401, message: "Sign in first, or send an API token." };
      const declared = headers["content-length"];
      if (declared !== undefined) {
        const n = Number(declared);
        if (!Number.isSafeInteger(n) || n < 0) return { ok: false, status: 400, message: "Invalid Content-Length." };
        if (n > limit) return { ok: false, status: 413, message: `The request body (${n} bytes) is larger than ${limit} bytes, the limit for ${label}.` };
        return { ok: true };
      }
      if (headers["transfer-encoding"] && lengthRequired)
        return { ok: false, status: 413, message: `Send Content-Length with ${label} (at most ${limit} bytes); a body of unknown length is refused.` };
      return { ok: true };
    },
  };
}

/**
 * `req` passed through a byte counter: past `limit` bytes, `onOverflow` is called and the
 * stream fails with BodyTooLarge (the reader's formData()/json() rejects), and the rest of
 * the body is not read.
 * @param {import("node:stream").Readable} req
 * @param {number} limit
 * @param {() => void} onOverflow
 */
export function limitedReadable(req, limit, onOverflow) {
  let seen = 0;
  const counter = new Transform({
    transform(chunk, _encoding, callback) {
      seen += chunk.length;
      if (seen > limit) {
        onOverflow();
        req.unpipe(counter);
        req.pause();
        callback(new BodyTooLarge(`The request body is larger than ${limit} bytes.`));
        return;
      }
      callback(null, chunk);
    },
  });
  req.on("error", (err) => counter.destroy(err));
  req.pipe(counter);
  return counter;
}
