"use client";

import { z } from "zod";

// In the browser, zod must not probe for eval (its fast path compiles parsers with Function): the pages'
// Content-Security-Policy has no 'unsafe-eval', and the probe would be reported as a violation. The server keeps
// the fast path. zod reads the setting when a schema is built, so this module must run before any schema module:
// the root layout renders it first, and client modules that build schemas early import it before them.
if (typeof window !== "undefined") z.config({ jitless: true });

/** Rendered once by the root layout so that this module runs before any form parses. */
export function BrowserZodConfig() {
  return null;
}
