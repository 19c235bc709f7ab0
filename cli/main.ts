import { SURROGATE_NOTICE } from "../lib/surrogate/model.ts";
import { CliError } from "./errors.ts";

/** Every command lives in `cli/commands/<name>.ts` and exports `run(argv): Promise<number>`. */
const COMMANDS: Record<string, string> = {
  ttl: "exact TTL map(s) of wavefront(s) on a setup, JSON on stdout",
  train: "train a surrogate model locally and write a .stpm file",
  eval: "evaluate a .stpm model for wavefront(s), JSON on stdout",
  push: "register a local .stpm model as a new draft version on a server",
  worker: "take training work and mail from the shared queue (REDIS_URL, DATABASE_URL, SMTP_*)",
  "mail-sink": "a local SMTP server on 127.0.0.1 that keeps every message it receives in a folder",
};

const USAGE = [
  "usage: stillpoint <command> [options]",
  "",
  ...Object.entries(COMMANDS).map(([name, text]) => `  ${name.padEnd(9)} ${text}`),
  "",
  SURROGATE_NOTICE,
].join("\n");

export async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === "--help" || name === "-h") {
    process.stdout.write(USAGE + "\n");
    return name ? 0 : 2;
  }
  if (!(name in COMMANDS)) {
    process.stderr.write(`stillpoint: unknown command "${name}" (try --help)\n`);
    return 2;
  }
  try {
    const command = (await import(`./commands/${name}.ts`)) as { run(argv: string[]): Promise<number> };
    return await command.run(rest);
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    process.stderr.write(`stillpoint ${name}: ${message.split("\n")[0]}\n`);
    if (!(error instanceof CliError) && process.env.STILLPOINT_DEBUG) console.error(error);
    return 1;
  }
}
