import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { REPO_ROOT } from "./test-database";

/** `METHOD /api/v1/path` of every handler exported by a route file under app/api/v1, found on disk. */
export function apiOperations(): string[] {
  const found: string[] = [];
  const walk = (dir: string, segments: string[]) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) walk(full, [...segments, entry.replace(/^\[(.+)\]$/, "{$1}")]);
      else if (entry === "route.ts") {
        for (const [, method] of readFileSync(full, "utf8").matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g)) found.push(`${method} /api/v1/${segments.join("/")}`);
      }
    }
  };
  walk(path.join(REPO_ROOT, "app", "api", "v1"), []);
  return found.sort();
}

/** The URL pattern of every page.tsx under app/, found on disk: route groups stripped, `[segment]` kept as it is. */
export function appPages(): string[] {
  const found: string[] = [];
  const walk = (dir: string, segments: string[]) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) {
        if (entry === "api" && segments.length === 0) continue;
        walk(full, /^\(.+\)$/.test(entry) ? segments : [...segments, entry]);
      } else if (entry === "page.tsx") found.push("/" + segments.join("/"));
    }
  };
  walk(path.join(REPO_ROOT, "app"), []);
  return found.sort();
}

/** `file#name` of every exported function of every "use server" actions.ts under app/, found on disk. */
export function serverActions(): string[] {
  const found: string[] = [];
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) walk(full);
      else if (entry === "actions.ts") {
        const source = readFileSync(full, "utf8");
        if (!/^\s*["']use server["']/.test(source)) continue;
        const file = path.relative(REPO_ROOT, full).split(path.sep).join("/");
        for (const [, name] of source.matchAll(/export\s+(?:async\s+)?(?:function\s+|const\s+)([A-Za-z0-9_$]+)/g)) found.push(`${file}#${name}`);
      }
    }
  };
  walk(path.join(REPO_ROOT, "app"));
  return found.sort();
}
