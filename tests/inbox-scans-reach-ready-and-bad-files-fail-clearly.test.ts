import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startStack, waitFor, type Stack } from "./helpers/stack";
import { paperScan, sha256, writeSlowly } from "./helpers/fixtures";
import { scans } from "../server/db/schema";

let stack: Stack;

beforeAll(async () => {
  // A low pixel limit so the "too large" case needs only a small file: 1.5 MP.
  stack = await startStack({ env: { PLATEN_MAX_PIXELS: "1500000" } });
});
afterAll(async () => {
  await stack?.stop();
});

async function scanNamed(name: string) {
  const rows = await stack.db.select().from(scans).where(eq(scans.originalName, name));
  return rows;
}

async function settled(name: string, wanted: string[] = ["ready", "failed", "duplicate"]) {
  return waitFor(`${name} to settle`, async () => {
    const [row] = await scanNamed(name);
    return row && wanted.includes(row.status) ? row : null;
  });
}

async function inboxNames() {
  return (await fs.readdir(stack.inbox)).sort();
}

describe("a file written slowly into the inbox", () => {
  it("is taken in only once complete, filed by its hash, analysed and ready with the right metadata", async () => {
    const data = await paperScan({ width: 900, height: 600, dpi: 300 });
    await writeSlowly(path.join(stack.inbox, "slow-scan.tif"), data, 6, 150);
    const row = await settled("slow-scan.tif");
    expect(row.status).toBe("ready");
    expect(row.sha256).toBe(sha256(data));
    expect(row.sizeBytes).toBe(data.length);
    expect(row.width).toBe(900);
    expect(row.height).toBe(600);
    expect(row.format).toBe("tiff");
    expect(row.dpiX).toBeCloseTo(300, 3);
    expect(row.dpiSource).toBe("embedded");
    expect(row.resolutionOrigin).toBe("tiff");
    expect(row.progress).toBe(100);
    // Exactly one scan row: the partial sizes seen while writing were never taken in.
    expect(await scanNamed("slow-scan.tif")).toHaveLength(1);
    // The original is in the library under its content address, byte for byte, read-only.
    const original = stack.libraryPath(row.originalKey);
    expect(row.originalKey).toBe(`originals/${row.sha256.slice(0, 2)}/${row.sha256}.tif`);
    expect(sha256(await fs.readFile(original))).toBe(row.sha256);
    expect((await fs.stat(original)).mode & 0o222).toBe(0);
    // Preview and thumbnail exist; the inbox is empty again.
    await fs.access(stack.libraryPath(row.previewKey!));
    await fs.access(stack.libraryPath(row.thumbKey!));
    expect(await inboxNames()).toEqual([]);
  });

  it("is recognised as a duplicate of the first when the same content arrives again", async () => {
    const data = await paperScan({ width: 900, height: 600, dpi: 300 });
    await fs.writeFile(path.join(stack.inbox, "slow-scan-again.tif"), data);
    const dup = await settled("slow-scan-again.tif");
    const [first] = await scanNamed("slow-scan.tif");
    expect(dup.status).toBe("duplicate");
    expect(dup.duplicateOfId).toBe(first!.id);
    expect(dup.originalKey).toBe(first!.originalKey);
    expect(dup.width).toBeNull(); // not analysed again
    expect(await inboxNames()).toEqual([]);
  });
});

