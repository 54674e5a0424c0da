/**
 * Files the inbox filed but left where they are: one it could not remove (a folder it may not
 * write, such as a read-only share) and one that still looked unfinished after the inbox's wait
 * (a scanner that paused longer than that). Both are remembered in PostgreSQL (inbox_kept_files),
 * so a watcher started again does not file them a second time; the one still being written is left
 * in the inbox, so the scanner writes the rest into a file that is still there, and the whole file
 * is taken in once it is whole and still, its first part's scan saying so. Real PostgreSQL, pg-boss,
 * worker, files and chokidar; the watcher is stopped and started as its process would be.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { Writable } from "node:stream";
import pino from "pino";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { paperScan, sha256 } from "./helpers/fixtures";
import { pngChunks } from "./helpers/scan-bytes";
import { inboxKeptFiles, scans } from "../server/db/schema";
import type { IntakeDeps } from "../server/services/intake";
import { startWatcher } from "../worker/watcher";

let stack: Stack;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
}, 60_000);
afterAll(async () => {
  await stack?.stop();
});

const rowsNamed = (name: string) => stack.db.select().from(scans).where(eq(scans.originalName, name)).orderBy(scans.createdAt);
const keptRows = () => stack.db.select().from(inboxKeptFiles);
/** What the scan's page is told about its file still being in the inbox. */
const inInbox = async (scanId: string) => {
  const viewer = await userAgent(stack, "viewer");
  const res = await viewer.get(`/api/scans/${scanId}`);
  expect(res.status).toBe(200);
  return res.body.scan.inInbox;
};

/** A logger that keeps every line (debug and up), to see what the watcher did with a file. */
function capturingLogger() {
  const lines: { msg: string; file?: string }[] = [];
  const sink = new Writable({
    write(chunk: Buffer, _enc, cb) {
      for (const l of chunk.toString("utf8").split("\n")) if (l.trim()) lines.push(JSON.parse(l));
      cb();
    },
  });
  return { log: pino({ level: "debug" }, sink), lines };
}
const LEFT_ALONE = "watcher: filed before and unchanged since; left alone";

const deps = (extra: Partial<IntakeDeps> = {}): IntakeDeps => ({
  database: stack.database,
  boss: stack.boss,
  library: stack.library,
  log: capturingLogger().log,
  ...extra,
});
const watch = (d: IntakeDeps, unfinishedMs = 60_000) => startWatcher(d, { folder: stack.inbox, stableMs: 300, pollMs: 50, unfinishedMs });

/** Waits until the watcher has looked at `name` and left it alone, then until it is idle. */
async function leftAlone(watcher: Awaited<ReturnType<typeof watch>>, lines: { msg: string; file?: string }[], name: string) {
  await waitFor(`the watcher to look at ${name} and leave it`, () => lines.some((l) => l.msg === LEFT_ALONE && l.file === name), 20_000);
  await watcher.idle();
}

describe("a file the inbox filed but could not remove", () => {
  it("is not filed again by a watcher started again; a change is filed, and its memory goes with the file", async () => {
    const name = "share-bed-07.tif";
    const file = path.join(stack.inbox, name);
    const first = await paperScan({ seed: 71 });
    await fs.writeFile(file, first);
    let tries = 0;
    const refuse = async () => {
      tries++;
      throw Object.assign(new Error("EACCES: permission denied, unlink"), { code: "EACCES" });
    };

    const one = await watch(deps({ removeFile: refuse }));
    let scanId: string;
    try {
      scanId = (await waitFor("the scan", async () => (await rowsNamed(name)).find((r) => r.status === "ready")))!.id;
    } finally {
      await one.close();
    }
    const st = await fs.stat(file);
    expect((await keptRows()).map((r) => [r.path, r.reason, r.sizeBytes, r.mtimeMs, r.sha256, r.scanId])).toEqual([
      [name, "not-removed", first.length, st.mtimeMs, sha256(first), scanId],
    ]);
    expect(await inInbox(scanId)).toEqual({ path: name, reason: "not-removed" });

    // The watcher's process is started again: the file is there, unchanged, and stays unfiled.
    const seen = capturingLogger();
    const two = await watch(deps({ removeFile: refuse, log: seen.log }));
    try {
      await leftAlone(two, seen.lines, name);
      expect(await rowsNamed(name)).toHaveLength(1);
      expect(tries).toBe(1);

      // Rewritten on the share: that is new content, filed once more and remembered as it is now.
      const second = await paperScan({ seed: 72 });
      await fs.writeFile(file, second);
      const rows = await waitFor("the second scan", async () => {
        const r = await rowsNamed(name);
        return r.length === 2 && r.every((x) => x.status === "ready") ? r : null;
      });
      expect(rows.map((r) => r.sha256)).toEqual([sha256(first), sha256(second)]);
      await waitFor("the memory of the file as rewritten", async () => {
        const k = await keptRows();
        return k.length === 1 && k[0]!.sha256 === sha256(second) && k[0]!.scanId === rows[1]!.id ? k : null;
      });
      expect(tries).toBe(2);
    } finally {
      await two.close();
    }

    // Removed by hand while no watcher runs: the next one forgets it as it starts.
    await fs.rm(file);
    const three = await watch(deps({ removeFile: refuse }));
    try {
      expect(await keptRows()).toEqual([]);
      expect(await inInbox(scanId)).toBeNull();
    } finally {
      await three.close();
    }
  }, 90_000);
});

