import { z } from "zod";

export const LIST_LIMIT_DEFAULT = 50;
export const LIST_LIMIT_MAX = 500;

/** `?limit=` and `?cursor=` of every list (API.md "Lists"). */
export const pageQuerySchema = z.object({
  limit: z.coerce
    .number({ error: "limit must be an integer" })
    .int("limit must be an integer")
    .min(1, "limit must be >= 1")
    .max(LIST_LIMIT_MAX, `limit must be <= ${LIST_LIMIT_MAX}`)
    .default(LIST_LIMIT_DEFAULT),
  cursor: z
    .string()
    .max(100, "cursor is not one this server issued")
    .regex(/^[A-Za-z0-9_-]+$/, "cursor is not one this server issued")
    .nullable()
    .default(null),
});
export type PageQuery = z.infer<typeof pageQuerySchema>;

/** The search parameters of a request as a plain object (absent ones left out, so defaults apply). */
export function queryObject(url: string | URL): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [key, value] of new URL(url).searchParams) out[key] = value;
  return out;
}
