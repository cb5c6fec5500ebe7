/**
 * The address of the client that sent a request, for per-address sign-in throttling.
 *
 * The Fetch `Request` that React Router hands to loaders carries no socket. Arcwatch's own
 * server (scripts/serve.mjs) therefore overwrites the header `x-arcwatch-client-address`
 * on every request with the socket's remote address (or, with ARCWATCH_TRUST_PROXY=1, the
 * last hop of X-Forwarded-For as written by the reverse proxy in front), and announces
 * itself with ARCWATCH_SERVER_SETS_ADDRESS=1. Under any other server (vite dev, plain
 * react-router-serve) the header could be forged, so it is ignored and every client shares
 * the "unknown" address bucket.
 */
export const CLIENT_ADDRESS_HEADER = "x-arcwatch-client-address";

export function clientAddress(request: Request): string {
  if (process.env.ARCWATCH_SERVER_SETS_ADDRESS !== "1") return "unknown";
  const value = request.headers.get(CLIENT_ADDRESS_HEADER)?.trim();
  return value && value.length <= 100 ? value : "unknown";
}
