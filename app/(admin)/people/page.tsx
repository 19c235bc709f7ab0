import type { Metadata } from "next";
import Link from "next/link";
import { EmptyState, linkClass, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { RoleList } from "@/components/role-list";
import { requirePageActor } from "@/components/server/page";
import { INVITATION_HOURS, listInvitations } from "@/lib/db/invitations";
import { listUsers } from "@/lib/db/users";
import { AccountSwitch } from "./account-switch";
import { InviteForm } from "./invite-form";
import { RolesEditor } from "./roles-editor";
import { WithdrawButton } from "./withdraw-button";

export const metadata: Metadata = { title: "People" };

export default async function PeoplePage() {
  const { user, actor } = await requirePageActor("admin");
  const [people, invitations] = await Promise.all([listUsers(), listInvitations(actor)]);
  return (
    <div className="grid gap-8 xl:grid-cols-[20rem_1fr]">
      <section aria-labelledby="invite-heading">
        <PageHeading id="invite-heading" title="Invite a person" />
        <InviteForm hours={INVITATION_HOURS} />
      </section>
      <div className="flex min-w-0 flex-col gap-8">
        <section aria-labelledby="people-heading">
          <SectionHeading id="people-heading" aside={<span className="text-xs text-muted">{people.length} accounts</span>}>
            People
          </SectionHeading>
          <div className="overflow-x-auto">
            <table className="w-full border-collapse bg-surface text-sm" data-testid="people-table">
              <caption className="sr-only">Accounts, their roles and state</caption>
              <thead>
                <tr className="border-b border-line text-left text-xs text-muted">
                  <th scope="col" className={thClass}>Name</th>
                  <th scope="col" className={thClass}>E-mail</th>
                  <th scope="col" className={thClass}>Roles</th>
                  <th scope="col" className={thClass}>Since</th>
                  <th scope="col" className={thClass}>State</th>
                  <th scope="col" className={thClass}>Activity</th>
                </tr>
              </thead>
              <tbody>
                {people.map((person) => (
                  <tr key={person.id} className="border-b border-line align-top last:border-0" data-person={person.email}>
                    <td className={tdClass}>{person.name}</td>
                    <td className={tdClass}>{person.email}</td>
                    <td className={tdClass}>
                      <RolesEditor userId={person.id} email={person.email} roles={person.roles} />
                    </td>
                    <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{person.createdAt.slice(0, 10)}</td>
                    <td className={`${tdClass} text-xs`} data-testid="account-state">
                      <div className="flex flex-col gap-1">
                        {person.disabledAt === null ? <span className="text-good">active</span> : <span className="text-fault">disabled {formatTime(person.disabledAt)}</span>}
                        {person.id !== user.id && <AccountSwitch userId={person.id} email={person.email} disabled={person.disabledAt !== null} />}
                      </div>
                    </td>
                    <td className={`${tdClass} whitespace-nowrap text-xs`}>
                      <Link href={`/audit?person=${encodeURIComponent(person.email)}`} className={linkClass}>
                        audit log
                      </Link>
                      {person.id === user.id && <span className="ml-2 text-muted">(you)</span>}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>
        <section aria-labelledby="invitations-heading">
          <SectionHeading id="invitations-heading">Invitations</SectionHeading>
          {invitations.length === 0 ? (
            <EmptyState title="No invitations yet." testId="invitations-empty">
              Invite a person with the form: they receive a one-time link by e-mail and choose their password.
            </EmptyState>
          ) : (
            <div className="overflow-x-auto">
              <table className="w-full border-collapse bg-surface text-sm" data-testid="invitations-table">
                <caption className="sr-only">Invitations, newest first</caption>
                <thead>
                  <tr className="border-b border-line text-left text-xs text-muted">
                    <th scope="col" className={thClass}>E-mail</th>
                    <th scope="col" className={thClass}>Roles</th>
                    <th scope="col" className={thClass}>Invited (UTC)</th>
                    <th scope="col" className={thClass}>By</th>
                    <th scope="col" className={thClass}>State</th>
                    <th scope="col" className={thClass}><span className="sr-only">Withdraw</span></th>
                  </tr>
                </thead>
                <tbody>
                  {invitations.map((inv) => (
                    <tr key={inv.id} className="border-b border-line last:border-0" data-invitation={inv.email}>
                      <td className={tdClass}>{inv.email}</td>
                      <td className={tdClass}>
                        <RoleList roles={inv.roles} />
                      </td>
                      <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{formatTime(inv.createdAt)}</td>
                      <td className={`${tdClass} text-xs`}>{inv.invitedBy ?? "–"}</td>
                      <td className={`${tdClass} text-xs`} data-testid="invitation-state">
                        {inv.state === "pending"
                          ? `pending until ${formatTime(inv.expiresAt)}`
                          : inv.state === "accepted"
                            ? `accepted ${formatTime(inv.acceptedAt)}`
                            : inv.state}
                      </td>
                      <td className={tdClass}>{inv.state === "pending" && <WithdrawButton id={inv.id} email={inv.email} />}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </section>
      </div>
    </div>
  );
}
