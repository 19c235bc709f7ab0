"use server";

import { revalidatePath } from "next/cache";
import { currentRequestAddress } from "@/components/server/action";
import { hashPassword, verifyPassword } from "@/lib/auth/password";
import { keepCurrentSession } from "@/lib/auth/reissue";
import { requireUser } from "@/lib/auth/session";
import { recordAuditEvent } from "@/lib/db/audit";
import { findCredentialsByEmail, setPasswordHash, updateUserName, type UserSummary } from "@/lib/db/users";
import { UnauthenticatedError } from "@/lib/errors";
import { changePasswordSchema, updateProfileSchema } from "@/lib/validation/user";

/**
 * The person behind a form of this page, or the refusal's message: a session that ended (account disabled, password
 * changed elsewhere) gets the form's message, not the error page.
 */
async function formUser(): Promise<UserSummary | string> {
  try {
    return await requireUser();
  } catch (error) {
    if (error instanceof UnauthenticatedError) return error.message;
    throw error;
  }
}

export interface ProfileFormState {
  status: "idle" | "saved" | "invalid";
  message?: string;
}

export async function updateProfile(_previous: ProfileFormState, formData: FormData): Promise<ProfileFormState> {
  const user = await formUser();
  if (typeof user === "string") return { status: "invalid", message: user };
  const parsed = updateProfileSchema.safeParse({ name: formData.get("name") });
  if (!parsed.success) {
    return { status: "invalid", message: parsed.error.issues[0]?.message ?? "That name cannot be used." };
  }
  await updateUserName(user.id, parsed.data.name);
  await recordAuditEvent({
    actorUserId: user.id,
    clientAddress: await currentRequestAddress(),
    action: "profile.renamed",
    subjectType: "user",
    subjectId: user.id,
    detail: { from: user.name, to: parsed.data.name },
  });
  revalidatePath("/", "layout");
  return { status: "saved", message: "Name saved." };
}

export interface PasswordFormState {
  status: "idle" | "saved" | "invalid";
  message?: string;
  /** Field messages by field name. */
  fieldErrors?: Record<string, string>;
}

/**
 * Change one's own password: the current one must match; the new hash is stored and the session epoch raised, which
 * ends every other session of this person at its next request; this session gets the new epoch and stays.
 */
export async function changePassword(_previous: PasswordFormState, formData: FormData): Promise<PasswordFormState> {
  const user = await formUser();
  if (typeof user === "string") return { status: "invalid", message: user };
  const parsed = changePasswordSchema.safeParse({
    currentPassword: formData.get("currentPassword"),
    newPassword: formData.get("newPassword"),
    confirmPassword: formData.get("confirmPassword"),
  });
  if (!parsed.success) {
    const fieldErrors: Record<string, string> = {};
    for (const issue of parsed.error.issues) fieldErrors[String(issue.path[0] ?? "form")] ??= issue.message;
    return { status: "invalid", message: "The password was not changed.", fieldErrors };
  }
  const credentials = await findCredentialsByEmail(user.email);
  if (!credentials || !(await verifyPassword(parsed.data.currentPassword, credentials.passwordHash))) {
    await recordAuditEvent({ actorUserId: user.id, clientAddress: await currentRequestAddress(), action: "password.change-refused", subjectType: "user", subjectId: user.id });
    return { status: "invalid", message: "The password was not changed.", fieldErrors: { currentPassword: "That is not your current password." } };
  }
  const epoch = await setPasswordHash(user.id, await hashPassword(parsed.data.newPassword));
  await keepCurrentSession(epoch);
  await recordAuditEvent({ actorUserId: user.id, clientAddress: await currentRequestAddress(), action: "password.change", subjectType: "user", subjectId: user.id });
  return { status: "saved", message: "Password changed. Your other sessions have ended." };
}
