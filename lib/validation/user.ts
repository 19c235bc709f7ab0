import { z } from "zod";
import { ROLES } from "../access/roles";

export const userNameSchema = z
  .string()
  .trim()
  .min(2, "A name needs at least 2 characters.")
  .max(120, "A name may have at most 120 characters.");

export const updateProfileSchema = z.object({ name: userNameSchema });
export type UpdateProfileInput = z.infer<typeof updateProfileSchema>;

/** What GET /api/v1/me answers. */
export const meSchema = z.object({
  id: z.number().int().positive(),
  email: z.string(),
  name: z.string(),
  roles: z.array(z.enum(ROLES)),
});
export type Me = z.infer<typeof meSchema>;

/** A new password (an invitation's, later a change's): bcrypt reads at most 72 bytes, so longer ones are refused. */
export const newPasswordSchema = z
  .string({ error: "Enter a password." })
  .min(12, "A password needs at least 12 characters.")
  .refine((p) => new TextEncoder().encode(p).length <= 72, "A password may have at most 72 bytes (about 72 plain letters).");

const rolesSchema = z
  .array(z.enum(ROLES, { error: `roles may be ${ROLES.join(", ")}` }))
  .min(1, "Give at least one role (to shut an account, disable it).")
  .refine((r) => new Set(r).size === r.length, "A role is listed twice.");

/** An admin invites a person by e-mail with the roles the account will hold. */
export const inviteSchema = z.strictObject({
  email: z.email("Enter an e-mail address.").max(254, "An e-mail address may have at most 254 characters."),
  roles: rolesSchema,
});
export type InviteInput = z.infer<typeof inviteSchema>;

/** The invited person sets their name and password. */
export const acceptInvitationSchema = z
  .strictObject({ name: userNameSchema, password: newPasswordSchema, confirm: z.string() })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });
export type AcceptInvitationInput = z.infer<typeof acceptInvitationSchema>;

/** An admin sets a person's roles. */
export const setRolesSchema = z.strictObject({
  userId: z.number({ error: "userId must be an integer" }).int().positive(),
  roles: rolesSchema,
});
export type SetRolesInput = z.infer<typeof setRolesSchema>;
