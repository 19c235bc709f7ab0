import { withProblems } from "@/lib/api/problem";
import { requireActor } from "@/lib/auth/request";
import { getUser } from "@/lib/db/users";
import { UnauthenticatedError } from "@/lib/errors";
import { meSchema } from "@/lib/validation/user";

export const dynamic = "force-dynamic";

/** The signed-in person (or the person a token acts for): id, e-mail, name and roles. */
export const GET = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const user = await getUser(actor.userId);
  if (!user) throw new UnauthenticatedError("The account no longer exists.");
  return Response.json(meSchema.parse(user));
});
