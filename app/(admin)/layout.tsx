import type { ReactNode } from "react";
import { WorkspaceShell } from "@/components/workspace-shell";
import { requirePageRole } from "@/lib/auth/page";

export const dynamic = "force-dynamic";

export default async function AdminLayout({ children }: { children: ReactNode }) {
  const user = await requirePageRole("admin");
  return <WorkspaceShell user={user}>{children}</WorkspaceShell>;
}
