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
