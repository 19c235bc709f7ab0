import type { z } from "zod";
import { MalformedJsonError, NotFoundError, PayloadTooLargeError } from "../errors.ts";
import { queryObject } from "../validation/list.ts";
import { versionNumberSchema } from "../validation/registry.ts";

/** Largest JSON body a route reads (10,000 wavefronts of 120 terms fit well inside). */
export const MAX_JSON_BYTES = 32 * 1024 * 1024;

/**
 * The request's JSON body parsed with a schema: 400 when it is not JSON, 413 when too large, 422 (ZodError) when
 * it does not match.
 */
export async function readJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.output<S>> {
  return schema.parse(await readJsonValue(request));
}

/** The request's JSON body, not yet checked: 400 when it is not JSON, 413 when too large. */
export async function readJsonValue(request: Request): Promise<unknown> {
  const length = Number(request.headers.get("content-length") ?? "0");
  if (length > MAX_JSON_BYTES) throw new PayloadTooLargeError(`The body is ${length} bytes; the limit is ${MAX_JSON_BYTES}.`);
  return parseJsonText(await request.text());
}

/**
 * A request body's text as a JSON value.
 * @throws {PayloadTooLargeError} over MAX_JSON_BYTES; {MalformedJsonError} for no body or text that is not JSON
 */
export function parseJsonText(text: string): unknown {
  if (text.length > MAX_JSON_BYTES) throw new PayloadTooLargeError(`The body is over the limit of ${MAX_JSON_BYTES} bytes.`);
  let value: unknown;
  try {
    value = text.trim() === "" ? undefined : JSON.parse(text);
  } catch {
    throw new MalformedJsonError("The request body is not valid JSON.");
  }
  if (value === undefined) throw new MalformedJsonError("The request needs a JSON body.");
  return value;
}

/** The query string parsed with a schema (422 naming the parameter). */
export function readQuery<S extends z.ZodType>(request: Request, schema: S): z.output<S> {
  return schema.parse(queryObject(request.url));
}

/** A `{version}` path segment: an explicit positive integer; anything else names no version. */
export function versionParam(value: string): number {
  const parsed = versionNumberSchema.safeParse(value);
  if (!parsed.success) throw new NotFoundError(`"${value}" is not a version: name an explicit version number (there is no "latest" alias).`);
  return parsed.data;
}

/** A numeric id path segment. */
export function idParam(value: string, what: string): number {
  if (!/^[1-9]\d{0,14}$/.test(value)) throw new NotFoundError(`There is no ${what} "${value}".`);
  return Number(value);
}

/** Read a binary body up to a limit, refusing early from Content-Length. */
export async function readBytes(request: Request, maxBytes: number): Promise<Uint8Array> {
  const length = Number(request.headers.get("content-length") ?? "0");
  if (length > maxBytes) throw new PayloadTooLargeError(`The body is ${length} bytes; the limit is ${maxBytes}.`);
  const bytes = new Uint8Array(await request.arrayBuffer());
  if (bytes.byteLength > maxBytes) throw new PayloadTooLargeError(`The body is ${bytes.byteLength} bytes; the limit is ${maxBytes}.`);
  return bytes;
}
