import { createHash } from "node:crypto";
import { readFile } from "node:fs/promises";
import { decodeModel, ModelFileError } from "../../lib/surrogate/modelFile.ts";
import { slugSchema } from "../../lib/validation/registry.ts";
import { CliError } from "../errors.ts";
import { parseOptions } from "../io.ts";

/**
 * `stillpoint push --model model.stpm --slug SLUG --server URL --token T`: register a locally trained model as a new
 * draft version. The file is checked here first (signature and checksums), sent with its SHA-256 in `Repr-Digest`,
 * and checked again by the server, which also compares its setup and Zernike set with the model's.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, ["model", "slug", "server", "token"]);
  if (!slugSchema.safeParse(options.slug).success) throw new CliError(`--slug ${JSON.stringify(options.slug)} is not a model slug`);
  let base: URL;
  try {
    base = new URL(options.server);
    if (base.protocol !== "http:" && base.protocol !== "https:") throw new Error();
  } catch {
    throw new CliError(`--server ${JSON.stringify(options.server)} is not an http(s) URL`);
  }
  let bytes: Uint8Array;
  try {
    bytes = new Uint8Array(await readFile(options.model));
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new CliError(`cannot read model file ${options.model}${code ? ` (${code})` : ""}`);
  }
  try {
    decodeModel(bytes);
  } catch (error) {
    if (error instanceof ModelFileError) throw new CliError(`${options.model}: ${error.message}`);
    throw error;
  }
  const url = new URL(`api/v1/models/${options.slug}/versions/upload`, base.href.endsWith("/") ? base : new URL(`${base.href}/`));
  let response: Response;
  try {
    response = await fetch(url, {
      method: "POST",
      headers: {
        authorization: `Bearer ${options.token}`,
        "content-type": "application/octet-stream",
        "repr-digest": `sha-256=:${createHash("sha256").update(bytes).digest("base64")}:`,
      },
      body: bytes as BodyInit,
    });
  } catch (error) {
    throw new CliError(`cannot reach ${base.origin}: ${(error as Error).message}`);
  }
  const text = await response.text();
  let body: Record<string, unknown> = {};
  try {
    body = JSON.parse(text) as Record<string, unknown>;
  } catch {
    // A non-JSON answer is reported by its status below.
  }
  if (response.status !== 201) {
    const detail = typeof body.detail === "string" ? body.detail : text.slice(0, 200);
    throw new CliError(`the server refused the model (${response.status}${typeof body.title === "string" ? ` ${body.title}` : ""}): ${detail}`);
  }
  process.stdout.write(JSON.stringify({ model: body.model, version: body.version, state: body.state, coefficientsSha256: body.coefficientsSha256 }) + "\n");
  process.stderr.write(`registered ${options.model} as ${body.model} version ${body.version} (${body.state})\n`);
  return 0;
}
