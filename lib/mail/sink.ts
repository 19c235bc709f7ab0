import type { AddressObject } from "mailparser";
import { simpleParser } from "mailparser";
import { SMTPServer } from "smtp-server";
import { newReceivedId, storeReceivedMail, type ReceivedMail } from "./sinkStore.ts";

export interface MailSinkHandle {
  port: number;
  close(): Promise<void>;
}

/** Largest message the sink accepts. */
const MAX_MESSAGE_BYTES = 10 * 1024 * 1024;

function addresses(value: AddressObject | AddressObject[] | undefined): string[] {
  if (!value) return [];
  return (Array.isArray(value) ? value : [value]).flatMap((group) => group.value.map((a) => a.address ?? "").filter(Boolean));
}

/**
 * A local SMTP server that stands in for the mail service: it accepts every message on 127.0.0.1 (no TLS, no
 * authentication: it is reachable from this machine only) and keeps it in `dir` (see sinkStore.ts).
 * `port: 0` takes a free port.
 */
export async function startMailSink(options: { port: number; dir: string; log?: (line: string) => void }): Promise<MailSinkHandle> {
  const log = options.log ?? (() => {});
  const server = new SMTPServer({
    banner: "Stillpoint local mail sink",
    disabledCommands: ["AUTH", "STARTTLS"],
    authOptional: true,
    size: MAX_MESSAGE_BYTES,
    logger: false,
    // Addresses under .invalid (RFC 2606: never a real domain) are refused for good, as a real server refuses an
    // unknown mailbox; everything else is accepted.
    onRcptTo(address, _session, callback) {
      if (/\.invalid$/i.test(address.address)) {
        callback(Object.assign(new Error(`No such mailbox: ${address.address}`), { responseCode: 550 }));
        return;
      }
      callback();
    },
    // Stopping waits at most this long for a connection still open.
    closeTimeout: 2000,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (chunk: Buffer) => chunks.push(chunk));
      stream.on("error", callback);
      stream.on("end", () => {
        if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
          callback(Object.assign(new Error("Message too large"), { responseCode: 552 }));
          return;
        }
        const raw = Buffer.concat(chunks);
        void (async () => {
          const parsed = await simpleParser(raw);
          const kind = parsed.headers.get("x-stillpoint-kind");
          const mail: ReceivedMail = {
            id: newReceivedId(),
            receivedAt: new Date().toISOString(),
            envelope: {
              from: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
              to: session.envelope.rcptTo.map((r) => r.address),
            },
            from: addresses(parsed.from)[0] ?? null,
            to: addresses(parsed.to),
            subject: parsed.subject ?? "",
            messageId: parsed.messageId ?? null,
            kind: typeof kind === "string" ? kind : null,
            text: parsed.text ?? "",
          };
          await storeReceivedMail(options.dir, raw, mail);
          log(`received ${mail.id} for ${mail.envelope.to.join(", ")}: ${mail.subject}`);
        })().then(() => callback(), (error: Error) => callback(error));
      });
    },
  });
  server.on("error", (error) => log(`error: ${error.message}`));
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, "127.0.0.1", () => {
      server.off("error", reject);
      resolve();
    });
  });
  const address = server.server.address();
  return {
    port: typeof address === "object" && address !== null ? address.port : options.port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
