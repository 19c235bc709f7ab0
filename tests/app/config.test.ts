import { describe, expect, it } from "vitest";
import { ConfigError, parseConfig, requireAuthSecret } from "@/lib/config";

const SECRET = "x".repeat(32);

describe("configuration", () => {
  it("fills local defaults for the demo database", () => {
    const config = parseConfig({ NEXTAUTH_SECRET: SECRET });
    expect(config.database).toEqual({
      host: "127.0.0.1",
      port: 3307,
      name: "stillpoint",
      user: "app",
      password: "stillpoint-local",
      poolMax: 10,
      poolMin: 2,
      connectTimeoutMs: 3000,
    });
  });

  it("reads numbers from their environment strings", () => {
    expect(parseConfig({ NEXTAUTH_SECRET: SECRET, DATABASE_PORT: "3317" }).database.port).toBe(3317);
  });

  it("fails with one message naming every bad variable", () => {
    let caught: unknown;
    try {
      parseConfig({ DATABASE_PORT: "70000", DATABASE_NAME: "drop table" });
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(ConfigError);
    const message = (caught as Error).message;
    expect(message).toMatch(/^Stillpoint configuration is invalid:/);
    expect(message).toContain("DATABASE_PORT");
    expect(message).toContain("DATABASE_NAME");
  });

  it("lets workers run without a session secret but refuses to serve the app without one", () => {
    const config = parseConfig({});
    expect(config.authSecret).toBeNull();
    expect(() => requireAuthSecret(config)).toThrow(/NEXTAUTH_SECRET: is required to serve the app/);
    expect(requireAuthSecret(parseConfig({ NEXTAUTH_SECRET: SECRET }))).toBe(SECRET);
  });

  it("refuses a short session secret", () => {
    expect(() => parseConfig({ NEXTAUTH_SECRET: "short" })).toThrow(/NEXTAUTH_SECRET: must be at least 32 characters/);
  });

  it("sends mail to the local sink by default, with the mailbox page off and links to NEXTAUTH_URL", () => {
    expect(parseConfig({}).mail).toEqual({
      smtp: { host: "127.0.0.1", port: 2525, user: null, password: null },
      from: "Stillpoint <stillpoint@localhost>",
      attempts: 10,
      retryDelayMs: 5000,
      publicBaseUrl: "http://127.0.0.1:3000",
      sinkDir: null,
      mailboxPage: false,
    });
    expect(parseConfig({ NEXTAUTH_URL: "http://127.0.0.1:3122" }).mail.publicBaseUrl).toBe("http://127.0.0.1:3122");
    const set = parseConfig({ PUBLIC_BASE_URL: "https://registry.example.org/stillpoint/", MAILBOX_PAGE: "1", SMTP_USER: "u", SMTP_PASSWORD: "p" }).mail;
    expect(set.publicBaseUrl).toBe("https://registry.example.org/stillpoint");
    expect(set.mailboxPage).toBe(true);
    expect(set.smtp).toMatchObject({ user: "u", password: "p" });
    expect(parseConfig({ MAILBOX_PAGE: "0" }).mail.mailboxPage).toBe(false);
  });

  it("names every bad mail setting", () => {
    let message = "";
    try {
      parseConfig({ SMTP_PORT: "0", MAIL_FROM: "not an address", PUBLIC_BASE_URL: "registry", MAILBOX_PAGE: "yes", MAIL_ATTEMPTS: "0" });
    } catch (error) {
      message = (error as Error).message;
    }
    for (const name of ["SMTP_PORT", "MAIL_FROM", "PUBLIC_BASE_URL", "MAILBOX_PAGE", "MAIL_ATTEMPTS"]) expect(message).toContain(name);
  });
});
