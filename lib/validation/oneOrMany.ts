import { z } from "zod";

/** What a one-or-many reader gives back: the items, and whether the input was a single object. */
export interface OneOrMany<T> {
  single: boolean;
  items: T[];
}

/**
 * One object or a non-empty array of them (DESIGN.md: `--wfe` and the evaluation routes take either, and
 * answer in the same shape). Issues of an array element carry its index first in their path; an empty
 * array is refused with "<what> list must not be empty".
 */
export function oneOrMany<T extends z.ZodType>(item: T, what: string) {
  const itemJson = z.toJSONSchema(item, { target: "draft-2020-12", io: "input", unrepresentable: "any" });
  const { $schema: _dialect, ...itemSchema } = itemJson as Record<string, unknown>;
  return z
    .unknown()
    .transform((value, context): OneOrMany<z.output<T>> => {
      const single = !Array.isArray(value);
      const list: unknown[] = single ? [value] : (value as unknown[]);
      if (list.length === 0) {
        context.addIssue({ code: "custom", message: `${what} list must not be empty` });
        return z.NEVER;
      }
      const items: z.output<T>[] = [];
      for (let i = 0; i < list.length; i++) {
        const parsed = item.safeParse(list[i]);
        if (!parsed.success) {
          for (const issue of parsed.error.issues) {
            context.addIssue({ ...issue, path: single ? issue.path : [i, ...issue.path] } as never);
          }
          return z.NEVER;
        }
        items.push(parsed.data);
      }
      return { single, items };
    })
    .meta({ anyOf: [itemSchema, { type: "array", minItems: 1, items: itemSchema }] });
}
