import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { createReadStream, createWriteStream, existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from "node:fs";
import { rm } from "node:fs/promises";
import path from "node:path";
import { Transform } from "node:stream";
import { pipeline } from "node:stream/promises";
import { createGunzip, createGzip } from "node:zlib";
import knexFactory, { type Knex } from "knex";
import type { AppConfig } from "../config/index.ts";
import { knexConfig } from "../db/knex-config.ts";
import { storedChecksums, verifyStoredVersions, type IntegrityReport, type StoredChecksum } from "./integrity.ts";

/**
 * Backups: a logical dump by MariaDB's own mariadb-dump (Debian's mariadb-client), taken with --single-transaction
 * (one consistent InnoDB snapshot, no locks held against the running app), gzip-compressed, and beside it a manifest
 * with every version's stored checksums and the dump file's own SHA-256. Restoring loads the dump into an empty
 * database with the mariadb client and re-verifies every coefficient blob (lib/ops/integrity.ts).
 */

export const MANIFEST_FORMAT = "stillpoint-backup-manifest/1";

export interface BackupManifest {
  format: typeof MANIFEST_FORMAT;
  database: string;
  /** When the checksums were read; the dump's snapshot starts right after. */
  takenAt: string;
  dumpFile: string;
  dumpSha256: string;
  dumpBytes: number;
  tool: string;
  /** Every version's checksums, read just before the dump's snapshot. */
  versions: StoredChecksum[];
  rowCounts: Record<string, number>;
}

/** The manifest path of a dump file: `<name>.sql.gz` -> `<name>.manifest.json`. */
export function manifestPathFor(dumpFile: string): string {
  return dumpFile.replace(/\.sql\.gz$/, "") + ".manifest.json";
}

/** The client programs' connection arguments; the password goes in MYSQL_PWD, never on the command line. */
function clientArgs(config: AppConfig): { args: string[]; env: NodeJS.ProcessEnv } {
  const { database } = config;
  return {
    args: ["--no-defaults", `--host=${database.host}`, `--port=${database.port}`, `--user=${database.user}`, "--default-character-set=utf8mb4"],
    env: { ...process.env, MYSQL_PWD: database.password },
  };
}

function run(command: string, args: string[], env: NodeJS.ProcessEnv, stdin?: NodeJS.ReadableStream): { stdout: NodeJS.ReadableStream; done: Promise<void> } {
  const child = spawn(command, args, { env, stdio: [stdin ? "pipe" : "ignore", "pipe", "pipe"] });
  let stderr = "";
  child.stderr!.on("data", (chunk: Buffer) => (stderr += chunk.toString()));
  if (stdin) stdin.pipe(child.stdin!);
  const done = new Promise<void>((resolve, reject) => {
    child.on("error", (error) => reject(new Error(`${command} could not start: ${error.message} (install Debian's mariadb-client)`)));
    child.on("close", (code) => (code === 0 ? resolve() : reject(new Error(`${command} exited with ${code}: ${stderr.trim().split("\n").slice(-5).join(" | ")}`))));
  });
  return { stdout: child.stdout!, done };
}

async function toolVersion(command: string): Promise<string> {
  const { stdout, done } = run(command, ["--version"], process.env);
  let text = "";
  stdout.on("data", (chunk: Buffer) => (text += chunk.toString()));
  await done;
  return text.trim();
}

async function rowCounts(conn: Knex, name: string): Promise<Record<string, number>> {
  const tables: { TABLE_NAME: string }[] = await conn("information_schema.TABLES").select("TABLE_NAME").where({ TABLE_SCHEMA: name, TABLE_TYPE: "BASE TABLE" }).orderBy("TABLE_NAME");
  const counts: Record<string, number> = {};
  for (const { TABLE_NAME } of tables) {
    const [row] = await conn(TABLE_NAME).count<{ n: number | string }[]>({ n: "*" });
    counts[TABLE_NAME] = Number(row?.n ?? 0);
  }
  return counts;
}

export interface BackupResult {
  dumpFile: string;
  manifestFile: string;
  manifest: BackupManifest;
  seconds: number;
}

/** Write `<outDir>/stillpoint-<database>-<UTC time>.sql.gz` and its manifest. */
export async function runBackup(options: { config: AppConfig; outDir: string; now?: Date }): Promise<BackupResult> {
  const started = performance.now();
  const { config } = options;
  const name = config.database.name;
  mkdirSync(options.outDir, { recursive: true });
  const stamp = (options.now ?? new Date()).toISOString().replace(/[-:]/g, "").replace(/\.\d+Z$/, "Z");
  const dumpFile = path.join(options.outDir, `stillpoint-${name}-${stamp}.sql.gz`);
  const partial = `${dumpFile}.partial`;

  const conn = knexFactory(knexConfig({ config }));
  let versions: StoredChecksum[];
  let counts: Record<string, number>;
  const takenAt = new Date().toISOString();
  try {
    versions = await storedChecksums(conn);
    counts = await rowCounts(conn, name);
  } finally {
    await conn.destroy();
  }

  const { args, env } = clientArgs(config);
  const dump = run("mariadb-dump", [...args, "--single-transaction", "--quick", "--triggers", "--hex-blob", "--skip-lock-tables", "--no-tablespaces", name], env);
  const hash = createHash("sha256");
  let bytes = 0;
  const count = new Transform({
    transform(chunk: Buffer, _encoding, callback) {
      hash.update(chunk);
      bytes += chunk.length;
      callback(null, chunk);
    },
  });
  try {
    await Promise.all([pipeline(dump.stdout, createGzip({ level: 6 }), count, createWriteStream(partial)), dump.done]);
  } catch (error) {
    await rm(partial, { force: true });
    throw error;
  }
  renameSync(partial, dumpFile);
  const manifest: BackupManifest = {
    format: MANIFEST_FORMAT,
    database: name,
    takenAt,
    dumpFile: path.basename(dumpFile),
    dumpSha256: hash.digest("hex"),
    dumpBytes: bytes,
    tool: await toolVersion("mariadb-dump"),
    versions,
    rowCounts: counts,
  };
  const manifestFile = manifestPathFor(dumpFile);
  writeFileSync(manifestFile, JSON.stringify(manifest, null, 2) + "\n");
  return { dumpFile, manifestFile, manifest, seconds: (performance.now() - started) / 1000 };
}

/** Versions whose coefficients can no longer change (the triggers freeze them once they leave draft). */
const FROZEN_STATES = new Set(["in-review", "released", "retired"]);

export interface RestoreResult {
  database: string;
  integrity: IntegrityReport;
  /** Manifest entries compared with the restored rows. */
  manifestChecked: number;
  /** Drafts in the manifest that were deleted before the dump's snapshot (allowed: a draft may be discarded). */
  draftsGone: number;
  /** Versions the dump holds that the manifest does not (created between the manifest and the snapshot). */
  notInManifest: number;
  problems: string[];
  seconds: number;
}

export class RestoreError extends Error {
  constructor(
    message: string,
    readonly result?: RestoreResult,
  ) {
    super(message);
    this.name = "RestoreError";
  }
}

/**
 * Restore a dump into an empty database (created when missing) of the configured server, then verify every version:
 * its blob against its checksums, and every manifest entry against the restored rows. Throws RestoreError listing
 * every problem; a restore that throws is not to be trusted.
 */
export async function runRestore(options: { config: AppConfig; dumpFile: string; databaseName?: string }): Promise<RestoreResult> {
  const started = performance.now();
  const { dumpFile } = options;
  const database = options.databaseName ?? options.config.database.name;
  if (!/^[A-Za-z0-9_]+$/.test(database)) throw new RestoreError(`The database name "${database}" may hold only letters, digits and '_'.`);
  if (!existsSync(dumpFile)) throw new RestoreError(`There is no file ${dumpFile}.`);
  const manifestFile = manifestPathFor(dumpFile);
  if (!existsSync(manifestFile)) throw new RestoreError(`The manifest ${manifestFile} is missing: without it the restore cannot be verified.`);
  const manifest = JSON.parse(readFileSync(manifestFile, "utf8")) as BackupManifest;
  if (manifest.format !== MANIFEST_FORMAT) throw new RestoreError(`${manifestFile} is not a Stillpoint backup manifest (format ${JSON.stringify(manifest.format)}).`);

  // The file first: a damaged dump is refused before anything is written.
  const hash = createHash("sha256");
  await pipeline(createReadStream(dumpFile), new Transform({ transform: (chunk: Buffer, _e, cb) => (hash.update(chunk), cb()) }));
  const fileSha = hash.digest("hex");
  if (fileSha !== manifest.dumpSha256) throw new RestoreError(`The dump file's SHA-256 ${fileSha} differs from the manifest's ${manifest.dumpSha256}: the file is damaged.`);

  const server = knexFactory(knexConfig({ config: options.config, databaseName: "information_schema" }));
  try {
    const exists = await server("SCHEMATA").where({ SCHEMA_NAME: database }).first();
    if (!exists) await server.raw(`CREATE DATABASE \`${database}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
    const [tables] = await server("TABLES").where({ TABLE_SCHEMA: database }).count<{ n: number | string }[]>({ n: "*" });
    if (Number(tables?.n ?? 0) > 0) throw new RestoreError(`The database ${database} is not empty (${tables!.n} tables): restore only into an empty one.`);
  } finally {
    await server.destroy();
  }

  const { args, env } = clientArgs(options.config);
  const load = run("mariadb", [...args, "--max-allowed-packet=256M", database], env, createReadStream(dumpFile).pipe(createGunzip()));
  load.stdout.resume();
  await load.done;

  const conn = knexFactory(knexConfig({ config: options.config, databaseName: database }));
  try {
    const integrity = await verifyStoredVersions(conn);
    const restored = new Map((await storedChecksums(conn)).map((v) => [`${v.model}@${v.version}`, v]));
    const problems = integrity.failures.map((f) => `${f.model} v${f.version} (${f.state}): ${f.reason}`);
    let draftsGone = 0;
    const inManifest = new Set<string>();
    for (const entry of manifest.versions) {
      const key = `${entry.model}@${entry.version}`;
      inManifest.add(key);
      const found = restored.get(key);
      if (!found) {
        if (FROZEN_STATES.has(entry.state)) problems.push(`${entry.model} v${entry.version} (${entry.state}) is in the manifest but not in the dump`);
        else draftsGone++;
        continue;
      }
      if (found.coefficientsSha256 !== entry.coefficientsSha256) problems.push(`${entry.model} v${entry.version}: coefficients SHA-256 ${found.coefficientsSha256} in the dump, ${entry.coefficientsSha256} in the manifest`);
      if (FROZEN_STATES.has(entry.state) && found.blobSha256 !== entry.blobSha256) problems.push(`${entry.model} v${entry.version}: blob SHA-256 ${found.blobSha256} in the dump, ${entry.blobSha256} in the manifest`);
    }
    const notInManifest = [...restored.keys()].filter((k) => !inManifest.has(k)).length;
    const result: RestoreResult = { database, integrity, manifestChecked: manifest.versions.length, draftsGone, notInManifest, problems, seconds: (performance.now() - started) / 1000 };
    if (problems.length > 0) throw new RestoreError(`The restore of ${path.basename(dumpFile)} into ${database} failed verification:\n  ${problems.join("\n  ")}`, result);
    return result;
  } finally {
    await conn.destroy();
  }
}
