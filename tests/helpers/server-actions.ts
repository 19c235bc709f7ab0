import { readFileSync } from "node:fs";
import path from "node:path";
import type { AppServer } from "./app-server";
import { REPO_ROOT } from "./test-database";

type Agent = ReturnType<AppServer["agent"]>;

/** The id the production build gave an exported server action (.next/server/server-reference-manifest.json). */
export function actionId(filename: string, exportedName: string): string {
  const manifest = JSON.parse(readFileSync(path.join(REPO_ROOT, ".next/server/server-reference-manifest.json"), "utf8")) as {
    node: Record<string, { filename: string; exportedName: string }>;
  };
  const found = Object.entries(manifest.node).find(([, entry]) => entry.filename === filename && entry.exportedName === exportedName);
  if (!found) throw new Error(`the build has no server action ${exportedName} in ${filename}`);
  return found[0];
}

/** Calls a server action as the framework's client does (POST with Next-Action); answers the status and the RSC text. */
export async function callAction(agent: Agent, pagePath: string, id: string, args: unknown[]): Promise<{ status: number; text: string; location?: string }> {
  const response = await agent
    .post(pagePath)
    .set("Next-Action", id)
    .set("Accept", "text/x-component")
    .set("Content-Type", "text/plain;charset=UTF-8")
    .send(JSON.stringify(args))
    .redirects(0)
    .buffer(true)
    .parse((res, done) => {
      let text = "";
      res.on("data", (chunk: Buffer) => (text += chunk.toString("utf8")));
      res.on("end", () => done(null, text));
    });
  const text = typeof response.body === "string" ? response.body : (response.text ?? "");
  return { status: response.status, text, location: response.headers.location };
}

/**
 * Calls a form's server action (its last argument a FormData) as a multipart request: part "0" holds the arguments, the
 * FormData referred to as "$K1" and sent empty, so every field is missing and the action's validation refuses it.
 */
export async function callFormAction(agent: Agent, pagePath: string, id: string, leading: unknown[]): Promise<{ status: number; text: string; location?: string }> {
  const response = await agent
    .post(pagePath)
    .set("Next-Action", id)
    .set("Accept", "text/x-component")
    .field("0", JSON.stringify([...leading, "$K1"]))
    .redirects(0)
    .buffer(true)
    .parse((res, done) => {
      let text = "";
      res.on("data", (chunk: Buffer) => (text += chunk.toString("utf8")));
      res.on("end", () => done(null, text));
    });
  const text = typeof response.body === "string" ? response.body : (response.text ?? "");
  return { status: response.status, text, location: response.headers.location };
}
