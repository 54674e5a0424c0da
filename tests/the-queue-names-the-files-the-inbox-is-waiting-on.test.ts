/**
 * Every file that arrives is visible: one the inbox watcher holds back (still being written, or
 * stopped but looking unfinished, such as a TIFF cut inside its strip) is named in the queue
 * summary with why and since when, and leaves that list once it is filed, removed or renamed.
 * A watcher that stops does not leave its list behind as if it were current. Real PostgreSQL,
 * pg-boss, worker, files and chokidar; the writer is played by the test, on the real folder.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { baselineTiff } from "./helpers/scan-bytes";
import { processes, scans } from "../server/db/schema";
import { logger } from "../server/logger";
import type { InboxWaitingFile, QueueSummary } from "../shared/schemas/queue";
import { startWatcher } from "../worker/watcher";

let stack: Stack;
let viewer: Awaited<ReturnType<typeof userAgent>>;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  viewer = await userAgent(stack, "viewer");
}, 60_000);
afterAll(async () => {
  await stack?.stop();
});

const UNFINISHED_MS = 60_000;
const watch = () =>
  startWatcher(
    { database: stack.database, boss: stack.boss, library: stack.library, log: logger },
    { folder: stack.inbox, stableMs: 300, pollMs: 50, unfinishedMs: UNFINISHED_MS },
  );

async function summary(): Promise<QueueSummary> {
  const res = await viewer.get("/api/queue");
  expect(res.status).toBe(200);
  return res.body as QueueSummary;
}
/** The summary's entry for `name` once `ok` holds for it. */
const entryFor = (what: string, name: string, ok: (f: InboxWaitingFile) => boolean) =>
  waitFor(what, async () => (await summary()).watcher.waiting?.files.find((f) => f.name === name && ok(f)), 30_000);
/** Waits until `name` is no longer on the watcher's list. */
const leaves = (what: string, name: string) =>
  waitFor(
    what,
    async () => {
      const w = (await summary()).watcher.waiting;
      return w && !w.files.some((f) => f.name === name) ? w : null;
    },
    30_000,
  );
const rowsNamed = (name: string) => stack.db.select().from(scans).where(eq(scans.originalName, name));

/** A 600 × 400 greyscale TIFF in one strip after its IFD (TIFF 6.0 Section 2 layout). */
const stripTiff = () =>
  baselineTiff({ width: 600, height: 400, xResolution: [300, 1], yResolution: [300, 1], resolutionUnit: 2, grey: 180 });

