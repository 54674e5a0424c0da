import { sql } from "drizzle-orm";
import {
  bigint,
  boolean,
  doublePrecision,
  index,
  integer,
  json,
  pgEnum,
  pgTable,
  jsonb,
  primaryKey,
  real,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  varchar,
} from "drizzle-orm/pg-core";
import { ROLES } from "../../shared/roles";
import { SCAN_STATUSES } from "../../shared/schemas/scans";
import { FRAGMENT_STATUSES, type Box, type FragmentGeometry, type Rect } from "../../shared/schemas/fragments";
import type { InboxWaiting } from "../../shared/schemas/queue";

/** The one place the database is described; drizzle-kit generates drizzle/ from it. */

export const roleEnum = pgEnum("role", ROLES);
export const scanStatusEnum = pgEnum("scan_status", SCAN_STATUSES);
/** Where a scan's resolution came from: the file, the studio default, or an operator who set it. */
export const dpiSourceEnum = pgEnum("dpi_source", ["embedded", "assumed", "set"]);
export const scanSourceEnum = pgEnum("scan_source", ["inbox", "upload", "library"]);
export const fragmentStatusEnum = pgEnum("fragment_status", FRAGMENT_STATUSES);
export const fragmentShapeEnum = pgEnum("fragment_shape", ["rectangle", "cutout"]);
export const renderStateEnum = pgEnum("render_state", ["none", "queued", "rendering", "done", "failed"]);

const timestamps = {
  createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
};

/** One row: this installation's studio and its settings. */
export const studio = pgTable("studio", {
  id: integer("id").primaryKey().default(1),
  name: text("name").notNull(),
  defaultDpi: integer("default_dpi").notNull().default(300),
  /** The studio's default recipe; null means the built-in one. */
  defaultRecipeId: uuid("default_recipe_id"),
  demo: boolean("demo").notNull().default(false),
  /** Written into every master and copy as creator (artist) and copyright, unless empty. */
  creator: text("creator"),
  copyright: text("copyright"),
  /**
   * This installation's own mark, written on the objects it puts in the off-site bucket, so that
   * two installations sharing a bucket never take each other's copies for their own. A database
   * restored from a backup keeps it.
   */
  installationId: uuid("installation_id").notNull().defaultRandom(),
  ...timestamps,
});

