"use server";

import { revalidatePath } from "next/cache";
import { currentRequestAddress } from "@/components/server/action";
import { requireUser } from "@/lib/auth/session";
import { recordAuditEvent } from "@/lib/db/audit";
import { updateUserName } from "@/lib/db/users";
import { updateProfileSchema } from "@/lib/validation/user";

export interface ProfileFormState {
  status: "idle" | "saved" | "invalid";
  message?: string;
}

export async function updateProfile(_previous: ProfileFormState, formData: FormData): Promise<ProfileFormState> {
  const user = await requireUser();
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
