/**
 * The content-security-policy nonce of the response being rendered. scripts/serve.mjs makes
 * a fresh nonce per request, names it in the Content-Security-Policy header and hands it to
 * the app in the `x-arcwatch-csp-nonce` request header; app/entry.server.tsx provides it
 * here, and every inline script (root.tsx) carries it. In the browser the value is empty:
 * browsers hide a nonce from the page once it has been checked.
 */
import { createContext, useContext } from "react";

export const CSP_NONCE_HEADER = "x-arcwatch-csp-nonce";

export const NonceContext = createContext<string>("");

export function useNonce(): string {
  return useContext(NonceContext);
}