export const users = pgTable(
  "users",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    email: text("email").notNull(),
    name: text("name").notNull(),
    role: roleEnum("role").notNull(),
    passwordHash: text("password_hash").notNull(),
    disabledAt: timestamp("disabled_at", { withTimezone: true }),
    lastSignInAt: timestamp("last_sign_in_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [uniqueIndex("users_email_key").on(t.email)],
);

/** One scanning session's drops. New scans join the newest open intake. */
export const intakes = pgTable("intakes", {
  id: uuid("id").primaryKey().defaultRandom(),
  name: text("name").notNull(),
  closedAt: timestamp("closed_at", { withTimezone: true }),
  recipeId: uuid("recipe_id"),
  ...timestamps,
});

export const scans = pgTable(
  "scans",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    intakeId: uuid("intake_id")
      .notNull()
      .references(() => intakes.id),
    originalName: text("original_name").notNull(),
    source: scanSourceEnum("source").notNull(),
    uploadedBy: uuid("uploaded_by").references(() => users.id),
    sha256: varchar("sha256", { length: 64 }).notNull(),
    sizeBytes: bigint("size_bytes", { mode: "number" }).notNull(),
    /** Key of the original in the library (content-addressed, never rewritten). */
    originalKey: text("original_key").notNull(),
    status: scanStatusEnum("status").notNull().default("queued"),
    stage: text("stage"),
    progress: integer("progress").notNull().default(0),
    error: text("error"),
    /**
     * Why it failed, as a code: a ScanError's (empty, not_image, unsupported, truncated, too_large,
     * unreadable; worker/pipeline/errors.ts) or "worker" when every attempt failed otherwise.
     */
    errorCode: text("error_code"),
    attempts: integer("attempts").notNull().default(0),
    duplicateOfId: uuid("duplicate_of_id"),
    /**
     * Filed while its inbox file still looked unfinished, and that file was taken in again later as
     * this scan: "whole" once its writer finished it, "changed" when it still looked unfinished.
     */
    continuedById: uuid("continued_by_id"),
    continuedHow: text("continued_how").$type<"whole" | "changed">(),
    width: integer("width"),
    height: integer("height"),
    format: text("format"),
    bitDepth: integer("bit_depth"),
    channels: integer("channels"),
    colourSpace: text("colour_space"),
    hasIccProfile: boolean("has_icc_profile"),
    iccDescription: text("icc_description"),
    hasAlpha: boolean("has_alpha"),
    dpiX: real("dpi_x"),
    dpiY: real("dpi_y"),
    dpiSource: dpiSourceEnum("dpi_source"),
    resolutionOrigin: text("resolution_origin"),
    /**
     * What the file itself records (null: none), kept when an operator sets the resolution by hand
     * so the scan can go back to it.
     */
    fileDpiX: real("file_dpi_x"),
    fileDpiY: real("file_dpi_y"),
    fileResolutionOrigin: text("file_resolution_origin"),
    previewKey: text("preview_key"),
    thumbKey: text("thumb_key"),
    recipeId: uuid("recipe_id"),
    /** The split's view of the bed: background colour and kind, threshold, sensitivity used. */
    splitBackground: jsonb("split_background").$type<{ rgb: [number, number, number]; kind: "light" | "dark" }>(),
    splitSensitivity: real("split_sensitivity"),
    splitRun: integer("split_run").notNull().default(0),
    splitAt: timestamp("split_at", { withTimezone: true }),
    startedAt: timestamp("started_at", { withTimezone: true }),
    analysedAt: timestamp("analysed_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [
    index("scans_status_idx").on(t.status),
    index("scans_intake_idx").on(t.intakeId),
    index("scans_sha256_idx").on(t.sha256),
    // Exactly one non-duplicate scan per content hash: the first arrival owns it.
    uniqueIndex("scans_sha256_first_key")
      .on(t.sha256)
      .where(sql`${t.status} <> 'duplicate'`),
  ],
);

/**
 * Inbox files that were filed but are still in the inbox, as they were when filed: one the watcher
 * took in as it was while it still looked unfinished (left there for its writer to finish), or one
 * it could not remove (a folder it may not write). Such a file is not filed again while it is
 * unchanged, across restarts; a row goes when its file leaves the inbox or is taken in again.
 */
export const inboxKeptFiles = pgTable(
  "inbox_kept_files",
  {
    /** The watcher's inbox folder (absolute, resolved): one watcher per inbox. */
    inbox: text("inbox").notNull(),
    /** The file's path inside the inbox, with "/" between folders. */
    path: text("path").notNull(),
    sizeBytes: bigint("size_bytes", { mode: "number" }).notNull(),
    /** fs.Stats.mtimeMs as it was (a double: it keeps the sub-millisecond part). */
    mtimeMs: doublePrecision("mtime_ms").notNull(),
    sha256: varchar("sha256", { length: 64 }).notNull(),
    /** The scan it was filed as. */
    scanId: uuid("scan_id")
      .notNull()
      .references(() => scans.id, { onDelete: "cascade" }),
    reason: text("reason").$type<"unfinished" | "not-removed">().notNull(),
    /** Why it looked unfinished (worker/pipeline/unfinished.ts), for reason "unfinished". */
    detail: text("detail"),
    keptAt: timestamp("kept_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.inbox, t.path] })],
);

/** Heartbeats of the inbox watcher and the workers, for the queue screen. */
export const processes = pgTable("processes", {
  id: text("id").primaryKey(),
  kind: text("kind").notNull(),
  host: text("host").notNull(),
  pid: integer("pid").notNull(),
  folder: text("folder"),
  lastFile: text("last_file"),
  lastFileAt: timestamp("last_file_at", { withTimezone: true }),
  /** A watcher's files held back (shared/schemas/queue.ts InboxWaiting); null when it is stopped. */
  waiting: jsonb("waiting").$type<InboxWaiting>(),
  heartbeatAt: timestamp("heartbeat_at", { withTimezone: true }).notNull().defaultNow(),
  startedAt: timestamp("started_at", { withTimezone: true }).notNull().defaultNow(),
});

/** express-session store (connect-pg-simple's layout). */
export const session = pgTable(
  "session",
  {
    sid: varchar("sid").primaryKey(),
    sess: json("sess").notNull(),
    expire: timestamp("expire", { precision: 6 }).notNull(),
  },
  (t) => [index("IDX_session_expire").on(t.expire)],
);

/**
 * Counted attempts of the request limits (sign-in, password e-mails and changes), shared by every
 * server process on the database and kept across restarts (server/middleware/rate-limit-store.ts).
 */
export const rateLimitHits = pgTable(
  "rate_limit_hits",
  {
    /** Which limit (its prefix). */
    name: text("name").notNull(),
    /** Who is counted: an address, or an address and an e-mail, or an account. */
    key: text("key").notNull(),
    hits: integer("hits").notNull(),
    /** When the count starts again from nothing. */
    resetAt: timestamp("reset_at", { withTimezone: true }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.name, t.key] }), index("rate_limit_hits_reset_idx").on(t.resetAt)],
);

/** A piece found on a scan (or drawn by a person), with the split's proposal kept for reset. */
export const fragments = pgTable(
  "fragments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    scanId: uuid("scan_id")
      .notNull()
      .references(() => scans.id, { onDelete: "cascade" }),
    /** Reading order on the bed (top to bottom, left to right), 1-based. */
    position: integer("position").notNull(),
    status: fragmentStatusEnum("status").notNull().default("proposed"),
    origin: text("origin").$type<"split" | "drawn" | "merged">().notNull().default("split"),
    splitRun: integer("split_run").notNull().default(0),
    box: jsonb("box").$type<Box>().notNull(),
    angle: real("angle").notNull(),
    rect: jsonb("rect").$type<Rect>().notNull(),
    outline: jsonb("outline").$type<[number, number][]>().notNull(),
    shape: fragmentShapeEnum("shape").notNull(),
    areaPx: real("area_px").notNull(),
    confidence: real("confidence").notNull().default(1),
    /** The geometry as first proposed; null for drawn fragments. */
    proposal: jsonb("proposal").$type<FragmentGeometry>(),
    /** Fragments folded into this one by a merge (they are kept, marked merged_into). */
    mergedInto: uuid("merged_into"),
    recipeId: uuid("recipe_id"),
    title: text("title"),
    tags: text("tags")
      .array()
      .notNull()
      .default(sql`'{}'::text[]`),
    notes: text("notes"),
    reviewedBy: uuid("reviewed_by").references(() => users.id),
    reviewedAt: timestamp("reviewed_at", { withTimezone: true }),
    renderState: renderStateEnum("render_state").notNull().default("none"),
    renderError: text("render_error"),
    /**
     * Why the last rewrite of its rights into its master and web copy failed for good (a file
     * missing from the library, say); null once one succeeds, or if none failed.
     */
    rightsError: text("rights_error"),
    /** The render job that holds this fragment while render_state is 'rendering' (its own, or one rendering it with others of its scan). */
    renderJobId: text("render_job_id"),
    /** When that job took it; a claim older than the render queue's expiry is abandoned. */
    renderClaimedAt: timestamp("render_claimed_at", { withTimezone: true }),
    /** Incremented by every geometry edit; a render records the revision it made. */
    revision: integer("revision").notNull().default(1),
    ...timestamps,
  },
  (t) => [index("fragments_scan_idx").on(t.scanId), index("fragments_status_idx").on(t.status)],
);

