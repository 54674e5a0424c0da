import { sql } from "drizzle-orm";
import {
  bigint,
  boolean,
  index,
  integer,
  json,
  pgEnum,
  pgTable,
  real,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  varchar,
} from "drizzle-orm/pg-core";
import { ROLES } from "../../shared/roles";
import { SCAN_STATUSES } from "../../shared/schemas/scans";

/** The one place the database is described; drizzle-kit generates drizzle/ from it. */

export const roleEnum = pgEnum("role", ROLES);
export const scanStatusEnum = pgEnum("scan_status", SCAN_STATUSES);
export const dpiSourceEnum = pgEnum("dpi_source", ["embedded", "assumed"]);
export const scanSourceEnum = pgEnum("scan_source", ["inbox", "upload"]);

const timestamps = {
  createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
};

/** One row: this installation's studio and its settings. */
export const studio = pgTable("studio", {
  id: integer("id").primaryKey().default(1),
  name: text("name").notNull(),
  defaultDpi: integer("default_dpi").notNull().default(300),
  demo: boolean("demo").notNull().default(false),
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
    attempts: integer("attempts").notNull().default(0),
    duplicateOfId: uuid("duplicate_of_id"),
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
    previewKey: text("preview_key"),
    thumbKey: text("thumb_key"),
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

/** Heartbeats of the inbox watcher and the workers, for the queue screen. */
export const processes = pgTable("processes", {
  id: text("id").primaryKey(),
  kind: text("kind").notNull(),
  host: text("host").notNull(),
  pid: integer("pid").notNull(),
  folder: text("folder"),
  lastFile: text("last_file"),
  lastFileAt: timestamp("last_file_at", { withTimezone: true }),
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
