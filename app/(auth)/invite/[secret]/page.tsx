import type { Metadata } from "next";
import Link from "next/link";
import { linkClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { RoleList } from "@/components/role-list";
import { StandingNotice } from "@/components/standing-notice";
import { INVITATION_REFUSALS, openInvitation } from "@/lib/db/invitations";
import { AcceptForm } from "./accept-form";

export const metadata: Metadata = { title: "Accept the invitation", referrer: "no-referrer" };
export const dynamic = "force-dynamic";

/** Where an invitation link lands (open to signed-out visitors: the link's secret is the credential). */
export default async function AcceptInvitationPage({ params }: { params: Promise<{ secret: string }> }) {
  const { secret } = await params;
  const invitation = await openInvitation(secret);
  return (
    <div className="flex min-h-screen flex-col">
      <main className="mx-auto flex w-full max-w-form flex-1 flex-col justify-center px-4 py-12">
        <p className="font-mono text-sm font-medium tracking-tight">
          stillpoint<span className="text-accent">·</span>
        </p>
        <h1 className="mb-1 mt-6 text-xl font-semibold">Accept the invitation</h1>
        {invitation.ok ? (
          <AcceptForm secret={secret} email={invitation.email}>
            <div className="mb-6 flex flex-col gap-1 text-sm text-muted">
              <div className="flex flex-wrap items-center gap-2">
                <span>Your roles:</span>
                <RoleList roles={invitation.roles} />
              </div>
              <p>The link works once, until {formatTime(invitation.expiresAt)} UTC.</p>
            </div>
          </AcceptForm>
        ) : (
          <div className="mt-4 flex flex-col gap-3">
            <p role="alert" className="rounded border border-fault bg-fault-soft px-3 py-2 text-sm text-fault" data-testid="invitation-refused">
              {INVITATION_REFUSALS[invitation.reason]}
            </p>
            <Link href="/sign-in" className={`text-sm ${linkClass}`}>
              Go to the sign-in page
            </Link>
          </div>
        )}
      </main>
      <footer className="mx-auto w-full max-w-form px-4 pb-6">
        <StandingNotice />
      </footer>
    </div>
  );
}
