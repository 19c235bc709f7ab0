import { readFileSync } from "node:fs";

/** The software version recorded in every model's provenance, from package.json (read once). */
export const SOFTWARE_VERSION: string = (() => {
  const pkg = JSON.parse(readFileSync(new URL("../package.json", import.meta.url), "utf8")) as { version: string };
  return `stillpoint ${pkg.version}`;
})();
