// npm run backup [-- --out DIR]: a consistent dump of the configured database (DATABASE_* or DATABASE_URL) and its
// manifest, into DIR (default BACKUP_DIR or .data/backups). See lib/ops/backup.ts.
import path from "node:path";
import { getConfig } from "../lib/config/index.ts";
import { runBackup } from "../lib/ops/backup.ts";

const argv = process.argv.slice(2);
const outIndex = argv.indexOf("--out");
const outDir = outIndex >= 0 ? argv[outIndex + 1] : (process.env.BACKUP_DIR ?? path.join(process.cwd(), ".data", "backups"));
if (!outDir || argv.some((a, i) => a.startsWith("-") && a !== "--out" && i !== outIndex + 1)) {
  console.error("usage: npm run backup [-- --out DIR]");
  process.exit(2);
}

try {
  const result = await runBackup({ config: getConfig(), outDir });
  const { manifest } = result;
  const states = manifest.versions.reduce<Record<string, number>>((acc, v) => ((acc[v.state] = (acc[v.state] ?? 0) + 1), acc), {});
  console.log(`backup of ${manifest.database} written in ${result.seconds.toFixed(2)} s`);
  console.log(`  dump      ${result.dumpFile} (${(manifest.dumpBytes / 1e6).toFixed(2)} MB, sha256 ${manifest.dumpSha256})`);
  console.log(`  manifest  ${result.manifestFile}`);
  console.log(`  versions  ${manifest.versions.length} (${Object.entries(states).map(([s, n]) => `${n} ${s}`).join(", ") || "none"})`);
  console.log(`  restore with: npm run restore -- ${result.dumpFile}`);
} catch (error) {
  console.error(`backup failed: ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
}
