import { randomBytes } from "node:crypto";
import { mkdir, readdir, readFile, rename, writeFile } from "node:fs/promises";
import path from "node:path";

/**
 * What the local mail sink keeps of one message: the raw message as `<id>.eml` and this summary as `<id>.json`
 * beside it. Ids begin with the time of arrival (zero-padded milliseconds), so names sort oldest first.
 */
export interface ReceivedMail {
  id: string;
  receivedAt: string;
  /** The SMTP envelope: who the sender's server said it delivers to (Bcc included). */
  envelope: { from: string | null; to: string[] };
  from: string | null;
  to: string[];
  subject: string;
  messageId: string | null;
  /** The header naming the product's kind of mail, when the message has one. */
  kind: string | null;
  text: string;
}

const ID_PATTERN = /^\d{15}-[0-9a-f]{8}$/;

export function newReceivedId(now = Date.now()): string {
  return `${String(now).padStart(15, "0")}-${randomBytes(4).toString("hex")}`;
}

/** Keep one message: the raw bytes, then its summary (each written to a temporary name and renamed into place). */
export async function storeReceivedMail(dir: string, raw: Buffer, mail: ReceivedMail): Promise<void> {
  if (!ID_PATTERN.test(mail.id)) throw new Error(`not a received-mail id: ${mail.id}`);
  await mkdir(dir, { recursive: true });
  const write = async (name: string, data: string | Buffer) => {
    const temporary = path.join(dir, `.${name}.tmp`);
    await writeFile(temporary, data);
    await rename(temporary, path.join(dir, name));
  };
  await write(`${mail.id}.eml`, raw);
  await write(`${mail.id}.json`, JSON.stringify(mail, null, 2) + "\n");
}

/** The messages the sink kept in `dir`, newest first (an empty list when the folder does not exist yet). */
export async function readReceivedMail(dir: string, options: { limit?: number } = {}): Promise<ReceivedMail[]> {
  let names: string[];
  try {
    names = await readdir(dir);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === "ENOENT") return [];
    throw error;
  }
  const ids = names
    .filter((n) => n.endsWith(".json") && ID_PATTERN.test(n.slice(0, -5)))
    .map((n) => n.slice(0, -5))
    .sort()
    .reverse()
    .slice(0, options.limit ?? 200);
  const out: ReceivedMail[] = [];
  for (const id of ids) {
    try {
      out.push(JSON.parse(await readFile(path.join(dir, `${id}.json`), "utf8")) as ReceivedMail);
    } catch (error) {
      // A file removed between the listing and the read is simply gone.
      if ((error as NodeJS.ErrnoException).code !== "ENOENT") throw error;
    }
  }
  return out;
}
