import { hasAnyRole, type Role } from "@/lib/access/roles";

export interface NavItem {
  href: string;
  label: string;
  /** Shown to people holding any of these roles. */
  roles: readonly Role[];
  /** Shown only when this feature of the start is on (the mailbox exists in a development start only). */
  feature?: "mailbox";
}

/** Features of this start that add pages (from the configuration). */
export interface NavFeatures {
  mailbox: boolean;
}

// Only pages that exist are listed; each page checks the same roles on the server.
export const NAV_ITEMS: readonly NavItem[] = [
  { href: "/", label: "Catalogue", roles: ["viewer", "modeller", "reviewer", "admin"] },
  { href: "/setups", label: "Setups", roles: ["viewer", "modeller", "reviewer", "admin"] },
  { href: "/playground", label: "Playground", roles: ["viewer", "modeller", "reviewer", "admin"] },
  { href: "/api-reference", label: "API", roles: ["viewer", "modeller", "reviewer", "admin"] },
  { href: "/tokens", label: "Tokens", roles: ["viewer", "modeller", "reviewer", "admin"] },
  { href: "/account", label: "Account", roles: ["viewer", "modeller", "reviewer", "admin"] },
  { href: "/people", label: "People", roles: ["admin"] },
  { href: "/reviews", label: "Reviews", roles: ["reviewer"] },
  { href: "/mailbox", label: "Mailbox", roles: ["admin"], feature: "mailbox" },
  { href: "/tokens/all", label: "All tokens", roles: ["admin"] },
  { href: "/versions", label: "Versions", roles: ["admin"] },
  { href: "/audit", label: "Audit", roles: ["admin"] },
];

export function navItemsFor(roles: readonly Role[], features: NavFeatures = { mailbox: false }): NavItem[] {
  return NAV_ITEMS.filter((item) => hasAnyRole(roles, item.roles) && (item.feature === undefined || features[item.feature]));
}
