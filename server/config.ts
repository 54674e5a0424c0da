import path from "node:path";
import { z } from "zod";
import { DEFAULT_DPI, DEFAULT_MAX_PIXELS, DEFAULT_MAX_UPLOAD_MB } from "../shared/limits";
import { parseCpuList } from "../shared/cpu-list";

/**
 * All configuration, parsed once from the environment. A bad value stops the process at start-up
 * with one line per bad variable. Server, worker, watcher and scripts all read it from here.
 */
const ROOT = path.resolve(import.meta.dirname, "..");

const bool = z.enum(["1", "0", "true", "false", "yes", "no"]).transform((v) => v === "1" || v === "true" || v === "yes");

const int = (min: number, max: number) => z.coerce.number().int().min(min).max(max);
const s3BucketName = z
  .string()
  .regex(/^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/, { error: "must be an S3 bucket name (3–63 lower-case letters, digits, dots, dashes)" });
const s3Prefix = z
  .string()
  // Segments end at a slash, so the pattern matches in one pass (an optional slash inside a repeated group backtracks exponentially on a bad value).
  .regex(/^([a-z0-9][a-z0-9._-]*\/)*([a-z0-9][a-z0-9._-]*)?$/i, {
    error: "must be a folder-like prefix of letters, digits, dots, dashes and slashes",
  })
  .transform((v) => (v && !v.endsWith("/") ? `${v}/` : v));

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
  PLATEN_WORKERS: int(1, 64).default(1),
  /** Threads libvips may use for one image operation (0 = one per CPU core, sharp's default). */
  PLATEN_VIPS_THREADS: int(0, 256).default(0),
  PLATEN_WORKER_CPUS: z
    .string()
    .optional()
    .transform((v, ctx) => {
      if (v === undefined || v.trim() === "") return null;
      try {
        return parseCpuList(v);
      } catch (err) {
        ctx.addIssue({ code: "custom", message: (err as Error).message });
        return z.NEVER;
      }
    }),
  /**
   * Room for the scans the worker keeps decoded between their split and their render, MB
   * (0 = keep none: each render decodes its scan again). The oldest go first when it is full.
   */
  PLATEN_DECODED_COPIES_MB: int(0, 10_000_000).default(4096),
  PLATEN_JOB_RETRY_LIMIT: int(0, 100).default(3),
  PLATEN_JOB_EXPIRE_SECONDS: int(1, 86_400).default(900),
  PLATEN_MAINTENANCE_SECONDS: int(1, 3600).default(30),
  /** Hours between the worker's tidies of the library's left-over files (0 = only when an admin asks). */
  PLATEN_TIDY_EVERY_HOURS: int(0, 8760).default(24),
  /**
   * Hours between each process's sweeps of what stopped processes left unfinished on its own
   * machine (temp files, staged copies, scratch folders, cut-off uploads and downloads older than
   * the tidy's grace period), the first at start (0 = none: only the library's tidy removes them).
   */
  PLATEN_UNFINISHED_SWEEP_HOURS: z.coerce.number().min(0).max(168).default(1),
  PLATEN_INBOX_STABLE_MS: int(50, 600_000).default(2000),
  PLATEN_INBOX_POLL_MS: int(10, 60_000).default(250),
  /**
   * How long a file that has stopped growing but still looks unfinished (empty, or cut before its
   * format's end) is waited for before it is taken in as it is, to fail with its reason: a
   * scanner may create its file and write it only when a long pass is done.
   */
  PLATEN_INBOX_UNFINISHED_SECONDS: int(1, 86_400).default(600),
  PLATEN_LOGIN_LIMIT: int(1, 10_000).default(10),
  /** bcrypt work factor; tests lower it to stay quick. */
  PLATEN_BCRYPT_COST: int(4, 15).default(12),
  PLATEN_LOGIN_WINDOW_MINUTES: int(1, 1440).default(15),
  /** Test hook: hold each analyse job this long before it finishes (used by the kill-a-worker test). */
  PLATEN_TEST_ANALYSE_DELAY_MS: int(0, 600_000).default(0),
  /** Test hook: hold each group render this long once claimed (used by the parked-slot test). */
  PLATEN_TEST_RENDER_DELAY_MS: int(0, 600_000).default(0),
  // E-mail. Without PLATEN_SMTP_HOST no mail is sent (npm start runs a local fake in development).
  PLATEN_SMTP_HOST: z.string().min(1).optional(),
  PLATEN_SMTP_PORT: int(1, 65535).optional(),
  PLATEN_SMTP_SECURE: bool.default(false),
  PLATEN_SMTP_USER: z.string().min(1).optional(),
  PLATEN_SMTP_PASSWORD: z.string().min(1).optional(),
  PLATEN_MAIL_FROM: z.email().default("platen@localhost"),
  /** The address people open Platen at, for links in messages (default: http://host:port). */
  PLATEN_PUBLIC_URL: z.url({ protocol: /^https?$/ }).optional(),
  /** Set by npm start and the tests when mail goes to the project's local SMTP fake, which keeps it here. */
  PLATEN_MAILBOX_DIR: z.string().min(1).optional(),
  /** Port of the local SMTP fake npm start runs in development (127.0.0.1 only). */
  PLATEN_DEV_SMTP_PORT: int(1024, 65535).default(5425),
  PLATEN_INVITE_DAYS: int(1, 90).default(7),
  PLATEN_RESET_MINUTES: int(5, 1440).default(60),
  /** Password reset requests per address and e-mail in 15 minutes. */
  PLATEN_RESET_LIMIT: int(1, 1000).default(5),
  // Storage: the library in a local folder (default) or an S3-compatible bucket.
  PLATEN_STORAGE: z.enum(["local", "s3"]).default("local"),
  PLATEN_S3_BUCKET: s3BucketName.optional(),
  PLATEN_S3_PREFIX: s3Prefix.default(""),
  /** Empty: AWS itself; set for another S3-compatible store. npm start runs a local fake when unset in development. */
  PLATEN_S3_ENDPOINT: z.url({ protocol: /^https?$/ }).optional(),
  PLATEN_S3_REGION: z.string().min(1).optional(),
  PLATEN_S3_FORCE_PATH_STYLE: bool.default(false),
  /** Without these the SDK's usual chain applies (AWS_ACCESS_KEY_ID / AWS_SECRET_ACCESS_KEY, profile, role). */
  PLATEN_S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  PLATEN_S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  /** Part size of multipart uploads; files above it go up in parts (S3's minimum part is 5 MiB). */
  PLATEN_S3_PART_MB: int(5, 5000).default(8),
  /** Bound of the local copy of stored files that sharp reads from when the library is on S3. */
  PLATEN_CACHE_MB: int(64, 10_000_000).default(4096),
  /** Port of the local S3 fake npm start runs in development when no endpoint is set. */
  PLATEN_DEV_S3_PORT: int(1024, 65535).default(5426),
  // Off-site copy of every master to an S3 bucket (with a local library only).
  PLATEN_OFFSITE_BUCKET: s3BucketName.optional(),
  PLATEN_OFFSITE_PREFIX: s3Prefix.default(""),
  PLATEN_OFFSITE_ENDPOINT: z.url({ protocol: /^https?$/ }).optional(),
  PLATEN_OFFSITE_REGION: z.string().min(1).optional(),
  PLATEN_OFFSITE_FORCE_PATH_STYLE: bool.default(false),
  PLATEN_OFFSITE_ACCESS_KEY_ID: z.string().min(1).optional(),
  PLATEN_OFFSITE_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  AWS_REGION: z.string().min(1).optional(),
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
  const storageProblems = [
    e.PLATEN_STORAGE === "s3" && !e.PLATEN_S3_BUCKET && "  PLATEN_S3_BUCKET: is required when PLATEN_STORAGE is s3",
    e.PLATEN_STORAGE === "s3" &&
      e.PLATEN_OFFSITE_BUCKET &&
      "  PLATEN_OFFSITE_BUCKET: the off-site copy is for a local library; with PLATEN_STORAGE=s3 use the bucket's own replication",
    !e.PLATEN_S3_ACCESS_KEY_ID !== !e.PLATEN_S3_SECRET_ACCESS_KEY &&
      "  PLATEN_S3_ACCESS_KEY_ID / PLATEN_S3_SECRET_ACCESS_KEY: set both or neither",
    !e.PLATEN_OFFSITE_ACCESS_KEY_ID !== !e.PLATEN_OFFSITE_SECRET_ACCESS_KEY &&
      "  PLATEN_OFFSITE_ACCESS_KEY_ID / PLATEN_OFFSITE_SECRET_ACCESS_KEY: set both or neither",
    // The mailbox shows every message (reset links included) to admins and sends without TLS: never in production.
    e.NODE_ENV === "production" &&
      e.PLATEN_MAILBOX_DIR &&
      "  PLATEN_MAILBOX_DIR: the development mailbox (the local mail fake) is not for production; unset it and set PLATEN_SMTP_HOST",
  ].filter(Boolean);
  if (storageProblems.length) throw new Error(`Platen cannot start: bad configuration\n${storageProblems.join("\n")}`);
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
    /** Worker processes `npm start` runs on this machine. */
    workers: e.PLATEN_WORKERS,
    vipsThreads: e.PLATEN_VIPS_THREADS,
    /** CPUs a worker process holds itself to (worker/cpu-affinity.ts); null: free to use all. */
    workerCpus: e.PLATEN_WORKER_CPUS,
    /** Decoded scans kept between split and render (worker/decoded-copies.ts), local to each worker. */
    decodedCopies: { dir: path.join(dataDir, "decoded"), maxBytes: e.PLATEN_DECODED_COPIES_MB * 1024 * 1024 },
    jobRetryLimit: e.PLATEN_JOB_RETRY_LIMIT,
    jobExpireSeconds: e.PLATEN_JOB_EXPIRE_SECONDS,
    maintenanceSeconds: e.PLATEN_MAINTENANCE_SECONDS,
    tidyEveryHours: e.PLATEN_TIDY_EVERY_HOURS,
    unfinishedSweepHours: e.PLATEN_UNFINISHED_SWEEP_HOURS,
    inboxStableMs: e.PLATEN_INBOX_STABLE_MS,
    inboxPollMs: e.PLATEN_INBOX_POLL_MS,
    inboxUnfinishedMs: e.PLATEN_INBOX_UNFINISHED_SECONDS * 1000,
    loginLimit: e.PLATEN_LOGIN_LIMIT,
    bcryptCost: e.PLATEN_BCRYPT_COST,
    loginWindowMs: e.PLATEN_LOGIN_WINDOW_MINUTES * 60_000,
    testAnalyseDelayMs: e.PLATEN_TEST_ANALYSE_DELAY_MS,
    testRenderDelayMs: e.PLATEN_TEST_RENDER_DELAY_MS,
    mail: {
      host: e.PLATEN_SMTP_HOST,
      port: e.PLATEN_SMTP_PORT ?? (e.PLATEN_SMTP_SECURE ? 465 : 587),
      secure: e.PLATEN_SMTP_SECURE,
      user: e.PLATEN_SMTP_USER,
      password: e.PLATEN_SMTP_PASSWORD,
      from: e.PLATEN_MAIL_FROM,
      publicUrl: (e.PLATEN_PUBLIC_URL ?? `http://${e.PLATEN_HOST === "0.0.0.0" ? "127.0.0.1" : e.PLATEN_HOST}:${e.PLATEN_PORT}`).replace(
        /\/+$/,
        "",
      ),
      mailboxDir: e.PLATEN_MAILBOX_DIR ? path.resolve(e.PLATEN_MAILBOX_DIR) : undefined,
      devSmtpPort: e.PLATEN_DEV_SMTP_PORT,
      inviteMs: e.PLATEN_INVITE_DAYS * 86_400_000,
      resetMs: e.PLATEN_RESET_MINUTES * 60_000,
      resetLimit: e.PLATEN_RESET_LIMIT,
    },
    storage: {
      kind: e.PLATEN_STORAGE,
      s3: e.PLATEN_S3_BUCKET
        ? {
            bucket: e.PLATEN_S3_BUCKET,
            prefix: e.PLATEN_S3_PREFIX,
            endpoint: e.PLATEN_S3_ENDPOINT,
            region: e.PLATEN_S3_REGION ?? e.AWS_REGION ?? "us-east-1",
            forcePathStyle: e.PLATEN_S3_FORCE_PATH_STYLE,
            credentials: e.PLATEN_S3_ACCESS_KEY_ID
              ? { accessKeyId: e.PLATEN_S3_ACCESS_KEY_ID, secretAccessKey: e.PLATEN_S3_SECRET_ACCESS_KEY! }
              : undefined,
            partSizeBytes: e.PLATEN_S3_PART_MB * 1024 * 1024,
          }
        : undefined,
      /** Local copies of stored files (S3 only) and work in progress, never under the library folder. */
      cacheDir: path.join(dataDir, "cache"),
      cacheMaxBytes: e.PLATEN_CACHE_MB * 1024 * 1024,
      workDir: path.join(dataDir, "work"),
      devS3Port: e.PLATEN_DEV_S3_PORT,
      offsite: e.PLATEN_OFFSITE_BUCKET
        ? {
            bucket: e.PLATEN_OFFSITE_BUCKET,
            prefix: e.PLATEN_OFFSITE_PREFIX,
            endpoint: e.PLATEN_OFFSITE_ENDPOINT,
            region: e.PLATEN_OFFSITE_REGION ?? e.AWS_REGION ?? "us-east-1",
            forcePathStyle: e.PLATEN_OFFSITE_FORCE_PATH_STYLE,
            credentials: e.PLATEN_OFFSITE_ACCESS_KEY_ID
              ? { accessKeyId: e.PLATEN_OFFSITE_ACCESS_KEY_ID, secretAccessKey: e.PLATEN_OFFSITE_SECRET_ACCESS_KEY! }
              : undefined,
            partSizeBytes: e.PLATEN_S3_PART_MB * 1024 * 1024,
          }
        : undefined,
    },
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
