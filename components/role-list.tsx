import type { Role } from "@/lib/access/roles";

export function RoleList({ roles }: { roles: readonly Role[] }) {
  if (roles.length === 0) return <span className="text-muted">no roles</span>;
  return (
    <ul className="flex flex-wrap gap-1" aria-label="Roles">
      {roles.map((role) => (
        <li key={role} className="rounded-sm border border-line bg-sunken px-1.5 py-0.5 font-mono text-xs">
          {role}
        </li>
      ))}
    </ul>
  );
}
