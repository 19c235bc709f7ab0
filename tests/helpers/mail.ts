import { createServer } from "node:net";
import { getConfig } from "@/lib/config";
import { readReceivedMail, type ReceivedMail } from "@/lib/mail/sinkStore";
import { startMailWorker, type MailWorkerHandle } from "@/lib/mail/worker";

/** The folder the run's local mail sink keeps messages in (scripts/test.sh sets MAIL_SINK_DIR). */
export function sinkDir(): string {
  const dir = getConfig().mail.sinkDir;
  if (!dir) throw new Error("MAIL_SINK_DIR is not set: run the tests through npm test");
  return dir;
}

/** Wait until the sink in `dir` holds a message that `match` accepts; returns every such message. */
export async function waitForMail(match: (mail: ReceivedMail) => boolean, options: { dir?: string; timeoutMs?: number; count?: number } = {}): Promise<ReceivedMail[]> {
  const dir = options.dir ?? sinkDir();
  const until = Date.now() + (options.timeoutMs ?? 30_000);
  for (;;) {
    const found = (await readReceivedMail(dir, { limit: 2000 })).filter(match);
    if (found.length >= (options.count ?? 1)) return found;
    if (Date.now() > until) throw new Error(`no mail in ${dir} matched within ${options.timeoutMs ?? 30_000} ms (found ${found.length})`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

/** A mail worker in this process, sending through the configured SMTP server. */
export function inProcessMailWorker(options: { sweepEveryMs?: number; sweepAfterMs?: number } = {}): MailWorkerHandle {
  return startMailWorker({ log: () => {}, ...options });
}

/** A TCP port nobody listens on right now (taken from the system, then released). */
export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => {
      const address = server.address();
      const port = typeof address === "object" && address ? address.port : 0;
      server.close(() => resolve(port));
    });
  });
}
