/**
 * The inbox and a writer that is still at it. A file that changes while it is copied is not
 * recorded at all, and is taken in once it is still; one that changes after it was recorded stays
 * in the inbox and is taken in again whole; one that cannot be removed after filing (a folder the
 * service may not write) is not filed again and again. The writer is played by the test: it
 * appends to the file at the moment the copy is made (the library's own stageCopy and commit,
 * run for real, with the append after them).
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startStack, waitFor, type Stack } from "./helpers/stack";
import { paperScan } from "./helpers/fixtures";
import { scans } from "../server/db/schema";
import { StillChangingError, intakeFile, type IntakeDeps } from "../server/services/intake";
import type { Storage } from "../server/storage/storage";
import { startWatcher } from "../worker/watcher";
import { logger } from "../server/logger";

let stack: Stack;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
}, 60_000);
afterAll(async () => {
  await stack?.stop();
});

const rowsNamed = (name: string) => stack.db.select().from(scans).where(eq(scans.originalName, name));

/** The stack's library, with `after` run right after one of its steps (the writer going on). */
function libraryWith(step: "stageCopy" | "commit", after: () => Promise<void>): Storage {
  const real = stack.library;
  let once = false;
  return new Proxy(real, {
    get(target, prop, receiver) {
      const v = Reflect.get(target, prop, receiver);
      if (prop !== step || typeof v !== "function") return typeof v === "function" ? v.bind(target) : v;
      return async (...args: unknown[]) => {
        const r = await (v as (...a: unknown[]) => Promise<unknown>).apply(target, args);
        if (!once) {
          once = true;
          await after();
        }
        return r;
      };
    },
  });
}

const deps = (library: Storage, extra: Partial<IntakeDeps> = {}): IntakeDeps => ({
  database: stack.database,
  boss: stack.boss,
  library,
  log: logger,
  ...extra,
});

describe("a file its writer is still at", () => {
  it("is not recorded when it changes while it is copied, and the staged copy is dropped", async () => {
    const file = path.join(stack.inbox, "copying.tif");
    const data = await paperScan({ seed: 41 });
    await fs.writeFile(file, data.subarray(0, 2000));
    const stagedBefore = await fs.readdir(stack.library.scratchDir);
    const lib = libraryWith("stageCopy", () => fs.appendFile(file, data.subarray(2000)));
    await expect(
      intakeFile(deps(lib), { path: file, originalName: "copying.tif", source: "inbox", removeSource: true }),
    ).rejects.toBeInstanceOf(StillChangingError);
    expect(await rowsNamed("copying.tif")).toEqual([]);
    expect(await fs.readFile(file)).toEqual(data);
    expect(await fs.readdir(stack.library.scratchDir)).toEqual(stagedBefore);
    await fs.rm(file);
  });

  it("through the watcher: taken in once still, whole, as one scan", async () => {
    // What is there first looks whole (a first page); while it is copied the writer replaces it.
    const file = path.join(stack.inbox, "paused.tif");
    const data = await paperScan({ seed: 42 });
    const lib = libraryWith("stageCopy", () => fs.writeFile(file, data));
    await fs.writeFile(file, await paperScan({ seed: 46, width: 300, height: 200 }));
    const watcher = await startWatcher(deps(lib), { folder: stack.inbox, stableMs: 300, pollMs: 50, unfinishedMs: 60_000 });
    try {
      const rows = await waitFor(
        "one ready scan",
        async () => {
          const r = await rowsNamed("paused.tif");
          return r.length === 1 && r[0]!.status === "ready" ? r : null;
        },
        40_000,
      );
      expect(rows[0]!.sizeBytes).toBe(data.length);
      await waitFor("the inbox to be empty", async () => ((await fs.readdir(stack.inbox)).length === 0 ? true : null), 10_000);
    } finally {
      await watcher.close();
      await fs.rm(file, { force: true });
    }
  });

  it("stays in the inbox when it changes after its scan was recorded, and is taken in again whole", async () => {
    const file = path.join(stack.inbox, "late-writer.tif");
    const data = await paperScan({ seed: 43 });
    // The first part is a whole file of its own (a scanner that wrote a first page and goes on).
    const firstPart = await paperScan({ seed: 44 });
    await fs.writeFile(file, firstPart);
    const lib = libraryWith("commit", async () => {
      await fs.writeFile(file, data);
    });
    const watcher = await startWatcher(deps(lib), { folder: stack.inbox, stableMs: 300, pollMs: 50, unfinishedMs: 60_000 });
    try {
      const rows = await waitFor(
        "two scans: the part and the whole",
        async () => {
          const r = await rowsNamed("late-writer.tif");
          return r.length === 2 && r.every((x) => x.status === "ready") ? r : null;
        },
        40_000,
      );
      expect(rows.map((r) => r.sizeBytes).sort((a, b) => a - b)).toEqual([firstPart.length, data.length].sort((a, b) => a - b));
      await waitFor("the inbox to be empty", async () => ((await fs.readdir(stack.inbox)).length === 0 ? true : null), 10_000);
    } finally {
      await watcher.close();
      await fs.rm(file, { force: true });
    }
  });

  it("is filed once when it cannot be removed from the inbox, not again while it is unchanged", async () => {
    const file = path.join(stack.inbox, "read-only-share.tif");
    await fs.writeFile(file, await paperScan({ seed: 45 }));
    let tries = 0;
    const refuse = async () => {
      tries++;
      throw Object.assign(new Error("EACCES: permission denied, unlink"), { code: "EACCES" });
    };
    const watcher = await startWatcher(deps(stack.library, { removeFile: refuse }), {
      folder: stack.inbox,
      stableMs: 300,
      pollMs: 50,
      unfinishedMs: 60_000,
    });
    try {
      await waitFor("the scan", async () => ((await rowsNamed("read-only-share.tif"))[0]?.status === "ready" ? true : null), 30_000);
      // Touched by nothing, it is left alone: no second row, no second try at removing it.
      await fs.utimes(path.join(stack.inbox), new Date(), new Date());
      await new Promise((r) => setTimeout(r, 3000));
      expect(await rowsNamed("read-only-share.tif")).toHaveLength(1);
      expect(tries).toBe(1);
      expect((await fs.stat(file)).isFile()).toBe(true);
    } finally {
      await watcher.close();
      await fs.rm(file);
    }
  });
});