/** A file made for a fragment: the master and the web copy now, preset outputs later. */
export const outputs = pgTable(
  "outputs",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    fragmentId: uuid("fragment_id")
      .notNull()
      .references(() => fragments.id, { onDelete: "cascade" }),
    kind: text("kind").$type<"master" | "web" | "preset">().notNull(),
    key: text("key").notNull(),
    format: text("format").notNull(),
    width: integer("width").notNull(),
    height: integer("height").notNull(),
    bitDepth: integer("bit_depth").notNull(),
    hasAlpha: boolean("has_alpha").notNull(),
    dpi: real("dpi").notNull(),
    bytes: bigint("bytes", { mode: "number" }).notNull(),
    /** The fragment revision this file was made from. */
    revision: integer("revision").notNull(),
    /** The recipe version that coloured it. */
    recipeVersionId: uuid("recipe_version_id"),
    /** For preset outputs: the preset version that made it. */
    presetVersionId: uuid("preset_version_id"),
    /** fragment + revision + recipe version + preset version: the same key is the same file, made once. */
    dedupeKey: text("dedupe_key"),
    /** Printed size, effective DPI and warnings, as the output step reported them. */
    report: jsonb("report").$type<{ printedIn?: { width: number; height: number }; effectiveDpi?: number; warnings: string[] }>(),
    /**
     * For a master and its web copy: the creator and copyright the file carries (null in a field:
     * none written). Null for files made before this was kept: what they carry is not known here.
     */
    rights: jsonb("rights").$type<{ creator: string | null; copyright: string | null }>(),
    ...timestamps,
  },
  (t) => [
    uniqueIndex("outputs_fragment_kind_key")
      .on(t.fragmentId, t.kind)
      .where(sql`${t.kind} in ('master', 'web')`),
    uniqueIndex("outputs_dedupe_key").on(t.dedupeKey),
  ],
);

