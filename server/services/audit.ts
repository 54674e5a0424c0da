import { AsyncLocalStorage } from "node:async_hooks";
import type { Request } from "express";
import { and, desc, eq, gte, ilike, like, lt, lte, or, sql, type SQL } from "drizzle-orm";
import type { Db } from "../db";
import { auditEvents, users } from "../db/schema";
import type { Tx } from "../db/tx";
import { notFound } from "../errors";
import type { AuditAction, AuditChange, AuditDetail, AuditEvent, AuditSubjectType } from "../../shared/schemas/audit";
import type { z } from "zod";
import type { auditListQuery } from "../../shared/schemas/audit";

/**
 * The audit trail: one function, `recordAudit`, that every service calls inside the transaction of
 * the change it records, so the change and its row commit together or not at all. Who and from
 * where come from the request being handled (see `withAuditRequest`), so services need not pass
 * them along; a sign-in names its actor explicitly, because nobody is signed in yet.
 */

type AuditRow = typeof auditEvents.$inferSelect;

export interface AuditActor {
  id: string | null;
  email: string | null;
}

const requests = new AsyncLocalStorage<Request>();

/** Runs a route handler with its request as the audit context (who, IP, user agent). */
export function withAuditRequest<T>(req: Request, fn: () => T): T {
  return requests.run(req, fn);
}

export interface AuditEntry {
  action: AuditAction;
  subjectType: AuditSubjectType;
  subjectId: string | null;
  /** A short sentence for people: "Approved fragment 3 of bed-04.tif". */
  summary: string;
  before?: Record<string, unknown> | null;
  after?: Record<string, unknown> | null;
}

/** Anything that can insert: the app's Db, a Drizzle transaction, or our Tx (Drizzle + pg-boss on one connection). */
export type AuditWriter = Pick<Db, "insert"> | Tx;

const SECRET_KEY = /pass(word)?|hash|token|secret|cookie|session/i;

/** Drops every key that could hold a secret, at any depth: the trail never keeps one. */
export function withoutSecrets(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(withoutSecrets);
  if (value instanceof Date) return value.toISOString();
  if (value && typeof value === "object") {
    return Object.fromEntries(
      Object.entries(value)
        .filter(([k]) => !SECRET_KEY.test(k))
        .map(([k, v]) => [k, withoutSecrets(v)]),
    );
  }
  return value;
}

function canonical(v: unknown): string {
  return JSON.stringify(v ?? null, (_k, x: unknown) =>
    x && typeof x === "object" && !Array.isArray(x) ? Object.fromEntries(Object.entries(x).sort(([a], [b]) => a.localeCompare(b))) : x,
  );
}

/**
 * The fields of `fields` that differ between two states, as the before and after of an audit row;
 * null when nothing changed. `{ role: "viewer" } → { role: "operator" }`.
 */
export function changedFields<T extends Record<string, unknown>>(
  before: T,
  after: Partial<T>,
  fields: readonly (keyof T & string)[],
): { before: Record<string, unknown>; after: Record<string, unknown> } | null {
  const b: Record<string, unknown> = {};
  const a: Record<string, unknown> = {};
  for (const f of fields) {
    if (!(f in after)) continue;
    const from = withoutSecrets(before[f] ?? null);
    const to = withoutSecrets(after[f] ?? null);
    if (canonical(from) === canonical(to)) continue;
    b[f] = from;
    a[f] = to;
  }
  return Object.keys(a).length ? { before: b, after: a } : null;
}

function actorFrom(req: Request | undefined): AuditActor | null {
  const user = req?.user;
  return user ? { id: user.id, email: user.email } : null;
}

/**
 * Writes one audit row with the caller's transaction. The actor is the signed-in user of the
 * request being handled unless `opts.actor` names one; with neither (a script, the bootstrap),
 * the row has no actor and reads as done by Platen itself.
 */
