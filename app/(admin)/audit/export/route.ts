import { withProblems } from "@/lib/api/problem";
import { requireActor } from "@/lib/auth/request";
import { auditEventsCsv } from "@/lib/db/audit";
import { queryObject } from "@/lib/validation/list";
import { auditQuerySchema } from "@/lib/validation/audit";

export const dynamic = "force-dynamic";

/** The audit log under the page's filters as CSV (admins, session only: a token is refused by the admin rule). */
export const GET = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const { person, action, subject } = auditQuerySchema.parse(queryObject(request.url));
  const csv = await auditEventsCsv(actor, { person, action, subject });
  const stamp = new Date().toISOString().slice(0, 19).replaceAll(":", "").replace("T", "-");
  return new Response(csv, {
    headers: {
      "content-type": "text/csv; charset=utf-8; header=present",
      "content-disposition": `attachment; filename="stillpoint-audit-${stamp}.csv"`,
      "cache-control": "no-store",
    },
  });
});
