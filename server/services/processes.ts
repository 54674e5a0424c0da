import os from "node:os";
import { sql } from "drizzle-orm";
import type { Db } from "../db";
import { processes } from "../db/schema";
import type { InboxWaiting } from "../../shared/schemas/queue";

/** A process is online when its last heartbeat is younger than this. */
export const HEARTBEAT_STALE_MS = 15_000;
export const HEARTBEAT_EVERY_MS = 5_000;

export type ProcessKind = "watcher" | "worker";

/** Records this process and keeps its heartbeat fresh until stopped. */
export function startHeartbeat(db: Db, kind: ProcessKind, extra: { folder?: string } = {}) {
  const id = `${kind}:${os.hostname()}:${process.pid}:${Date.now().toString(36)}`;
  // A restarted watcher still shows the last file its predecessor on this folder saw.
  const inherit = async () => {
    if (kind !== "watcher") return;
    const [prev] = await db
      .select({ lastFile: processes.lastFile, lastFileAt: processes.lastFileAt })
      .from(processes)
      .where(
        sql`${processes.kind} = 'watcher' and ${processes.folder} is not distinct from ${extra.folder ?? null} and ${processes.lastFile} is not null`,
      )
      .orderBy(sql`${processes.lastFileAt} desc`)
      .limit(1);
    if (prev)
      await db
        .update(processes)
        .set(prev)
        .where(sql`${processes.id} = ${id}`);
    await db
      .delete(processes)
      .where(sql`${processes.kind} = 'watcher' and ${processes.id} <> ${id} and ${processes.heartbeatAt} < now() - interval '1 day'`);
  };
  const beat = () =>
    db
      .insert(processes)
      .values({ id, kind, host: os.hostname(), pid: process.pid, folder: extra.folder ?? null })
      .onConflictDoUpdate({ target: processes.id, set: { heartbeatAt: sql`now()` } })
      .catch(() => {});
  const ready = beat()
    .then(inherit)
    .catch(() => {});
  const timer = setInterval(beat, HEARTBEAT_EVERY_MS);
  timer.unref();
  return {
    id,
    ready,
    /** Notes the last file this process saw (the watcher). */
    async sawFile(name: string) {
      await db
        .update(processes)
        .set({ lastFile: name, lastFileAt: sql`now()`, heartbeatAt: sql`now()` })
        .where(sql`${processes.id} = ${id}`);
    },
    /** Notes the files this process (the watcher) is holding back, as they are now. */
    async reportWaiting(waiting: InboxWaiting) {
      await db
        .update(processes)
        .set({ waiting, heartbeatAt: sql`now()` })
        .where(sql`${processes.id} = ${id}`);
    },
    async stop() {
      clearInterval(timer);
      // Workers leave; a watcher's row stays (marked stale) so its last file is remembered, but not
      // what it was waiting on: the next watcher looks at those files afresh.
      if (kind === "worker")
        await db
          .delete(processes)
          .where(sql`${processes.id} = ${id}`)
          .catch(() => {});
      else
        await db
          .update(processes)
          .set({ heartbeatAt: sql`now() - interval '1 hour'`, waiting: null })
          .where(sql`${processes.id} = ${id}`)
          .catch(() => {});
    },
  };
}
