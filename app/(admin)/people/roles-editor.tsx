"use client";

import { useRouter } from "next/navigation";
import { useState, useTransition } from "react";
import { ROLES, type Role } from "@/lib/access/roles";
import { setRolesAction } from "./actions";

/** A person's roles as checkboxes, saved together; the server refuses what may not be (the last admin's admin role). */
export function RolesEditor({ userId, email, roles }: { userId: number; email: string; roles: readonly Role[] }) {
  const router = useRouter();
  const [chosen, setChosen] = useState<Role[]>([...roles]);
  const [error, setError] = useState<string | null>(null);
  const [saved, setSaved] = useState(false);
  const [busy, startTransition] = useTransition();
  const changed = chosen.length !== roles.length || chosen.some((r) => !roles.includes(r));

  function toggle(role: Role, on: boolean) {
    setSaved(false);
    setChosen((current) => ROLES.filter((r) => (r === role ? on : current.includes(r))));
  }

  function save() {
    startTransition(async () => {
      const result = await setRolesAction({ userId, roles: chosen });
      if (result.ok) {
        setError(null);
        setSaved(true);
        router.refresh();
      } else setError(result.formError ?? Object.values(result.fieldErrors)[0] ?? "The roles could not be saved.");
    });
  }

  return (
    <div className="flex flex-col gap-1" role="group" aria-label={`Roles of ${email}`}>
      <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
        {/* Two columns of two, the same in every row, whatever the table's width. */}
        <div className="grid grid-cols-2 gap-x-3 gap-y-1">
          {ROLES.map((role) => (
            <label key={role} className="flex items-center gap-1 font-mono text-xs">
              <input type="checkbox" checked={chosen.includes(role)} onChange={(e) => toggle(role, e.target.checked)} disabled={busy} />
              {role}
            </label>
          ))}
        </div>
        {changed && (
          <button type="button" onClick={save} disabled={busy} className="rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken disabled:opacity-60">
            {busy ? "Saving…" : "Save roles"}
          </button>
        )}
        {saved && !changed && (
          <span role="status" className="text-xs text-good">
            Saved
          </span>
        )}
      </div>
      {error && (
        <span role="alert" className="text-xs text-fault">
          {error}
        </span>
      )}
    </div>
  );
}
