import type { NextConfig } from "next";
import { API_CONTENT_SECURITY_POLICY, STATIC_SECURITY_HEADERS } from "./lib/api/securityHeaders";

const nextConfig: NextConfig = {
  // Loaded from node_modules at run time: knex's optional drivers break bundling; piscina needs its worker file;
  // bullmq reads its Lua scripts from its own folder.
  serverExternalPackages: ["knex", "mysql2", "piscina", "msgpackr", "bullmq", "ioredis", "rate-limiter-flexible"],
  experimental: {
    // forbidden() for pages a person's roles do not cover.
    authInterrupts: true,
  },
  poweredByHeader: false,
  // Every answer carries the static security headers; API answers also a policy that runs nothing. Pages get their
  // nonce policy from proxy.ts.
  async headers() {
    return [
      { source: "/:path*", headers: STATIC_SECURITY_HEADERS },
      { source: "/api/:path*", headers: [{ key: "Content-Security-Policy", value: API_CONTENT_SECURITY_POLICY }] },
    ];
  },
};

export default nextConfig;
