"use client";

import Link from "next/link";
import { usePathname } from "next/navigation";

export function NavLinks({ items }: { items: { href: string; label: string }[] }) {
  const pathname = usePathname();
  return (
    <nav aria-label="Workspace">
      <ul className="flex gap-1">
        {items.map((item) => {
          // Models, their versions and runs belong to the catalogue; a version's playground to the playground.
          const playground = pathname.endsWith("/playground");
          const current =
            item.href === "/"
              ? !playground && (pathname === "/" || pathname.startsWith("/models") || pathname.startsWith("/runs"))
              : item.href === "/playground"
                ? playground
                : pathname.startsWith(item.href) && !items.some((other) => other.href.length > item.href.length && other.href.startsWith(item.href) && pathname.startsWith(other.href));
          return (
            <li key={item.href}>
              <Link
                href={item.href}
                aria-current={current ? "page" : undefined}
                className={`block rounded px-2 py-1 text-sm ${
                  current ? "bg-accent text-accent-ink" : "text-ink hover:bg-sunken"
                }`}
              >
                {item.label}
              </Link>
            </li>
          );
        })}
      </ul>
    </nav>
  );
}
