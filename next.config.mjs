/** @type {import('next').NextConfig} */
const nextConfig = {
  // Loaded from node_modules at run time: knex's optional drivers break bundling; piscina needs its worker file.
  serverExternalPackages: ["knex", "mysql2", "piscina", "msgpackr"],
  experimental: {
    // forbidden() for pages a person's roles do not cover.
    authInterrupts: true,
  },
  poweredByHeader: false,
};

export default nextConfig;