export async function recordAudit(
  writer: AuditWriter,
  entry: AuditEntry,
  opts: { actor?: AuditActor | null; req?: Request } = {},
): Promise<void> {
  const req = opts.req ?? requests.getStore();
  const actor = opts.actor !== undefined ? opts.actor : actorFrom(req);
  const db = "send" in writer ? writer.db : writer;
  const clean = (v: Record<string, unknown> | null | undefined) => (v ? (withoutSecrets(v) as Record<string, unknown>) : null);
  await db.insert(auditEvents).values({
    actorId: actor?.id ?? null,
    actorEmail: actor?.email ?? null,
    action: entry.action,
    subjectType: entry.subjectType,
    subjectId: entry.subjectId,
    summary: entry.summary.slice(0, 500),
    before: clean(entry.before),
    after: clean(entry.after),
    ip: req?.ip ?? null,
    userAgent: req?.get("user-agent")?.slice(0, 400) ?? null,
  });
}

function present(row: AuditRow, name: string | null): AuditEvent {
  return {
    id: row.id,
    at: row.at.toISOString(),
    actor: { id: row.actorId, email: row.actorEmail, name },
    action: row.action,
    subjectType: row.subjectType,
    subjectId: row.subjectId,
    summary: row.summary,
    before: row.before ?? null,
    after: row.after ?? null,
    ip: row.ip,
    userAgent: row.userAgent,
  };
}

/** The fields of an event side by side: every key of before or after, in a stable order. */
export function changesOf(event: Pick<AuditEvent, "before" | "after">): AuditChange[] {
  // jsonb keeps no key order of its own: sort, so the same kind of event always reads the same way.
  const keys = [...new Set([...Object.keys(event.before ?? {}), ...Object.keys(event.after ?? {})])].sort();
  return keys.map((field) => ({ field, before: event.before?.[field] ?? null, after: event.after?.[field] ?? null }));
}

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

/** Newest first, filtered, one page at a time (cursor: the last id seen). */
export async function listAuditEvents(db: Db, q: z.output<typeof auditListQuery>) {
  const where: (SQL | undefined)[] = [];
  if (q.actorId) where.push(eq(auditEvents.actorId, q.actorId));
  if (q.action) {
    where.push(
      q.action.endsWith(".*") ? like(auditEvents.action, `${escapeLike(q.action.slice(0, -1))}%`) : eq(auditEvents.action, q.action),
    );
  }
  if (q.subjectType) where.push(eq(auditEvents.subjectType, q.subjectType));
  if (q.subjectId) where.push(eq(auditEvents.subjectId, q.subjectId));
  if (q.from) where.push(gte(auditEvents.at, new Date(q.from)));
  if (q.to) where.push(lte(auditEvents.at, new Date(q.to)));
  if (q.q) {
    const text = `%${escapeLike(q.q)}%`;
    // The summary, who did it, and the values it changed (a name typed into a field is found by it).
    where.push(
      or(
        ilike(auditEvents.summary, text),
        ilike(auditEvents.actorEmail, text),
        ilike(sql`${auditEvents.before}::text`, text),
        ilike(sql`${auditEvents.after}::text`, text),
      ),
    );
  }
  if (q.before) where.push(lt(auditEvents.id, q.before));
  const rows = await db
    .select({ event: auditEvents, name: users.name })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(and(...where))
    .orderBy(desc(auditEvents.id))
    .limit(q.limit + 1);
  const page = rows.slice(0, q.limit);
  return {
    events: page.map((r) => present(r.event, r.name)),
    nextCursor: rows.length > q.limit ? page[page.length - 1]!.event.id : null,
  };
}

export async function getAuditEvent(db: Db, id: number): Promise<AuditDetail> {
  const [row] = await db
    .select({ event: auditEvents, name: users.name })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(eq(auditEvents.id, id));
  if (!row) throw notFound("That audit event");
  const event = present(row.event, row.name);
  return { ...event, changes: changesOf(event) };
}
