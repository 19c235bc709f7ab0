import type { Metadata } from "next";
import { PageHeading } from "@/components/page-heading";
import { RoleList } from "@/components/role-list";
import { requirePageRole } from "@/lib/auth/page";
import { listUsers } from "@/lib/db/users";

export const metadata: Metadata = { title: "People" };

export default async function PeoplePage() {
  await requirePageRole("admin");
  const people = await listUsers();
  return (
    <section aria-labelledby="people-heading">
      <PageHeading id="people-heading" title="People">
        <span className="text-sm text-muted">{people.length} accounts</span>
      </PageHeading>
      <table className="w-full border-collapse bg-surface text-sm">
        <caption className="sr-only">Accounts and their roles</caption>
        <thead>
          <tr className="border-b border-line text-left text-xs text-muted">
            <th scope="col" className="px-2 py-1.5 font-medium">Name</th>
            <th scope="col" className="px-2 py-1.5 font-medium">E-mail</th>
            <th scope="col" className="px-2 py-1.5 font-medium">Roles</th>
            <th scope="col" className="px-2 py-1.5 font-medium">Since</th>
          </tr>
        </thead>
        <tbody>
          {people.map((person) => (
            <tr key={person.id} className="border-b border-line last:border-0">
              <td className="px-2 py-1.5">{person.name}</td>
              <td className="px-2 py-1.5">{person.email}</td>
              <td className="px-2 py-1.5">
                <RoleList roles={person.roles} />
              </td>
              <td className="px-2 py-1.5 font-mono text-xs">{person.createdAt.slice(0, 10)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}
