import { randomBytes } from "node:crypto";
import type { IncomingMessage, ServerResponse } from "node:http";
import { pageContentSecurityPolicy, STATIC_SECURITY_HEADERS } from "../lib/api/securityHeaders.ts";
import { DEPENDENCY_RETRY_AFTER_SECONDS } from "../lib/errors.ts";

/** What a page request is told while the database cannot be reached (the API says the same as a 503 problem). */
export const DATABASE_UNREACHABLE_MESSAGE = "The registry's database is unreachable; try again in a few seconds.";

/**
 * A request for a page (which reads the database from its first line: the session check), rather than an API call,
 * a framework asset or a static file.
 */
export function isPageRequest(req: IncomingMessage): boolean {
  if (req.method !== "GET" && req.method !== "HEAD") return false;
  const path = (req.url ?? "/").split("?", 1)[0];
  if (path.startsWith("/api/") || path.startsWith("/_next/")) return false;
  // icon.svg, robots.txt and the like: files, not pages.
  return !/\.[A-Za-z0-9]{1,8}$/.test(path);
}

/**
 * 503 with Retry-After and a small self-contained page (no script; a nonce-carrying style element under the pages'
 * own Content-Security-Policy) that reloads itself after the Retry-After delay.
 */
export function answerDatabaseUnreachable(req: IncomingMessage, res: ServerResponse): void {
  const nonce = randomBytes(16).toString("base64");
  const html = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="refresh" content="${DEPENDENCY_RETRY_AFTER_SECONDS}">
<title>Registry unavailable · Stillpoint</title>
<style nonce="${nonce}">
  :root { color-scheme: light dark; --canvas: 244 245 243; --ink: 24 30 36; --muted: 84 93 104; --fault: 168 36 30; --fault-soft: 252 236 234; }
  @media (prefers-color-scheme: dark) { :root { --canvas: 16 19 22; --ink: 228 232 229; --muted: 156 166 174; --fault: 240 128 118; --fault-soft: 56 24 22; } }
  body { margin: 0; min-height: 100vh; background: rgb(var(--canvas)); color: rgb(var(--ink)); font: 14px/1.45 system-ui, sans-serif; }
  main { max-width: 36rem; margin: 6rem auto; padding: 1rem 1.25rem; border: 1px solid rgb(var(--fault)); border-radius: 4px; background: rgb(var(--fault-soft)); }
  h1 { margin: 0 0 0.5rem; font-size: 1rem; color: rgb(var(--fault)); }
  p { margin: 0.5rem 0 0; }
  .muted { color: rgb(var(--muted)); font-size: 0.8125rem; }
  .mark { margin: 0 0 0.75rem; font: 0.8125rem ui-monospace, monospace; }
  .mark span { color: rgb(var(--fault)); }
</style>
</head>
<body>
<main role="alert" data-testid="database-unreachable">
<p class="mark">stillpoint<span>·</span></p>
<h1>Registry unavailable</h1>
<p>${DATABASE_UNREACHABLE_MESSAGE}</p>
<p class="muted">This page reloads itself in ${DEPENDENCY_RETRY_AFTER_SECONDS} seconds.</p>
</main>
</body>
</html>
`;
  const headers: Record<string, string | number> = {
    ...Object.fromEntries(STATIC_SECURITY_HEADERS.map(({ key, value }) => [key.toLowerCase(), value])),
    "content-security-policy": pageContentSecurityPolicy(nonce),
    "content-type": "text/html; charset=utf-8",
    "cache-control": "no-store",
    "retry-after": String(DEPENDENCY_RETRY_AFTER_SECONDS),
    "content-length": Buffer.byteLength(html),
  };
  res.writeHead(503, headers);
  res.end(req.method === "HEAD" ? undefined : html);
}
