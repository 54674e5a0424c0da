import path from "node:path";
import { z } from "zod";
import { DEFAULT_DPI, DEFAULT_MAX_PIXELS, DEFAULT_MAX_UPLOAD_MB } from "../shared/limits";

/**
 * All configuration, parsed once from the environment. A bad value stops the process at start-up
 * with one line per bad variable. Server, worker, watcher and scripts all read it from here.
 */
const ROOT = path.resolve(import.meta.dirname, "..");

const bool = z
  .enum(["1", "0", "true", "false", "yes", "no"])
  .transform((v) => v === "1" || v === "true" || v === "yes");

const int = (min: number, max: number) => z.coerce.number().int().min(min).max(max);

const envSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  LOG_LEVEL: z.enum(["fatal", "error", "warn", "info", "debug", "trace", "silent"]).default("info"),
  PLATEN_HOST: z.string().min(1).default("127.0.0.1"),
  PLATEN_PORT: int(1, 65535).default(5480),
  PLATEN_DATA_DIR: z.string().min(1).default(path.join(ROOT, ".data")),
  PLATEN_LIBRARY_DIR: z.string().min(1).optional(),
  PLATEN_INBOX_DIR: z.string().min(1).default(path.join(ROOT, "inbox")),
  PLATEN_DB_PORT: int(1024, 65535).default(54329),
  DATABASE_URL: z.url({ protocol: /^postgres(ql)?$/ }).optional(),
  PLATEN_SESSION_SECRET: z.string().min(32, { error: "must be at least 32 characters" }).optional(),
  PLATEN_SECURE_COOKIES: bool.default(false),
  PLATEN_ADMIN_EMAIL: z.email().optional(),
  PLATEN_ADMIN_PASSWORD: z.string().min(10).optional(),
  PLATEN_DEMO: bool.default(true),
  PLATEN_DEFAULT_DPI: int(1, 100_000).default(DEFAULT_DPI),
  PLATEN_MAX_PIXELS: int(1, 10_000_000_000).default(DEFAULT_MAX_PIXELS),
  PLATEN_MAX_UPLOAD_MB: int(1, 100_000).default(DEFAULT_MAX_UPLOAD_MB),
  PLATEN_WORKER_CONCURRENCY: int(1, 64).default(2),
  PLATEN_JOB_RETRY_LIMIT: int(0, 100).default(3),
  PLATEN_JOB_EXPIRE_SECONDS: int(1, 86_400).default(900),
  PLATEN_MAINTENANCE_SECONDS: int(1, 3600).default(30),
  PLATEN_INBOX_STABLE_MS: int(50, 600_000).default(2000),
  PLATEN_INBOX_POLL_MS: int(10, 60_000).default(250),
  PLATEN_LOGIN_LIMIT: int(1, 10_000).default(10),
  /** bcrypt work factor; tests lower it to stay quick. */
  PLATEN_BCRYPT_COST: int(4, 15).default(12),
  PLATEN_LOGIN_WINDOW_MINUTES: int(1, 1440).default(15),
  /** Test hook: hold each analyse job this long before it finishes (used by the kill-a-worker test). */
  PLATEN_TEST_ANALYSE_DELAY_MS: int(0, 600_000).default(0),
});

export type Config = ReturnType<typeof loadConfig>;

export function loadConfig(env: NodeJS.ProcessEnv = process.env) {
  const parsed = envSchema.safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map(
      (i) => `  ${i.path.join(".")}: ${i.message} (received ${JSON.stringify(env[String(i.path[0])])})`,
    );
    throw new Error(`Platen cannot start: bad configuration\n${lines.join("\n")}`);
  }
  const e = parsed.data;
  const dataDir = path.resolve(e.PLATEN_DATA_DIR);
  return {
    root: ROOT,
    env: e.NODE_ENV,
    logLevel: e.LOG_LEVEL,
    host: e.PLATEN_HOST,
    port: e.PLATEN_PORT,
    dataDir,
    libraryDir: path.resolve(e.PLATEN_LIBRARY_DIR ?? path.join(dataDir, "library")),
    inboxDir: path.resolve(e.PLATEN_INBOX_DIR),
    dbPort: e.PLATEN_DB_PORT,
    databaseUrl: e.DATABASE_URL ?? `postgres://platen@127.0.0.1:${e.PLATEN_DB_PORT}/platen`,
    sessionSecret: e.PLATEN_SESSION_SECRET,
    secureCookies: e.PLATEN_SECURE_COOKIES,
    adminEmail: e.PLATEN_ADMIN_EMAIL,
    adminPassword: e.PLATEN_ADMIN_PASSWORD,
    demo: e.PLATEN_DEMO,
    defaultDpi: e.PLATEN_DEFAULT_DPI,
    maxPixels: e.PLATEN_MAX_PIXELS,
    maxUploadBytes: e.PLATEN_MAX_UPLOAD_MB * 1024 * 1024,
    workerConcurrency: e.PLATEN_WORKER_CONCURRENCY,
    jobRetryLimit: e.PLATEN_JOB_RETRY_LIMIT,
    jobExpireSeconds: e.PLATEN_JOB_EXPIRE_SECONDS,
    maintenanceSeconds: e.PLATEN_MAINTENANCE_SECONDS,
    inboxStableMs: e.PLATEN_INBOX_STABLE_MS,
    inboxPollMs: e.PLATEN_INBOX_POLL_MS,
    loginLimit: e.PLATEN_LOGIN_LIMIT,
    bcryptCost: e.PLATEN_BCRYPT_COST,
    loginWindowMs: e.PLATEN_LOGIN_WINDOW_MINUTES * 60_000,
    testAnalyseDelayMs: e.PLATEN_TEST_ANALYSE_DELAY_MS,
  };
}

let cached: Config | undefined;

/** Replaces the process-wide configuration (tests run a stack with their own folders and database). */
export function overrideConfig(overrides: Record<string, string>): Config {
  cached = loadConfig({ ...process.env, ...overrides });
  return cached;
}
/** The process-wide configuration, parsed on first use. */
export function config(): Config {
  cached ??= loadConfig();
  return cached;
}
