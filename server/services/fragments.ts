import { and, asc, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { fragments, outputs, scans } from "../db/schema";
import { withTx, type Tx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import type { RightsPayload } from "../../shared/schemas/jobs";
import { badRequest, conflict, notFound } from "../errors";
import { presentFragment } from "../presenters/fragment";
import type { Role } from "../../shared/roles";
import { hasRole } from "../../shared/roles";
import type { DetectedPiece, Fragment, FragmentGeometry, Rect, UpdateFragmentBody } from "../../shared/schemas/fragments";
import { changedFields, recordAudit } from "./audit";
import {
  boxOfPoints,
  convexHull,
  minAreaRect,
  polygonArea,
  readingOrder,
  rectCorners,
  rotatePoint,
  type Point,
} from "../../shared/geometry";

type FragmentRow = typeof fragments.$inferSelect;
type ScanRow = typeof scans.$inferSelect;

/** Viewers see approved work only; operators and admins see every fragment that is not merged away. */
function visibleTo(role: Role) {
  return hasRole(role, "operator") ? isNull(fragments.mergedInto) : and(isNull(fragments.mergedInto), eq(fragments.status, "approved"));
}

/**
 * The same rule for records of what was made from fragments (a batch's items and files): operators
 * and admins see them all, as made; a viewer only those whose fragment is still approved and not
 * merged away. Undefined means no condition.
 */
export function madeFromVisibleTo(role: Role) {
  return hasRole(role, "operator") ? undefined : visibleTo(role);
}

async function present(db: Db, rows: FragmentRow[]): Promise<Fragment[]> {
  if (!rows.length) return [];
  const ids = rows.map((r) => r.id);
  const scanIds = [...new Set(rows.map((r) => r.scanId))];
  const [scanRows, outRows, merged] = await Promise.all([
    db.select().from(scans).where(inArray(scans.id, scanIds)),
    db.select().from(outputs).where(inArray(outputs.fragmentId, ids)),
    db.select({ id: fragments.id, into: fragments.mergedInto }).from(fragments).where(inArray(fragments.mergedInto, ids)),
  ]);
  const scanById = new Map(scanRows.map((s) => [s.id, s]));
  return rows.map((r) =>
    presentFragment(
      r,
      scanById.get(r.scanId)!,
      outRows.filter((o) => o.fragmentId === r.id),
      merged.filter((m) => m.into === r.id).map((m) => m.id),
    ),
  );
}

export async function listScanFragments(db: Db, scanId: string, role: Role): Promise<Fragment[]> {
  const rows = await db
    .select()
    .from(fragments)
    .where(and(eq(fragments.scanId, scanId), visibleTo(role)))
    .orderBy(asc(fragments.position));
  return present(db, rows);
}

export async function listFragments(
  db: Db,
  role: Role,
  q: { status?: FragmentRow["status"]; scanId?: string; intakeId?: string; q?: string; limit: number; offset: number },
) {
  const text = q.q ? `%${q.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%` : null;
  const cond = and(
    visibleTo(role),
    q.status ? eq(fragments.status, q.status) : undefined,
    q.scanId ? eq(fragments.scanId, q.scanId) : undefined,
    q.intakeId ? sql`${fragments.scanId} in (select id from scans where intake_id = ${q.intakeId})` : undefined,
    text
      ? sql`(${fragments.title} ilike ${text} or ${fragments.notes} ilike ${text} or exists (select 1 from unnest(${fragments.tags}) t where t ilike ${text}) or exists (select 1 from scans s where s.id = ${fragments.scanId} and s.original_name ilike ${text}))`
      : undefined,
  );
  const [rows, [total]] = await Promise.all([
    db.select().from(fragments).where(cond).orderBy(desc(fragments.updatedAt), asc(fragments.position)).limit(q.limit).offset(q.offset),
    db
      .select({ n: sql<number>`count(*)::int` })
      .from(fragments)
      .where(cond),
  ]);
  return { fragments: await present(db, rows), total: total?.n ?? 0 };
}

async function loadRow(db: Db, id: string, role: Role): Promise<FragmentRow> {
  const [row] = await db
    .select()
    .from(fragments)
    .where(and(eq(fragments.id, id), visibleTo(role)));
  if (!row) throw notFound("That fragment");
  return row;
}

export async function getFragment(db: Db, id: string, role: Role): Promise<Fragment> {
  return (await present(db, [await loadRow(db, id, role)]))[0]!;
}

/**
 * Carries a cut-out's outline along when its rectangle is moved, resized or turned: each point
 * keeps its place relative to the rectangle (upright frame, scaled per axis).
 */
export function carryOutline(outline: Point[], from: { rect: Rect; angle: number }, to: { rect: Rect; angle: number }): Point[] {
  const sx = to.rect.width / from.rect.width;
  const sy = to.rect.height / from.rect.height;
  return outline.map((p) => {
    const [ux, uy] = rotatePoint(p, [from.rect.cx, from.rect.cy], from.angle);
    const q: Point = [to.rect.cx + (ux - from.rect.cx) * sx, to.rect.cy + (uy - from.rect.cy) * sy];
    return rotatePoint(q, [to.rect.cx, to.rect.cy], -to.angle);
  });
}

/** Geometry of a rectangle drawn or edited by a person: box and outline follow the rectangle. */
function geometryFromRect(
  scan: ScanRow,
  rect: Rect,
  angle: number,
  shape: FragmentGeometry["shape"],
  outline?: Point[],
): FragmentGeometry & { areaPx: number } {
  const corners = rectCorners(rect, angle);
  const w = scan.width ?? Infinity;
  const h = scan.height ?? Infinity;
  const inside = corners.every(([x, y]) => x >= -1 && y >= -1 && x <= w + 1 && y <= h + 1);
  if (!inside) throw badRequest(`The fragment's rectangle reaches outside the scan (${scan.width} × ${scan.height} px).`, "rect");
  const keepOutline = shape === "cutout" && outline && outline.length >= 3 ? outline : corners;
  return {
    box: boxOfPoints(corners, w, h),
    angle,
    rect,
    outline: keepOutline.map(([x, y]) => [Math.round(x * 10) / 10, Math.round(y * 10) / 10] as [number, number]),
    shape,
    areaPx: polygonArea(keepOutline),
  };
}

export async function queueRender(tx: Tx, row: Pick<FragmentRow, "id" | "revision" | "scanId">) {
  await tx.db.update(fragments).set({ renderState: "queued", renderError: null }).where(eq(fragments.id, row.id));
  await tx.send(QUEUES.render, { fragmentId: row.id, revision: row.revision });
}

/**
 * Replaces a scan's split proposals with a new split's pieces. Approved and drawn fragments stay;
 * a new piece lying mostly on an approved fragment is not proposed again.
 */
export async function replaceProposals(tx: Tx, scan: ScanRow, pieces: DetectedPiece[], run: number): Promise<number> {
  await tx.db
    .delete(fragments)
    .where(
      and(
        eq(fragments.scanId, scan.id),
        eq(fragments.origin, "split"),
        inArray(fragments.status, ["proposed", "rejected"]),
        isNull(fragments.mergedInto),
      ),
    );
  const kept = await tx.db
    .select()
    .from(fragments)
    .where(and(eq(fragments.scanId, scan.id), isNull(fragments.mergedInto)));
  const overlapsKept = (p: DetectedPiece) =>
    kept.some((k) => {
      const ix = Math.max(0, Math.min(k.box.x + k.box.width, p.box.x + p.box.width) - Math.max(k.box.x, p.box.x));
      const iy = Math.max(0, Math.min(k.box.y + k.box.height, p.box.y + p.box.height) - Math.max(k.box.y, p.box.y));
      return ix * iy > 0.5 * p.box.width * p.box.height;
    });
  const fresh = pieces.filter((p) => !overlapsKept(p));
  const ordered = readingOrder(
    [
      ...kept.map((k) => ({ box: k.box, id: k.id as string | null, piece: null as DetectedPiece | null })),
      ...fresh.map((p) => ({ box: p.box, id: null, piece: p })),
    ],
    (i) => i.box,
  );
  let position = 0;
  for (const item of ordered) {
    position++;
    if (item.id) {
      await tx.db.update(fragments).set({ position }).where(eq(fragments.id, item.id));
      continue;
    }
    const p = item.piece!;
    const geometry: FragmentGeometry = { box: p.box, angle: p.angle, rect: p.rect, outline: p.outline, shape: p.shape };
    await tx.db
      .insert(fragments)
      .values({ scanId: scan.id, position, splitRun: run, ...geometry, areaPx: p.areaPx, confidence: p.confidence, proposal: geometry });
  }
  return fresh.length;
}

export interface Actor {
  id: string;
  role: Role;
}

async function scanOf(db: Db, scanId: string): Promise<ScanRow> {
  const [scan] = await db.select().from(scans).where(eq(scans.id, scanId));
  if (!scan) throw notFound("That scan");
  return scan;
}

/** "fragment 3 of bed-04.tif (Blue heron)", for audit summaries. */
function fragmentLabel(scan: Pick<ScanRow, "originalName">, row: Pick<FragmentRow, "position" | "title">): string {
  return `fragment ${row.position} of ${scan.originalName}${row.title ? ` (${row.title})` : ""}`;
}

const STATUS_ACTIONS = { approved: "fragment.approve", rejected: "fragment.reject", proposed: "fragment.unreview" } as const;
const EDITED_FIELDS = ["rect", "angle", "shape", "box", "title", "tags", "notes"] as const;

/** One row for a change of status, one for edits of geometry or description (a patch may do both). */
async function auditUpdate(tx: Tx, scan: ScanRow, before: FragmentRow, after: FragmentRow) {
  const label = fragmentLabel(scan, before);
  const status = changedFields(before, after, ["status"]);
  if (status) {
    const verb = { approved: "Approved", rejected: "Rejected", proposed: "Put back to proposed" }[after.status];
    await recordAudit(tx, {
      action: STATUS_ACTIONS[after.status],
      subjectType: "fragment",
      subjectId: after.id,
      summary: `${verb} ${label}`,
      ...status,
    });
  }
  const edits = changedFields(before, after, EDITED_FIELDS);
  if (edits) {
    await recordAudit(tx, {
      action: "fragment.edit",
      subjectType: "fragment",
      subjectId: after.id,
      summary: `Edited ${Object.keys(edits.after).join(", ")} of ${label}`,
      ...edits,
    });
  }
}

/** Approve, reject, move, turn, reshape or describe a fragment. Approval (or an edit once approved) queues its render. */
export async function updateFragment(
  database: Database,
  boss: PgBoss,
  actor: Actor,
  id: string,
  patch: UpdateFragmentBody,
): Promise<Fragment> {
  await withTx(database, boss, async (tx) => {
    const row = await loadRow(tx.db, id, actor.role);
    const scan = await scanOf(tx.db, row.scanId);
    const geometryChanged = patch.rect !== undefined || patch.angle !== undefined || patch.shape !== undefined;
    const set: Partial<typeof fragments.$inferInsert> = { updatedAt: new Date() };
    if (geometryChanged) {
      const next = { rect: patch.rect ?? row.rect, angle: patch.angle ?? row.angle };
      const outline = carryOutline(row.outline, { rect: row.rect, angle: row.angle }, next);
      Object.assign(set, geometryFromRect(scan, next.rect, next.angle, patch.shape ?? row.shape, outline));
      set.revision = row.revision + 1;
    }
    if (patch.status !== undefined && patch.status !== row.status) {
      set.status = patch.status;
      set.reviewedBy = actor.id;
      set.reviewedAt = new Date();
    }
    if (patch.title !== undefined) set.title = patch.title;
    if (patch.tags !== undefined) set.tags = [...new Set(patch.tags)];
    if (patch.notes !== undefined) set.notes = patch.notes;
    const [updated] = await tx.db.update(fragments).set(set).where(eq(fragments.id, id)).returning();
    await auditUpdate(tx, scan, row, updated!);
    const approvedNow = updated!.status === "approved" && (row.status !== "approved" || geometryChanged);
    if (approvedNow) await queueRender(tx, updated!);
    // A new title bumps no revision: the master and web copy made already get it written into
    // their metadata (the job does nothing while a render is unfinished; that render writes it).
    else if (updated!.status === "approved" && !updated!.mergedInto && (updated!.title ?? null) !== (row.title ?? null))
      await tx.send(QUEUES.rights, { fragmentId: id, rights: "keep" } satisfies RightsPayload);
    await tx.notify({ kind: "scan", scanId: row.scanId });
  });
  return getFragment(database.db, id, actor.role);
}

/** Back to the split's proposal: geometry and status. */
export async function resetFragment(database: Database, boss: PgBoss, actor: Actor, id: string): Promise<Fragment> {
  await withTx(database, boss, async (tx) => {
    const row = await loadRow(tx.db, id, actor.role);
    if (!row.proposal) throw conflict("This fragment was drawn by hand, so there is no proposal to go back to.");
    const [updated] = await tx.db
      .update(fragments)
      .set({
        ...row.proposal,
        status: "proposed",
        revision: row.revision + 1,
        reviewedBy: actor.id,
        reviewedAt: new Date(),
        updatedAt: new Date(),
      })
      .where(eq(fragments.id, id))
      .returning();
    const scan = await scanOf(tx.db, row.scanId);
    await recordAudit(tx, {
      action: "fragment.reset",
      subjectType: "fragment",
      subjectId: id,
      summary: `Reset ${fragmentLabel(scan, row)} to the split's proposal`,
      ...(changedFields(row, updated!, ["status", "rect", "angle", "shape", "box"]) ?? {}),
    });
    await tx.notify({ kind: "scan", scanId: row.scanId });
  });
  return getFragment(database.db, id, actor.role);
}

/** Adds a fragment the split missed. */
export async function drawFragment(
  database: Database,
  boss: PgBoss,
  actor: Actor,
  scanId: string,
  body: { rect: Rect; angle: number; shape: FragmentGeometry["shape"] },
): Promise<Fragment> {
  const id = await withTx(database, boss, async (tx) => {
    const scan = await scanOf(tx.db, scanId);
    if (scan.status !== "ready") throw conflict(`Fragments can be drawn on a ready scan; this one is ${scan.status}.`);
    const g = geometryFromRect(scan, body.rect, body.angle, body.shape);
    const [{ max } = { max: 0 }] = await tx.db
      .select({ max: sql<number>`coalesce(max(${fragments.position}), 0)::int` })
      .from(fragments)
      .where(eq(fragments.scanId, scanId));
    const [row] = await tx.db
      .insert(fragments)
      .values({ scanId, position: max + 1, origin: "drawn", ...g, confidence: 1, reviewedBy: actor.id })
      .returning();
    await recordAudit(tx, {
      action: "fragment.draw",
      subjectType: "fragment",
      subjectId: row!.id,
      summary: `Drew ${fragmentLabel(scan, row!)}`,
      after: { rect: row!.rect, angle: row!.angle, shape: row!.shape, box: row!.box },
    });
    await tx.notify({ kind: "scan", scanId });
    return row!.id;
  });
  return getFragment(database.db, id, actor.role);
}

/** Merges fragments of one scan into one whose outline is the hull of theirs. Undone by `unmerge`. */
export async function mergeFragments(database: Database, boss: PgBoss, actor: Actor, ids: string[]): Promise<Fragment> {
  const unique = [...new Set(ids)];
  if (unique.length < 2) throw badRequest("Expected at least two different fragments to merge.", "ids");
  const id = await withTx(database, boss, async (tx) => {
    const rows = await tx.db
      .select()
      .from(fragments)
      .where(and(inArray(fragments.id, unique), isNull(fragments.mergedInto)));
    if (rows.length !== unique.length) throw notFound("One of those fragments");
    const scanIds = new Set(rows.map((r) => r.scanId));
    if (scanIds.size > 1) throw badRequest("Only fragments of the same scan can be merged.", "ids");
    const scan = await scanOf(tx.db, rows[0]!.scanId);
    const points = rows.flatMap((r) => r.outline);
    const hull = convexHull(points);
    const enclosing = minAreaRect(hull);
    let rect: Rect = { cx: enclosing.cx, cy: enclosing.cy, width: enclosing.width, height: enclosing.height };
    let angle = enclosing.angle;
    let area = enclosing.area;
    const inside = (r: Rect, a: number) =>
      rectCorners(r, a).every(([x, y]) => x >= -1 && y >= -1 && x <= (scan.width ?? Infinity) + 1 && y <= (scan.height ?? Infinity) + 1);
    if (!inside(rect, angle)) {
      // A turned rectangle around pieces near the edge can reach past the bed: fall back to the upright box.
      const b = boxOfPoints(hull, scan.width ?? Infinity, scan.height ?? Infinity);
      rect = { cx: b.x + b.width / 2, cy: b.y + b.height / 2, width: b.width, height: b.height };
      angle = 0;
      area = b.width * b.height;
    }
    const shape = polygonArea(hull) / area >= 0.95 && rows.every((r) => r.shape === "rectangle") ? "rectangle" : "cutout";
    const g = geometryFromRect(scan, rect, angle, shape, hull);
    const position = Math.min(...rows.map((r) => r.position));
    const [row] = await tx.db
      .insert(fragments)
      .values({
        scanId: scan.id,
        position,
        origin: "merged",
        ...g,
        confidence: Math.min(...rows.map((r) => r.confidence)),
        reviewedBy: actor.id,
      })
      .returning();
    await tx.db.update(fragments).set({ mergedInto: row!.id, updatedAt: new Date() }).where(inArray(fragments.id, unique));
    const parts = [...rows].sort((a, b) => a.position - b.position);
    await recordAudit(tx, {
      action: "fragment.merge",
      subjectType: "fragment",
      subjectId: row!.id,
      summary: `Merged fragments ${parts.map((p) => p.position).join(", ")} of ${scan.originalName} into one`,
      before: { fragments: parts.map((p) => p.id) },
      after: { fragment: row!.id, rect: row!.rect, angle: row!.angle, shape: row!.shape },
    });
    await tx.notify({ kind: "scan", scanId: scan.id });
    return row!.id;
  });
  return getFragment(database.db, id, actor.role);
}

/** Takes a merge back: the merged fragment goes, the ones it was made of return as they were. */
export async function unmergeFragment(database: Database, boss: PgBoss, actor: Actor, id: string): Promise<Fragment[]> {
  const scanId = await withTx(database, boss, async (tx) => {
    const row = await loadRow(tx.db, id, actor.role);
    if (row.origin !== "merged") throw conflict("This fragment was not made by a merge.");
    const back = await tx.db
      .update(fragments)
      .set({ mergedInto: null, updatedAt: new Date() })
      .where(eq(fragments.mergedInto, id))
      .returning();
    await tx.db.delete(fragments).where(eq(fragments.id, id));
    // An approved piece comes back rendered only if its master is of its revision: one whose scan
    // got a new resolution while it was merged away (a new revision), or whose render was passed
    // over because it was merged, renders now.
    for (const b of back) {
      if (b.status !== "approved") continue;
      const [master] = await tx.db
        .select({ id: outputs.id })
        .from(outputs)
        .where(and(eq(outputs.fragmentId, b.id), eq(outputs.kind, "master"), eq(outputs.revision, b.revision)));
      if (!master || b.renderState !== "done") await queueRender(tx, b);
    }
    const scan = await scanOf(tx.db, row.scanId);
    await recordAudit(tx, {
      action: "fragment.unmerge",
      subjectType: "fragment",
      subjectId: id,
      summary: `Took ${fragmentLabel(scan, row)} apart again into ${back.length} fragments (the merged one is deleted)`,
      before: { fragment: id, status: row.status, rect: row.rect, angle: row.angle },
      after: { fragments: back.map((b) => b.id) },
    });
    await tx.notify({ kind: "scan", scanId: row.scanId });
    return row.scanId;
  });
  return listScanFragments(database.db, scanId, actor.role);
}

/** Approves every fragment of the scan still proposed, and queues their renders. */
export async function approveRemaining(database: Database, boss: PgBoss, actor: Actor, scanId: string): Promise<Fragment[]> {
  await withTx(database, boss, async (tx) => {
    const scan = await scanOf(tx.db, scanId);
    const rows = await tx.db
      .update(fragments)
      .set({ status: "approved", reviewedBy: actor.id, reviewedAt: new Date(), updatedAt: new Date() })
      .where(and(eq(fragments.scanId, scanId), eq(fragments.status, "proposed"), isNull(fragments.mergedInto)))
      .returning();
    if (rows.length) {
      await recordAudit(tx, {
        action: "fragment.approve_remaining",
        subjectType: "scan",
        subjectId: scanId,
        summary: `Approved the ${rows.length} remaining ${rows.length === 1 ? "fragment" : "fragments"} of ${scan.originalName}`,
        before: { status: "proposed" },
        after: { status: "approved", fragments: rows.map((r) => r.id) },
      });
    }
    for (const r of rows) await queueRender(tx, r);
    await tx.notify({ kind: "scan", scanId });
  });
  return listScanFragments(database.db, scanId, actor.role);
}

/** Splits a scan again with another sensitivity (approved and drawn fragments stay). */
export async function requestResplit(database: Database, boss: PgBoss, scanId: string, sensitivity: number) {
  await withTx(database, boss, async (tx) => {
    const scan = await scanOf(tx.db, scanId);
    if (scan.status !== "ready") throw conflict(`Only a ready scan can be split again; this one is ${scan.status}.`);
    await recordAudit(tx, {
      action: "scan.resplit",
      subjectType: "scan",
      subjectId: scanId,
      summary: `Split ${scan.originalName} again at sensitivity ${sensitivity}`,
      before: { sensitivity: scan.splitSensitivity },
      after: { sensitivity },
    });
    await tx.db
      .update(scans)
      .set({ status: "analysing", stage: "Waiting to split again", progress: 0, updatedAt: new Date() })
      .where(eq(scans.id, scanId));
    await tx.send(QUEUES.split, { scanId, sensitivity });
    await tx.notify({ kind: "scan", scanId, status: "analysing" });
  });
}

/** Proposed fragments per scan, for the queue and scans screens. */
export async function proposedCounts(db: Db, scanIds?: string[]): Promise<Map<string, { proposed: number; total: number }>> {
  const rows = await db
    .select({
      scanId: fragments.scanId,
      proposed: sql<number>`count(*) filter (where ${fragments.status} = 'proposed')::int`,
      total: sql<number>`count(*) filter (where ${fragments.status} <> 'rejected')::int`,
    })
    .from(fragments)
    .where(and(isNull(fragments.mergedInto), scanIds ? inArray(fragments.scanId, scanIds) : undefined))
    .groupBy(fragments.scanId);
  return new Map(rows.map((r) => [r.scanId, { proposed: r.proposed, total: r.total }]));
}
