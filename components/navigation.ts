import { hasAnyRole, type Role } from "@/lib/access/roles";

export interface NavItem {
  href: string;
  label: string;
  /** Shown to people holding any of these roles. */
  roles: readonly Role[];
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
  { href: "/tokens/all", label: "All tokens", roles: ["admin"] },
  { href: "/versions", label: "Versions", roles: ["admin"] },
  { href: "/audit", label: "Audit", roles: ["admin"] },
];

export function navItemsFor(roles: readonly Role[]): NavItem[] {
  return NAV_ITEMS.filter((item) => hasAnyRole(roles, item.roles));
}