describe("a file that still looks unfinished after the inbox's wait", () => {
  it("is filed as it is but left in the inbox, not filed again after a restart, and taken in whole once its writer finishes", async () => {
    const name = "long-pause-bed-08.png";
    const file = path.join(stack.inbox, name);
    const data = await paperScan({ format: "png", seed: 81 });
    // Cut inside its first IDAT (PNG spec 5.3: the chunk's length says more follows).
    const idat = pngChunks(data).find((c) => c.type === "IDAT")!;
    const firstPart = idat.start + ((idat.end - idat.start) >> 1);
    // The scanner keeps the file open across its pause, as scanner software does: whatever it
    // writes later goes to this file, in the inbox or (if it had been removed) nowhere.
    const scanner = await fs.open(file, "w");
    try {
      await scanner.write(data, 0, firstPart, 0);
      const one = await watch(deps(), 1500);
      let partial: typeof scans.$inferSelect;
      try {
        partial = await waitFor("the part filed and failed", async () => (await rowsNamed(name)).find((r) => r.status === "failed"));
      } finally {
        await one.close();
      }
      expect(partial.sizeBytes).toBe(firstPart);
      expect(partial.error).toMatch(/^The PNG image data ends early or is damaged/);
      expect(await fs.readdir(stack.inbox)).toEqual([name]);
      const [kept] = await keptRows();
      expect([kept!.path, kept!.reason, kept!.sizeBytes, kept!.scanId]).toEqual([name, "unfinished", firstPart, partial.id]);
      expect(kept!.detail).toBe("the PNG's IDAT chunk runs past its end");
      expect(await inInbox(partial.id)).toEqual({ path: name, reason: "unfinished" });

      // Started again while the scanner still pauses: the part is not filed a second time.
      const seen = capturingLogger();
      const two = await watch(deps({ log: seen.log }), 1500);
      try {
        await leftAlone(two, seen.lines, name);
        expect(await rowsNamed(name)).toHaveLength(1);

        // The scanner writes the rest into the same open file: it is whole, and taken in whole.
        await scanner.write(data, firstPart, data.length - firstPart, firstPart);
        await scanner.close();
        const rows = await waitFor(
          "the whole scan",
          async () => {
            const r = await rowsNamed(name);
            return r.length === 2 && r[1]!.status === "ready" ? r : null;
          },
          40_000,
        );
        expect([rows[1]!.sha256, rows[1]!.sizeBytes]).toEqual([sha256(data), data.length]);
        expect(sha256(await fs.readFile(stack.libraryPath(rows[1]!.originalKey)))).toBe(sha256(data));
        // Nothing lost: the part's original is kept too, and its scan says where the rest went.
        expect(sha256(await fs.readFile(stack.libraryPath(rows[0]!.originalKey)))).toBe(sha256(data.subarray(0, firstPart)));
        expect(rows[0]!.status).toBe("failed");
        expect(rows[0]!.error).toMatch(/^The PNG image data ends early or is damaged/);
        expect([rows[0]!.continuedById, rows[0]!.continuedHow]).toEqual([rows[1]!.id, "whole"]);
        const viewer = await userAgent(stack, "viewer");
        const part = (await viewer.get(`/api/scans/${rows[0]!.id}`)).body.scan;
        expect(part.continuedBy).toEqual({ id: rows[1]!.id, originalName: name, how: "whole" });
        expect(part.error).toMatch(/^The PNG image data ends early or is damaged[^]*Scan again or copy the file again\.$/);
        expect((await viewer.get(`/api/scans/${rows[1]!.id}`)).body.scan.continuedBy).toBeNull();
        await waitFor("the inbox to be empty", async () => ((await fs.readdir(stack.inbox)).length === 0 ? true : null), 10_000);
        expect(await keptRows()).toEqual([]);
        expect(await inInbox(partial.id)).toBeNull();
        expect(await inInbox(rows[1]!.id)).toBeNull();
      } finally {
        await two.close();
      }
    } finally {
      await scanner.close().catch(() => {});
      await fs.rm(file, { force: true });
    }
  }, 90_000);
});