/** A saved colour recipe; its steps live in versions, the newest being the one in use. */
export const recipes = pgTable(
  "recipes",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    name: text("name").notNull(),
    description: text("description"),
    /** The recipe that ships with Platen: editable (new versions), never deleted. */
    builtIn: boolean("built_in").notNull().default(false),
    archivedAt: timestamp("archived_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [uniqueIndex("recipes_name_key").on(sql`lower(${t.name})`)],
);

/** One saved state of a recipe. Outputs point at the version that made them. */
export const recipeVersions = pgTable(
  "recipe_versions",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    recipeId: uuid("recipe_id")
      .notNull()
      .references(() => recipes.id),
    version: integer("version").notNull(),
    steps: jsonb("steps").$type<unknown[]>().notNull(),
    createdBy: uuid("created_by").references(() => users.id),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("recipe_versions_recipe_version_key").on(t.recipeId, t.version)],
);

export const batchItemStateEnum = pgEnum("batch_item_state", ["queued", "running", "done", "failed", "cancelled"]);

/** A set of renders run together (fragments × what to make), with progress. */
export const batches = pgTable("batches", {
  id: uuid("id").primaryKey().defaultRandom(),
  name: text("name").notNull(),
  /** Why it ran: a recipe applied, or (later) presets. */
  kind: text("kind").$type<"recipe" | "outputs">().notNull(),
  recipeVersionId: uuid("recipe_version_id"),
  /** For a re-run: the batch it repeats, and whether its outputs go once this one is done. */
  rerunOf: uuid("rerun_of"),
  replaceOld: boolean("replace_old").notNull().default(false),
  createdBy: uuid("created_by").references(() => users.id),
  finishedAt: timestamp("finished_at", { withTimezone: true }),
  ...timestamps,
});

