import type { ReactNode } from "react";
import { WorkspaceShell } from "@/components/workspace-shell";
import { requirePageUser } from "@/lib/auth/page";

export const dynamic = "force-dynamic";

export default async function WorkspaceLayout({ children }: { children: ReactNode }) {
  const user = await requirePageUser();
  return <WorkspaceShell user={user}>{children}</WorkspaceShell>;
}
