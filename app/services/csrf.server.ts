/**
 * Cross-site request refusal for state-changing methods (everything but GET, HEAD, OPTIONS).
 *
 * A browser sends `Origin` on every cross-site and same-site POST/PUT/PATCH/DELETE; the
 * request is accepted only when that origin is this server's own origin (scheme, host and
 * port of the request URL; behind a TLS-terminating proxy set ARCWATCH_TRUST_PROXY=1 so the
 * forwarded scheme and host count). Without `Origin`, the `Referer`'s origin is checked the
 * same way. A request with neither is refused too, unless it authenticates with a Bearer
 * token: such a request carries no ambient credential a third-party page could borrow.
 * React Router itself also rejects (400) document POSTs whose Origin differs; this check adds
 * the Referer fallback, data requests and the API, with a 403. It complements SameSite=Lax cookies (which already keep the session cookie off
 * cross-site POSTs) rather than relying on them alone.
 */
const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

export function allowedOrigins(request: Request): Set<string> {
  return new Set<string>([new URL(request.url).origin]);
}

function originOf(value: string): string | null {
  try {
    return new URL(value).origin;
  } catch {
    return null;
  }
}

export type OriginVerdict = { ok: true } | { ok: false; reason: string };

export function checkSameOrigin(request: Request): OriginVerdict {
  if (SAFE_METHODS.has(request.method.toUpperCase())) return { ok: true };
  const allowed = allowedOrigins(request);
  const origin = request.headers.get("origin");
  if (origin !== null) {
    if (origin !== "null" && allowed.has(origin)) return { ok: true };
    return { ok: false, reason: `Origin ${origin} is not this server's origin.` };
  }
  const referer = request.headers.get("referer");
  if (referer) {
    const refOrigin = originOf(referer);
    if (refOrigin && allowed.has(refOrigin)) return { ok: true };
    return { ok: false, reason: "Referer is not from this server's origin." };
  }
  if (/^Bearer\s+\S+/i.test(request.headers.get("authorization") ?? "")) return { ok: true };
  return { ok: false, reason: "State-changing request without Origin or Referer header." };
}
