import type { ReactNode } from "react";
import { getConfig } from "@/lib/config";
import type { UserSummary } from "@/lib/db/users";
import { navItemsFor } from "./navigation";
import { NavLinks } from "./nav-links";
import { SignOutButton } from "./sign-out-button";
import { StandingNotice } from "./standing-notice";

export function WorkspaceShell({ user, children }: { user: UserSummary; children: ReactNode }) {
  const items = navItemsFor(user.roles, { mailbox: getConfig().mail.mailboxPage }).map(({ href, label }) => ({ href, label }));
  return (
    <div className="flex min-h-screen flex-col">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:bg-surface focus:p-2">
        Skip to content
      </a>
      <header className="border-b border-line bg-surface">
        <div className="mx-auto flex max-w-page items-center gap-6 px-4 py-2">
          <span className="font-mono text-sm font-medium tracking-tight">
            stillpoint<span className="text-accent">·</span>
          </span>
          <NavLinks items={items} />
          <div className="ml-auto flex items-center gap-3 text-sm">
            <span className="text-muted" data-testid="signed-in-as">
              {user.email}
            </span>
            <SignOutButton />
          </div>
        </div>
      </header>
      <main id="main" className="mx-auto w-full max-w-page flex-1 px-4 py-6">
        {children}
      </main>
      <footer className="border-t border-line">
        <div className="mx-auto max-w-page px-4 py-3">
          <StandingNotice />
        </div>
      </footer>
    </div>
  );
}
