import { z } from "zod";
import { pageQuerySchema } from "./list.ts";

const blankIsAbsent = (value: unknown) => (typeof value === "string" && value.trim() === "" ? undefined : value);

/** The audit log's filters (`/audit?person=&action=&subject=`) and its pages. */
export const auditQuerySchema = pageQuerySchema.extend({
  person: z.preprocess(blankIsAbsent, z.email("person must be an e-mail address").max(254).transform((e) => e.trim().toLowerCase()).optional()),
  action: z.preprocess(
    blankIsAbsent,
    z.string().max(64, "action may have at most 64 characters").regex(/^[a-z][a-z.-]*$/, "action holds lower-case letters, dots and hyphens, e.g. token or token.revoke").optional(),
  ),
  subject: z.preprocess(
    blankIsAbsent,
    z
      .string()
      .max(80, "subject may have at most 80 characters")
      .regex(/^[a-z_]+(:[A-Za-z0-9_.@-]+)?$/, "subject is a type such as user, or type:id such as model_version:12")
      .optional(),
  ),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;
