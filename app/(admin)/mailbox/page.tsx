import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { EmptyState, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { getConfig } from "@/lib/config";
import { listNotifications } from "@/lib/db/notifications";
import { readReceivedMail } from "@/lib/mail/sinkStore";

export const metadata: Metadata = { title: "Mailbox" };
export const dynamic = "force-dynamic";

/**
 * What the local mail sink received, newest first, and the state of every mail the product sent (tries, last
 * error). Only in a development start (`npm start` sets MAILBOX_PAGE=1); elsewhere the page does not exist.
 */
export default async function MailboxPage() {
  const { actor } = await requirePageActor("admin");
  const { mailboxPage, sinkDir, smtp } = getConfig().mail;
  if (!mailboxPage) notFound();
  const [received, sent] = await Promise.all([sinkDir ? readReceivedMail(sinkDir, { limit: 100 }) : Promise.resolve([]), listNotifications(actor, { limit: 100 })]);

  return (
    <div className="flex flex-col gap-6">
      <PageHeading title="Mailbox">
        <span className="text-xs text-muted">
          local sink on {smtp.host}:{smtp.port} (development start only)
        </span>
      </PageHeading>

      <section aria-labelledby="received-heading">
        <SectionHeading id="received-heading" aside={<span className="text-xs text-muted">newest first, last 100</span>}>
          Received by the local sink
        </SectionHeading>
        {received.length === 0 ? (
          <EmptyState title="The sink has received nothing yet." testId="mailbox-empty">
            Mail appears here when a version is submitted for review or decided on.
          </EmptyState>
        ) : (
          <ul className="flex flex-col gap-2" data-testid="mailbox">
            {received.map((mail) => (
              <li key={mail.id} className="rounded border border-line bg-surface" data-testid="mailbox-message">
                <details>
                  <summary className="cursor-pointer px-3 py-2 text-sm">
                    <span className="font-mono text-xs text-muted">{formatTime(mail.receivedAt, true)}</span>{" "}
                    <span className="font-medium">{mail.subject || "(no subject)"}</span>{" "}
                    <span className="text-xs text-muted">to {mail.envelope.to.join(", ")}</span>
                  </summary>
                  <div className="border-t border-line px-3 py-2">
                    <dl className="mb-2 grid grid-cols-[6rem_1fr] gap-x-3 text-xs">
                      <dt className="text-muted">From</dt>
                      <dd className="font-mono">{mail.from ?? mail.envelope.from ?? "–"}</dd>
                      <dt className="text-muted">To</dt>
                      <dd className="font-mono">{mail.envelope.to.join(", ")}</dd>
                      <dt className="text-muted">Kind</dt>
                      <dd className="font-mono">{mail.kind ?? "–"}</dd>
                      <dt className="text-muted">Message-ID</dt>
                      <dd className="break-all font-mono">{mail.messageId ?? "–"}</dd>
                    </dl>
                    <pre className="whitespace-pre-wrap break-words font-mono text-xs leading-5" data-testid="mailbox-body">
                      {mail.text}
                    </pre>
                  </div>
                </details>
              </li>
            ))}
          </ul>
        )}
      </section>

      <section aria-labelledby="sent-heading">
        <SectionHeading id="sent-heading" aside={<span className="text-xs text-muted">newest first, last 100</span>}>
          Sent through the queue
        </SectionHeading>
        {sent.length === 0 ? (
          <EmptyState title="No mail has been sent yet." />
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full border-collapse bg-surface text-sm" data-testid="notifications">
              <caption className="sr-only">Every mail the product sent or is sending, with its tries</caption>
              <thead>
                <tr className="border-b border-line text-left text-xs text-muted">
                  <th scope="col" className={thClass}>Written (UTC)</th>
                  <th scope="col" className={thClass}>Kind</th>
                  <th scope="col" className={thClass}>To</th>
                  <th scope="col" className={thClass}>Subject</th>
                  <th scope="col" className={thClass}>State</th>
                  <th scope="col" className={`${thClass} text-right`}>Tries</th>
                  <th scope="col" className={thClass}>Last error</th>
                </tr>
              </thead>
              <tbody>
                {sent.map((n) => (
                  <tr key={n.id} className="border-b border-line align-top last:border-0">
                    <td className={`${tdClass} font-mono text-xs`}>{formatTime(n.createdAt, true)}</td>
                    <td className={`${tdClass} font-mono text-xs`}>{n.kind}</td>
                    <td className={`${tdClass} text-xs`}>{n.recipient}</td>
                    <td className={`${tdClass} text-xs`}>{n.subject}</td>
                    <td className={`${tdClass} text-xs`}>{n.state}</td>
                    <td className={`${tdClass} text-right font-mono text-xs`}>{n.attempts}</td>
                    <td className={`${tdClass} max-w-xs break-words text-xs text-muted`}>{n.lastError ?? ""}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>
    </div>
  );
}
