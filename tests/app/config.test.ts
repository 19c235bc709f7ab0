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
      connectTimeoutMs: 2000,
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
});
