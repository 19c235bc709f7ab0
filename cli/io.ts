import { readFile } from "node:fs/promises";
import { parseArgs } from "node:util";
import type { OneOrMany } from "../lib/validation/oneOrMany.ts";
import { wavefrontInputSchema } from "../lib/validation/wavefront.ts";
import type { Wavefront } from "../lib/optics/types.ts";
import { CliError } from "./errors.ts";

/** Parse `--name value` options; every listed option is a required string unless marked optional. */
export function parseOptions<const R extends string, const O extends string = never>(
  argv: string[],
  required: readonly R[],
  optional: readonly O[] = [],
): Record<R, string> & Partial<Record<O, string>> {
  const options = Object.fromEntries(
    [...required, ...optional].map((name) => [name, { type: "string" as const }]),
  );
  let values: Record<string, string | boolean | undefined>;
  try {
    values = parseArgs({ args: argv, options, strict: true, allowPositionals: false }).values;
  } catch (error) {
    throw new CliError((error as Error).message);
  }
  for (const name of required) {
    if (typeof values[name] !== "string" || values[name] === "") throw new CliError(`missing --${name}`);
  }
  return values as Record<R, string> & Partial<Record<O, string>>;
}

/** The optional `--threads N` value: undefined when absent, else a positive integer. */
export function parseThreads(value: string | undefined): number | undefined {
  if (value === undefined) return undefined;
  const threads = Number(value);
  if (!Number.isInteger(threads) || threads < 1) throw new CliError("--threads must be a positive integer");
  return threads;
}

/** Read and parse a JSON file, with one-line messages for a missing file or bad JSON. */
export async function readJsonFile(path: string, what: string): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(path, "utf8");
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new CliError(`cannot read ${what} file ${path}${code ? ` (${code})` : ""}`);
  }
  try {
    return JSON.parse(text);
  } catch (error) {
    throw new CliError(`${what} file ${path} is not valid JSON: ${(error as Error).message}`);
  }
}

/**
 * A `--wfe` file: one wavefront or a non-empty array of them (lib/validation/wavefront.ts). The first problem
 * becomes one line, "wavefront: ..." for a single object, "wavefront 2: ..." for an element of an array.
 */
export async function readWavefronts(path: string): Promise<OneOrMany<Wavefront>> {
  const parsed = wavefrontInputSchema.safeParse(await readJsonFile(path, "wavefront"));
  if (parsed.success) return parsed.data;
  const issue = parsed.error.issues[0];
  const index = typeof issue.path[0] === "number" ? ` ${issue.path[0]}` : "";
  throw new CliError(`wavefront${index}: ${issue.message}`);
}

/** Write a JSON value to stdout, waiting for the pipe to drain. */
export function writeJson(value: unknown): Promise<void> {
  return new Promise((resolve, reject) => {
    process.stdout.write(JSON.stringify(value) + "\n", (error) => (error ? reject(error) : resolve()));
  });
}
