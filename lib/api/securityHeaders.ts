/**
 * The security headers of every answer (next.config.ts adds the static ones to every path) and the
 * Content-Security-Policy of the pages (proxy.ts, with a fresh nonce per request, which Next puts on its own inline
 * scripts). One place for both, so the proxy, the config and the tests read the same text.
 */

/** Sent on every response, whatever its kind. */
export const STATIC_SECURITY_HEADERS: { key: string; value: string }[] = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "Referrer-Policy", value: "strict-origin-when-cross-origin" },
  // The legacy header for browsers without CSP frame-ancestors.
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
  { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=(), payment=(), usb=()" },
];

/** The policy of API answers and files: they are never documents that run anything. */
export const API_CONTENT_SECURITY_POLICY = "default-src 'none'; frame-ancestors 'none'";

/**
 * The policy of an HTML page. Scripts: only those carrying this response's nonce, and what they load
 * ('strict-dynamic'); styles: the app's own style sheets and nonce-carrying style elements; style attributes are
 * allowed (the heatmaps position and colour cells with them; they cannot run code). Nothing may frame the app.
 */
export function pageContentSecurityPolicy(nonce: string): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}' 'strict-dynamic'`,
    `style-src 'self' 'nonce-${nonce}'`,
    "style-src-attr 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join("; ");
}
