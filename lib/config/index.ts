import { z } from "zod";

/**
 * Settings read from the environment once, validated, with defaults that fit the local
 * MariaDB instance started by `db/mariadb.sh start demo`.
 */
const configSchema = z.object({
  DATABASE_HOST: z.string().min(1).default("127.0.0.1"),
  DATABASE_PORT: z.coerce.number().int().min(1).max(65535).default(3307),
  DATABASE_NAME: z
    .string()
    .regex(/^[A-Za-z0-9_]+$/, "letters, digits and '_' only")
    .default("stillpoint"),
  DATABASE_USER: z.string().min(1).default("app"),
  DATABASE_PASSWORD: z.string().default("stillpoint-local"),
  DATABASE_POOL_MAX: z.coerce.number().int().min(1).max(100).default(10),
  NEXTAUTH_SECRET: z
    .string({ error: "is required (scripts/start.sh creates one in .data/auth-secret)" })
    .min(32, "must be at least 32 characters"),
});

export interface AppConfig {
  database: {
    host: string;
    port: number;
    name: string;
    user: string;
    password: string;
    poolMax: number;
  };
  authSecret: string;
}

export class ConfigError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ConfigError";
  }
}

/** Validates an environment; throws ConfigError naming every bad variable. */
export function parseConfig(env: Record<string, string | undefined>): AppConfig {
  const parsed = configSchema.safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((issue) => `  ${issue.path.join(".")}: ${issue.message}`);
    throw new ConfigError(`Stillpoint configuration is invalid:\n${lines.join("\n")}`);
  }
  const e = parsed.data;
  return {
    database: {
      host: e.DATABASE_HOST,
      port: e.DATABASE_PORT,
      name: e.DATABASE_NAME,
      user: e.DATABASE_USER,
      password: e.DATABASE_PASSWORD,
      poolMax: e.DATABASE_POOL_MAX,
    },
    authSecret: e.NEXTAUTH_SECRET,
  };
}

let cached: AppConfig | undefined;

/** The process's configuration, parsed from process.env on first use. */
export function getConfig(): AppConfig {
  cached ??= parseConfig(process.env);
  return cached;
}
