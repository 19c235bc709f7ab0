import type { Metadata } from "next";
import { PageHeading } from "@/components/page-heading";
import { RoleList } from "@/components/role-list";
import { requirePageUser } from "@/lib/auth/page";
import { listAuditEventsByActor } from "@/lib/db/audit";
import { PasswordForm } from "./password-form";
import { ProfileForm } from "./profile-form";

export const metadata: Metadata = { title: "Account" };

const ACTIVITY_LIMIT = 20;

export default async function AccountPage() {
  const user = await requirePageUser();
  const events = await listAuditEventsByActor(user.id, ACTIVITY_LIMIT);
  return (
    <div className="grid gap-8 lg:grid-cols-[24rem_1fr]">
      <section aria-labelledby="account-heading">
        <PageHeading id="account-heading" title="Account" />
        <dl className="mb-6 grid grid-cols-[7rem_1fr] gap-x-3 gap-y-2 text-sm">
          <dt className="text-muted">E-mail</dt>
          <dd>{user.email}</dd>
          <dt className="text-muted">Roles</dt>
          <dd>
            <RoleList roles={user.roles} />
          </dd>
          <dt className="text-muted">Member since</dt>
          <dd className="font-mono text-xs">{user.createdAt.slice(0, 10)}</dd>
        </dl>
        <ProfileForm name={user.name} />
        <PasswordForm />
      </section>
      <section aria-labelledby="activity-heading">
        <h2 id="activity-heading" className="mb-2 border-b border-line pb-2 text-md font-semibold">
          Your recent activity
        </h2>
        {events.length === 0 ? (
          <p className="text-sm text-muted">No recorded activity.</p>
        ) : (
          <table className="w-full border-collapse bg-surface text-sm">
            <caption className="sr-only">Your last {ACTIVITY_LIMIT} recorded actions, newest first</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className="px-2 py-1.5 font-medium">When (UTC)</th>
                <th scope="col" className="px-2 py-1.5 font-medium">Action</th>
              </tr>
            </thead>
            <tbody>
              {events.map((event) => (
                <tr key={event.id} className="border-b border-line last:border-0">
                  <td className="px-2 py-1.5 font-mono text-xs">{event.occurredAt.slice(0, 19).replace("T", " ")}</td>
                  <td className="px-2 py-1.5 font-mono text-xs">{event.action}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