export const batchItems = pgTable(
  "batch_items",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    batchId: uuid("batch_id")
      .notNull()
      .references(() => batches.id, { onDelete: "cascade" }),
    fragmentId: uuid("fragment_id")
      .notNull()
      .references(() => fragments.id, { onDelete: "cascade" }),
    state: batchItemStateEnum("state").notNull().default("queued"),
    error: text("error"),
    /** For output batches: what to make, and what was made. */
    presetVersionId: uuid("preset_version_id"),
    outputId: uuid("output_id"),
    ...timestamps,
  },
  (t) => [index("batch_items_batch_idx").on(t.batchId), index("batch_items_fragment_idx").on(t.fragmentId)],
);

/** A saved output recipe (web, print, mock-up, master); its settings live in versions. */
export const presets = pgTable(
  "presets",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    name: text("name").notNull(),
    kind: text("kind").$type<"master" | "web" | "print" | "mockup">().notNull(),
    builtIn: boolean("built_in").notNull().default(false),
    archivedAt: timestamp("archived_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [uniqueIndex("presets_name_key").on(sql`lower(${t.name})`)],
);

export const presetVersions = pgTable(
  "preset_versions",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    presetId: uuid("preset_id")
      .notNull()
      .references(() => presets.id),
    version: integer("version").notNull(),
    settings: jsonb("settings").$type<unknown>().notNull(),
    createdBy: uuid("created_by").references(() => users.id),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("preset_versions_preset_version_key").on(t.presetId, t.version)],
);

// ---------------------------------------------------------------------------------------------
// Audit trail: who changed what, when, with the values before and after. Rows are written by
// server/services/audit.ts inside the transaction of the change; the database refuses UPDATE,
// DELETE and TRUNCATE on this table (a trigger in the audit_immutable migration).
// ---------------------------------------------------------------------------------------------

export const auditEvents = pgTable(
  "audit_events",
  {
    /** Rising with every row, so newest-first pages have a stable cursor. */
    id: bigint("id", { mode: "number" }).primaryKey().generatedAlwaysAsIdentity(),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
    /** Null for a failed sign-in by an unknown address, and for changes Platen made itself. */
    actorId: uuid("actor_id"),
    /** The actor's e-mail as it was then (or the address tried, for a failed sign-in). */
    actorEmail: text("actor_email"),
    /** A stable dotted name: `fragment.approve`, `recipe.version`, `user.role`. */
    action: text("action").notNull(),
    subjectType: text("subject_type").notNull(),
    subjectId: text("subject_id"),
    summary: text("summary").notNull(),
    /** Only the fields that changed; never secrets (password hashes, tokens). */
    before: jsonb("before").$type<Record<string, unknown>>(),
    after: jsonb("after").$type<Record<string, unknown>>(),
    ip: text("ip"),
    userAgent: text("user_agent"),
  },
  (t) => [
    index("audit_events_at_idx").on(t.at),
    index("audit_events_actor_idx").on(t.actorId, t.id),
    index("audit_events_action_idx").on(t.action, t.id),
    index("audit_events_subject_idx").on(t.subjectType, t.subjectId, t.id),
  ],
);

// ---------------------------------------------------------------------------------------------
// E-mail: invitations, password resets, each person's notice choices, and the outgoing notices.
// Tokens are never stored: only the SHA-256 of the random token that went out in the message.
// ---------------------------------------------------------------------------------------------

