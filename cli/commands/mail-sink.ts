import path from "node:path";
import { startMailSink } from "../../lib/mail/sink.ts";
import { CliError } from "../errors.ts";
import { parseOptions } from "../io.ts";

/**
 * `stillpoint mail-sink --port N --dir DIR`: a local SMTP server on 127.0.0.1 that stands in for the mail service;
 * every message it receives is kept in DIR as `<id>.eml` and `<id>.json` (lib/mail/sinkStore.ts). Runs until stopped.
 * `npm start` and `npm test` start it through `db/smtp.sh`.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, ["port", "dir"]);
  const port = Number(options.port);
  if (!Number.isInteger(port) || port < 1 || port > 65535) throw new CliError("--port must be an integer from 1 to 65535");
  const dir = path.resolve(options.dir);
  const sink = await startMailSink({ port, dir, log: (line) => process.stderr.write(`[mail-sink] ${line}\n`) });
  process.stderr.write(`[mail-sink] listening on 127.0.0.1:${sink.port}, keeping messages in ${dir}\n`);
  await new Promise<void>((resolve) => {
    process.once("SIGINT", () => resolve());
    process.once("SIGTERM", () => resolve());
  });
  await sink.close();
  process.stderr.write("[mail-sink] stopped\n");
  return 0;
}
