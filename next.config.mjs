/** @type {import('next').NextConfig} */
const nextConfig = {
  // Loaded from node_modules at run time: knex's optional drivers break bundling; piscina needs its worker file;
  // bullmq reads its Lua scripts from its own folder.
  serverExternalPackages: ["knex", "mysql2", "piscina", "msgpackr", "bullmq", "ioredis", "rate-limiter-flexible"],
  experimental: {
    // forbidden() for pages a person's roles do not cover.
    authInterrupts: true,
  },
  poweredByHeader: false,
};

export default nextConfig;
