import type { Metadata } from "next";
import { connection } from "next/server";
import type { ReactNode } from "react";
import { BrowserZodConfig } from "@/components/browser-zod-config";
import { mono, sans } from "./fonts";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "Stillpoint", template: "%s · Stillpoint" },
  description: "Tilt-to-length surrogate models for laser-interferometer telescopes",
};

export default async function RootLayout({ children }: { children: ReactNode }) {
  // Every page is rendered per request, the not-found page included: its scripts must carry the nonce of the
  // response's Content-Security-Policy (proxy.ts), which a page prerendered at build time could not.
  await connection();
  return (
    <html lang="en" className={`${sans.variable} ${mono.variable}`}>
      <body className="min-h-screen">
        <BrowserZodConfig />
        {children}
      </body>
    </html>
  );
}
