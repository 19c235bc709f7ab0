import { openApiDocument } from "@/lib/api/openapi";
import { withProblems } from "@/lib/api/problem";

export const dynamic = "force-static";

export const GET = withProblems(async () => Response.json(openApiDocument()));
