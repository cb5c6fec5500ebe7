import type { IncomingHttpHeaders } from "node:http";
import type { Readable, Transform } from "node:stream";

export declare const RUN_UPLOAD_LIMIT: number;
export declare const PROBLEM_UPLOAD_LIMIT: number;
export declare const FORM_LIMIT: number;
export declare class BodyTooLarge extends Error {}
export declare function bodyPolicy(
  method: string,
  pathname: string,
): {
  hasBody: boolean;
  limit: number;
  label: string;
  check(headers: IncomingHttpHeaders): { ok: true } | { ok: false; status: number; message: string };
};
export declare function limitedReadable(req: Readable, limit: number, onOverflow: () => void): Transform;