describe("the files the inbox watcher is waiting on", () => {
  it("a file still being written is listed as such, and leaves the list once it is complete and filed", async () => {
    const name = "growing-bed-11.tif";
    const file = path.join(stack.inbox, name);
    const data = stripTiff();
    const watcher = await watch();
    const fh = await fs.open(file, "w");
    let written = 0;
    let seen = false;
    // The writer adds a little at a time, never still for the watcher's 300 ms, until the list says so.
    const writer = (async () => {
      while (!seen && written < data.length - 64) {
        await fh.write(data, written, 64, written);
        written += 64;
        await new Promise((r) => setTimeout(r, 40));
      }
    })();
    try {
      const entry = await entryFor("the file listed as being written", name, (f) => f.state === "writing");
      seen = true;
      await writer;
      expect(entry.reason).toBeNull();
      expect(entry.sizeBytes).toBeGreaterThan(0);
      expect(entry.sizeBytes).toBeLessThan(data.length);
      expect(Date.parse(entry.since)).toBeLessThanOrEqual(Date.now());
      expect((await rowsNamed(name)).length).toBe(0);

      await fh.write(data, written, data.length - written, written);
      await fh.close();
      await leaves("the file to leave the list", name);
      const rows = await waitFor("its scan", async () => {
        const r = await rowsNamed(name);
        return r.length === 1 ? r : null;
      });
      expect(rows[0]!.sizeBytes).toBe(data.length);
    } finally {
      seen = true;
      await writer;
      await fh.close().catch(() => {});
      await watcher.close();
      await fs.rm(file, { force: true });
    }
  }, 90_000);

  it("a truncated TIFF is listed as looking unfinished with its reason, and leaves the list once its rest is written and it is filed", async () => {
    const name = "cut-strip-bed-12.tif";
    const file = path.join(stack.inbox, name);
    const data = stripTiff();
    const part = data.length >> 1;
    const watcher = await watch();
    const scanner = await fs.open(file, "w");
    try {
      await scanner.write(data, 0, part, 0);
      const entry = await entryFor("the cut TIFF listed as unfinished", name, (f) => f.state === "unfinished");
      // TIFF 6.0 Section 3: StripOffsets and StripByteCounts place the one strip past the cut.
      expect(entry.reason).toBe("the TIFF's strip 1 of 1 runs past its end");
      expect(entry.sizeBytes).toBe(part);
      // Filed as it is (to fail with that reason) only after the inbox's wait.
      expect(Date.parse(entry.until!) - Date.parse(entry.since)).toBeGreaterThan(UNFINISHED_MS - 5_000);
      expect(Date.parse(entry.until!)).toBeLessThanOrEqual(Date.now() + UNFINISHED_MS);
      const waiting = (await summary()).watcher.waiting!;
      expect([waiting.count, waiting.unfinishedMs]).toEqual([1, UNFINISHED_MS]);
      expect(await rowsNamed(name)).toEqual([]);

      await scanner.write(data, part, data.length - part, part);
      await scanner.close();
      await leaves("the whole TIFF to leave the list", name);
      const rows = await waitFor("its one scan, whole", async () => {
        const r = await rowsNamed(name);
        return r.length === 1 ? r : null;
      });
      expect(rows[0]!.sizeBytes).toBe(data.length);
      expect((await summary()).watcher.waiting!.count).toBe(0);
    } finally {
      await scanner.close().catch(() => {});
      await watcher.close();
      await fs.rm(file, { force: true });
    }
  }, 90_000);

  it("names at most 20 files, the one seen last first, and counts them all", async () => {
    const data = stripTiff();
    const watcher = await watch();
    const names = Array.from({ length: 22 }, (_, i) => `cut-batch-${String(i + 1).padStart(2, "0")}.tif`);
    try {
      for (const n of names.slice(0, 21)) await fs.writeFile(path.join(stack.inbox, n), data.subarray(0, 4000));
      await waitFor("21 files listed", async () => ((await summary()).watcher.waiting?.count === 21 ? true : null), 30_000);
      // One more, a while after the others: it heads the list.
      await fs.writeFile(path.join(stack.inbox, names[21]!), data.subarray(0, 4000));
      const w = await waitFor(
        "22 files counted",
        async () => {
          const x = (await summary()).watcher.waiting;
          return x?.count === 22 && x.files.every((f) => f.state === "unfinished") ? x : null;
        },
        30_000,
      );
      expect(w.files).toHaveLength(20);
      expect(w.files[0]!.name).toBe(names[21]);
      expect(new Set(w.files.map((f) => f.name)).size).toBe(20);
      for (const n of names) await fs.rm(path.join(stack.inbox, n));
      await waitFor("the list to empty", async () => ((await summary()).watcher.waiting?.count === 0 ? true : null), 30_000);
    } finally {
      await watcher.close();
      for (const n of names) await fs.rm(path.join(stack.inbox, n), { force: true });
    }
  }, 90_000);

  it("a listed file renamed or removed leaves the list; a stopped watcher's list is not shown as current", async () => {
    const first = "renamed-bed-13.tif";
    const second = "renamed-bed-13-final.tif";
    const data = stripTiff();
    await fs.writeFile(path.join(stack.inbox, first), data.subarray(0, data.length >> 1));
    const watcher = await watch();
    let closed = false;
    try {
      await entryFor("the cut TIFF listed", first, (f) => f.state === "unfinished");
      await fs.rename(path.join(stack.inbox, first), path.join(stack.inbox, second));
      await entryFor("the new name listed", second, (f) => f.state === "unfinished");
      await leaves("the old name to leave the list", first);

      await fs.rm(path.join(stack.inbox, second));
      const after = await leaves("the removed file to leave the list", second);
      expect(after.count).toBe(0);
      expect(await rowsNamed(first)).toEqual([]);
      expect(await rowsNamed(second)).toEqual([]);

      // Stopped with a file still listed: the list goes with it.
      const third = "left-behind-bed-14.tif";
      await fs.writeFile(path.join(stack.inbox, third), data.subarray(0, data.length >> 1));
      await entryFor("a third cut TIFF listed", third, (f) => f.state === "unfinished");
      await watcher.close();
      closed = true;
      const stopped = (await summary()).watcher;
      expect([stopped.online, stopped.waiting]).toEqual([false, null]);
      const [row] = await stack.db.select().from(processes).where(eq(processes.id, watcher.heartbeatId));
      expect(row!.waiting).toBeNull();

      // A watcher that went silent without stopping (its process killed) left its list in its
      // row: once its heartbeat is stale the list is not shown.
      await stack.db
        .update(processes)
        .set({
          waiting: {
            count: 1,
            unfinishedMs: UNFINISHED_MS,
            files: [{ name: third, sizeBytes: 1, since: new Date().toISOString(), state: "unfinished", reason: "x", until: null }],
          },
          heartbeatAt: sql`now() - interval '1 minute'`,
        })
        .where(eq(processes.id, watcher.heartbeatId));
      const silent = (await summary()).watcher;
      expect([silent.online, silent.waiting]).toEqual([false, null]);
      // The same row while fresh is shown: the list above is hidden for its silence alone.
      await stack.db
        .update(processes)
        .set({ heartbeatAt: sql`now()` })
        .where(eq(processes.id, watcher.heartbeatId));
      expect((await summary()).watcher.waiting?.files.map((f) => f.name)).toEqual([third]);
    } finally {
      if (!closed) await watcher.close();
      await stack.db
        .update(processes)
        .set({ waiting: null, heartbeatAt: sql`now() - interval '1 hour'` })
        .where(eq(processes.id, watcher.heartbeatId));
      for (const n of await fs.readdir(stack.inbox)) await fs.rm(path.join(stack.inbox, n), { force: true });
    }
  }, 90_000);
});
