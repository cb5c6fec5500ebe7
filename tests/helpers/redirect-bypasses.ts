/**
 * Open-redirect bypasses for a "return to" parameter, as the value arrives after URL decoding.
 * Collected from common practice (OWASP "Unvalidated Redirects and Forwards Cheat Sheet" and
 * public bypass lists; recalled from memory): protocol-relative forms, backslashes browsers
 * read as slashes, control characters browsers strip, dot segments that collapse to `//`,
 * other schemes, and user-info tricks.
 */
export const REDIRECT_BYPASSES: string[] = [
  "//evil.example",
  "///evil.example",
  "////evil.example/x",
  "/\\evil.example",
  "\\\\evil.example",
  "\\/evil.example",
  "/\t/evil.example",
  "/\n/evil.example",
  "/\r\n/evil.example",
  "/\u0000/evil.example",
  "/\u007f/evil.example",
  " //evil.example",
  "\t//evil.example",
  "/./evil.example/..//evil.example",
  "/.//evil.example",
  "/..//evil.example",
  "/%2e%2e//evil.example",
  "https://evil.example",
  "http:evil.example",
  "https:/evil.example",
  "javascript:alert(1)",
  "JaVaScRiPt:alert(1)",
  "data:text/html,<script>alert(1)</script>",
  "//evil.example@127.0.0.1",
  "https://127.0.0.1@evil.example",
  "/\\/evil.example",
  "//evil%2eexample",
];

/** Same-origin paths that must be kept as they are. */
export const REDIRECT_KEEPS: [string, string][] = [
  ["/account", "/account"],
  ["/runs?branch=main&page=2", "/runs?branch=main&page=2"],
  ["/problems/alder-ridge-cable-car#trial", "/problems/alder-ridge-cable-car#trial"],
  ["/compare?a=abc%2Fdef", "/compare?a=abc%2Fdef"],
];
