import { withProblems } from "@/lib/api/problem";
import { requireUser } from "@/lib/auth/session";
import { meSchema } from "@/lib/validation/user";

export const dynamic = "force-dynamic";

/** The signed-in person: id, e-mail, name and roles. */
export const GET = withProblems(async () => {
  const user = await requireUser();
  return Response.json(meSchema.parse(user));
});
