import { readFile } from "node:fs/promises";
import { parseArgs } from "node:util";
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

/** Write a JSON value to stdout, waiting for the pipe to drain. */
export function writeJson(value: unknown): Promise<void> {
  return new Promise((resolve, reject) => {
    process.stdout.write(JSON.stringify(value) + "\n", (error) => (error ? reject(error) : resolve()));
  });
}
