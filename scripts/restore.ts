// npm run restore -- FILE [--database NAME]: load a backup (FILE.sql.gz with FILE.manifest.json beside it) into an
// empty database of the configured server (the configured DATABASE_NAME, or NAME; created when missing), then verify
// every coefficient blob against its checksums and every manifest entry. Exit 1 on any problem.
import { getConfig } from "../lib/config/index.ts";
import { RestoreError, runRestore } from "../lib/ops/backup.ts";

const argv = process.argv.slice(2);
const dbIndex = argv.indexOf("--database");
const databaseName = dbIndex >= 0 ? argv[dbIndex + 1] : undefined;
const files = argv.filter((a, i) => !a.startsWith("--") && i !== dbIndex + 1);
if (files.length !== 1 || (dbIndex >= 0 && !databaseName)) {
  console.error("usage: npm run restore -- FILE.sql.gz [--database NAME]");
  process.exit(2);
}

try {
  const result = await runRestore({ config: getConfig(), dumpFile: files[0]!, databaseName });
  const { integrity } = result;
  console.log(`restored into ${result.database} and verified in ${result.seconds.toFixed(2)} s`);
  console.log(`  versions verified  ${integrity.checked} (${Object.entries(integrity.byState).map(([s, n]) => `${n} ${s}`).join(", ") || "none"}): every blob matches its SHA-256 and its coefficients checksum`);
  console.log(`  manifest entries   ${result.manifestChecked} matched${result.draftsGone ? `; ${result.draftsGone} drafts discarded before the snapshot` : ""}${result.notInManifest ? `; ${result.notInManifest} versions newer than the manifest (verified by their own checksums)` : ""}`);
} catch (error) {
  if (error instanceof RestoreError) {
    console.error(`RESTORE FAILED: ${error.message}`);
  } else {
    console.error(`RESTORE FAILED: ${error instanceof Error ? error.message : String(error)}`);
  }
  process.exit(1);
}
