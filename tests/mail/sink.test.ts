import { mkdtemp, readdir, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parseConfig } from "@/lib/config";
import { startMailSink, type MailSinkHandle } from "@/lib/mail/sink";
import { readReceivedMail } from "@/lib/mail/sinkStore";
import { createMailTransport, sendStoredMail } from "@/lib/mail/transport";
import { freePort } from "../helpers/mail";

let dir = "";
let sink: MailSinkHandle;

beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), "stillpoint-sink-"));
  sink = await startMailSink({ port: 0, dir });
});

afterAll(async () => {
  await sink?.close();
  await rm(dir, { recursive: true, force: true });
});

function transportTo(port: number) {
  const config = parseConfig({ SMTP_PORT: String(port), MAIL_FROM: "Stillpoint <registry@stillpoint.test>" }).mail;
  return { config, transport: createMailTransport(config) };
}

describe("the local mail sink", () => {
  it("keeps a message sent through the SMTP transport as .eml and .json, with envelope, subject, kind and text", async () => {
    const { config, transport } = transportTo(sink.port);
    const body = "Worst error 0.012 pm/nrad; ±60 nrad, Δ = 3 nm.\nSecond line.";
    await sendStoredMail(transport, { id: 41, kind: "version-submitted", recipient: "reviewer@velora.test", subject: "Première", body, state: "queued", attempts: 1 }, config);
    await sendStoredMail(transport, { id: 42, kind: "version-decided", recipient: "modeller@velora.test", subject: "Second", body: "x", state: "queued", attempts: 1 }, config);
    transport.close();

    const received = await readReceivedMail(dir);
    expect(received.map((m) => m.subject)).toEqual(["Second", "Première"]);
    const first = received[1];
    expect(first.envelope).toEqual({ from: "registry@stillpoint.test", to: ["reviewer@velora.test"] });
    expect(first.from).toBe("registry@stillpoint.test");
    expect(first.to).toEqual(["reviewer@velora.test"]);
    expect(first.kind).toBe("version-submitted");
    expect(first.text.trim()).toBe(body);
    expect(first.messageId).toMatch(/^<.+@.+>$/);

    const names = (await readdir(dir)).sort();
    expect(names).toEqual([`${received[1].id}.eml`, `${received[1].id}.json`, `${received[0].id}.eml`, `${received[0].id}.json`].sort());
    const raw = await readFile(path.join(dir, `${first.id}.eml`), "utf8");
    expect(raw).toMatch(/^X-Stillpoint-Kind: version-submitted\r?$/m);
    expect(raw).toMatch(/^To: reviewer@velora\.test\r?$/m);
  });

  it("reads newest first, honours a limit, and finds nothing in a folder that does not exist", async () => {
    expect((await readReceivedMail(dir, { limit: 1 })).map((m) => m.subject)).toEqual(["Second"]);
    expect(await readReceivedMail(path.join(dir, "missing"))).toEqual([]);
  });

  it("refuses a second sink on a port that is taken, and frees its port when closed", async () => {
    await expect(startMailSink({ port: sink.port, dir })).rejects.toThrow(/EADDRINUSE/);
    const port = await freePort();
    const other = await startMailSink({ port, dir });
    expect(other.port).toBe(port);
    await other.close();
    const again = await startMailSink({ port, dir });
    await again.close();
  });
});