describe("bad files", () => {
  const cases: { name: string; make: () => Promise<Buffer>; message: RegExp }[] = [
    { name: "empty.tif", make: async () => Buffer.alloc(0), message: /^The file is empty \(0 bytes\)/ },
    { name: "notes.tif", make: async () => Buffer.from("Scanning notes: remember the lid.\n".repeat(20)), message: /text/i },
    {
      name: "cut-short.jpg",
      make: async () => {
        const full = await paperScan({ width: 800, height: 600, format: "jpeg", seed: 7 });
        return full.subarray(0, Math.floor(full.length * 0.6));
      },
      message: /truncated|incomplete|ends early|damaged/i,
    },
    {
      name: "huge.png",
      make: () => paperScan({ width: 1600, height: 1200, format: "png", seed: 9 }),
      message: /1600 × 1200 px \(1\.9 MP\).*limit of 1\.5 MP/,
    },
  ];

  it("each end as failed with a clear message, the original kept, and the pipeline keeps working", async () => {
    const written = new Map<string, Buffer>();
    for (const c of cases) {
      const data = await c.make();
      written.set(c.name, data);
      await fs.writeFile(path.join(stack.inbox, c.name), data);
    }
    for (const c of cases) {
      const row = await settled(c.name);
      expect(row.status, c.name).toBe("failed");
      expect(row.error, c.name).toMatch(c.message);
      const kept = await fs.readFile(stack.libraryPath(row.originalKey));
      expect(sha256(kept), `${c.name} kept byte for byte`).toBe(sha256(written.get(c.name)!));
    }
    // The watcher and the worker still work afterwards.
    await fs.writeFile(path.join(stack.inbox, "after-the-bad-ones.png"), await paperScan({ format: "png", seed: 3 }));
    expect((await settled("after-the-bad-ones.png")).status).toBe("ready");
    // The empty and the cut file still looked unfinished after the inbox's wait: filed (failed,
    // above) but left in the inbox for a writer that may come back.
    expect(await inboxNames()).toEqual(["cut-short.jpg", "empty.tif"]);
    for (const n of await inboxNames()) await fs.rm(path.join(stack.inbox, n));
  });
});

describe("the watcher", () => {
  it("leaves partial and hidden files alone", async () => {
    const data = await paperScan({ seed: 11 });
    for (const n of ["scan-04.tif.part", ".hidden.tif", "~lock.tif", "scan-05.tmp"]) {
      await fs.writeFile(path.join(stack.inbox, n), data);
    }
    // A real file after them proves the watcher had its chance to look.
    await fs.writeFile(path.join(stack.inbox, "scan-06.tif"), await paperScan({ seed: 12 }));
    await settled("scan-06.tif");
    expect(await inboxNames()).toEqual([".hidden.tif", "scan-04.tif.part", "scan-05.tmp", "~lock.tif"]);
    for (const n of ["scan-04.tif.part", ".hidden.tif", "~lock.tif", "scan-05.tmp"]) {
      expect(await scanNamed(n)).toHaveLength(0);
    }
    for (const n of await inboxNames()) await fs.rm(path.join(stack.inbox, n));
  });

  it("takes in no link: neither the file a link names nor a linked folder's files", async () => {
    // Whoever may write to the inbox must not be able to file any other file the worker can read.
    const outside = await fs.mkdtemp(path.join(path.dirname(stack.inbox), "outside-"));
    const secret = path.join(outside, "not-a-scan.tif");
    const bytes = await paperScan({ seed: 31 });
    await fs.writeFile(secret, bytes);
    await fs.writeFile(path.join(outside, "in-a-linked-folder.tif"), await paperScan({ seed: 32 }));
    await fs.symlink(secret, path.join(stack.inbox, "linked-scan.tif"));
    await fs.symlink(outside, path.join(stack.inbox, "linked-folder"));
    await fs.writeFile(path.join(stack.inbox, "scan-07.tif"), await paperScan({ seed: 33 }));
    await settled("scan-07.tif");
    // Links are looked at like files (after the same wait for a file to stop growing): give them
    // that long again, then let the watcher finish what it has seen.
    await new Promise((r) => setTimeout(r, 2000));
    await stack.watcher!.idle();
    expect(await scanNamed("linked-scan.tif")).toHaveLength(0);
    expect(await scanNamed("not-a-scan.tif")).toHaveLength(0);
    expect(await scanNamed("in-a-linked-folder.tif")).toHaveLength(0);
    expect((await fs.lstat(path.join(stack.inbox, "linked-scan.tif"))).isSymbolicLink()).toBe(true);
    expect(await fs.readFile(secret)).toEqual(bytes);
    for (const n of ["linked-scan.tif", "linked-folder"]) await fs.rm(path.join(stack.inbox, n));
  });

  it("picks up files that were already in the inbox when it starts", async () => {
    await stack.watcher!.close();
    await fs.writeFile(path.join(stack.inbox, "waiting-overnight.jpg"), await paperScan({ format: "jpeg", seed: 21 }));
    const { startWatcher } = await import("../worker/watcher");
    const { logger } = await import("../server/logger");
    const again = await startWatcher(
      { database: stack.database, boss: stack.boss, library: stack.library, log: logger },
      { folder: stack.inbox, stableMs: 300, pollMs: 50 },
    );
    try {
      expect((await settled("waiting-overnight.jpg")).status).toBe("ready");
    } finally {
      await again.close();
    }
  });
});
