import { withProblems } from "@/lib/api/problem";
import { requireUser } from "@/lib/auth/session";

export const dynamic = "force-dynamic";

/** The signed-in person: id, e-mail, name and roles. */
export const GET = withProblems(async () => {
  const user = await requireUser();
  return Response.json({ id: user.id, email: user.email, name: user.name, roles: user.roles });
});