/** An address invited to the studio with a role; pending until accepted, revoked or expired. */
export const invitations = pgTable(
  "invitations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    email: text("email").notNull(),
    role: roleEnum("role").notNull(),
    /** SHA-256 (hex) of the token in the last message sent; a resend replaces it. */
    tokenHash: varchar("token_hash", { length: 64 }).notNull(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    invitedBy: uuid("invited_by").references(() => users.id, { onDelete: "set null" }),
    sendCount: integer("send_count").notNull().default(0),
    sentAt: timestamp("sent_at", { withTimezone: true }),
    /** Why the last message could not be handed to the mail server, if it could not. */
    sendError: text("send_error"),
    acceptedAt: timestamp("accepted_at", { withTimezone: true }),
    acceptedUserId: uuid("accepted_user_id").references(() => users.id, { onDelete: "set null" }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [
    uniqueIndex("invitations_token_hash_key").on(t.tokenHash),
    // One open invitation per address: inviting again means resending it.
    uniqueIndex("invitations_open_email_key")
      .on(t.email)
      .where(sql`${t.acceptedAt} is null and ${t.revokedAt} is null`),
  ],
);

/** A password reset link that went out; usable once, until it expires. */
export const passwordResets = pgTable(
  "password_resets",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    tokenHash: varchar("token_hash", { length: 64 }).notNull(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    usedAt: timestamp("used_at", { withTimezone: true }),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("password_resets_token_hash_key").on(t.tokenHash), index("password_resets_user_idx").on(t.userId)],
);

/** Which notices a person chose; no row means the defaults for their role. */
export const noticeSettings = pgTable("notice_settings", {
  userId: uuid("user_id")
    .primaryKey()
    .references(() => users.id, { onDelete: "cascade" }),
  batchFinished: boolean("batch_finished").notNull(),
  intakeFinished: boolean("intake_finished").notNull(),
  scanFailed: boolean("scan_failed").notNull(),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
});

/**
 * Notices waiting to go out and gone out, one row per message. `dedupe_key` makes one event give
 * one message per person however often its job runs; `sent_at` makes a retry never send again.
 */
export const mailOutbox = pgTable(
  "mail_outbox",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    dedupeKey: text("dedupe_key").notNull(),
    userId: uuid("user_id").references(() => users.id, { onDelete: "set null" }),
    toAddress: text("to_address").notNull(),
    subject: text("subject").notNull(),
    textBody: text("text_body").notNull(),
    htmlBody: text("html_body").notNull(),
    attempts: integer("attempts").notNull().default(0),
    /** Set while one worker holds the message, so two never send it at once. */
    claimedAt: timestamp("claimed_at", { withTimezone: true }),
    sentAt: timestamp("sent_at", { withTimezone: true }),
    lastError: text("last_error"),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("mail_outbox_dedupe_key").on(t.dedupeKey)],
);

// ---------------------------------------------------------------------------------------------
// Off-site copy: with a local library and PLATEN_OFFSITE_BUCKET set, every master is also copied
// to that bucket by the offsite-copy job. One row per master: where its copy stands, the SHA-256
// it was copied with, and the last re-check that compared the bucket's bytes with the master's.
// ---------------------------------------------------------------------------------------------
export const offsiteCopies = pgTable(
  "offsite_copies",
  {
    outputId: uuid("output_id")
      .primaryKey()
      .references(() => outputs.id, { onDelete: "cascade" }),
    key: text("key").notNull(),
    status: text("status").$type<"pending" | "copied" | "failed">().notNull().default("pending"),
    /** Why it failed (the store's answer, or the checksums that differ); null when fine. */
    message: text("message"),
    /** SHA-256 of the master as copied, also kept as the object's metadata. */
    sha256: text("sha256"),
    attempts: integer("attempts").notNull().default(0),
    copiedAt: timestamp("copied_at", { withTimezone: true }),
    checkedAt: timestamp("checked_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [index("offsite_copies_status").on(t.status)],
);

// ---------------------------------------------------------------------------------------------
// Library tidies: each removal of left-over library files (by an admin, or by the worker's regular
// tidy, which waits PLATEN_TIDY_EVERY_HOURS from the last one of either).
// ---------------------------------------------------------------------------------------------
export const libraryTidies = pgTable(
  "library_tidies",
  {
    id: bigint("id", { mode: "number" }).primaryKey().generatedAlwaysAsIdentity(),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
    /** Who asked; null for the worker's regular tidy. */
    actorId: uuid("actor_id").references(() => users.id, { onDelete: "set null" }),
    removed: integer("removed").notNull(),
    bytes: bigint("bytes", { mode: "number" }).notNull(),
  },
  (t) => [index("library_tidies_at").on(t.at)],
);
