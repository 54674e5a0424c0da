import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type PgBoss from "pg-boss";
import { testEnvironment, waitFor } from "./helpers/stack";
import { paperScan } from "./helpers/fixtures";
import { scans } from "../server/db/schema";
import type { Database } from "../server/db";
import type { LocalStorage } from "../server/storage/local";

let t: Awaited<ReturnType<typeof testEnvironment>>;
let database: Database;
let boss: PgBoss;
let library: LocalStorage;
let released: () => void = () => {};
let storing: () => void = () => {};

beforeAll(async () => {
  t = await testEnvironment({});
  const { overrideConfig } = await import("../server/config");
  const cfg = overrideConfig(t.env);
  const { openDatabase } = await import("../server/db");
  const { startBoss } = await import("../server/jobs/boss");
  const { ensureStudio } = await import("../server/services/bootstrap");
  const { LocalStorage } = await import("../server/storage/local");
  database = openDatabase(cfg.databaseUrl, 4);
  await ensureStudio(database.db, cfg, "Test studio", false);
  boss = await startBoss({ url: cfg.databaseUrl, log: (await import("../server/logger")).logger, supervise: false });
  // A library whose storing of an original waits until the test lets it go, as a slow upload to
  // object storage would.
  library = new (class extends LocalStorage {
    override async commit(...args: Parameters<LocalStorage["commit"]>) {
      const go = new Promise<void>((r) => (released = r));
      storing();
      await go;
      return super.commit(...args);
    }
  })(t.env.PLATEN_LIBRARY_DIR!);
});

afterAll(async () => {
  await boss?.stop({ graceful: false, wait: true }).catch(() => {});
  await database?.close();
  await t?.cleanup();
});

/** Connections of this test's database that sit inside an open transaction. */
async function openTransactions(): Promise<number> {
  const { rows } = await database.pool.query<{ n: string }>(
    "select count(*) as n from pg_stat_activity where datname = current_database() and state like 'idle in transaction%' and pid <> pg_backend_pid()",
  );
  return Number(rows[0]!.n);
}

describe("intake", () => {
  it("stores the original before it opens its transaction, so a slow upload holds no transaction open", async () => {
    const { intakeFile } = await import("../server/services/intake");
    const { logger } = await import("../server/logger");
    const file = path.join(t.dir, "slow-upload.tif");
    await fs.writeFile(file, await paperScan({ seed: 41 }));
    const started = new Promise<void>((r) => (storing = r));
    const done = intakeFile(
      { database, boss, library, log: logger },
      { path: file, originalName: "slow-upload.tif", source: "inbox", removeSource: true },
    );
    await started;
    // While the original is being stored: no transaction is open and no scan row exists yet.
    expect(await openTransactions()).toBe(0);
    expect(await database.db.select().from(scans)).toHaveLength(0);
    released();
    const result = await done;
    const [row] = await database.db.select().from(scans).where(eq(scans.id, result.scanId));
    expect(row).toMatchObject({ status: "queued", sha256: result.sha256 });
    // The committed row's original is in the library, under its content's key.
    expect(await library.exists(row!.originalKey)).toBe(true);
    await waitFor("the arriving file to be removed", async () => !(await fs.stat(file).catch(() => null)));
  });

  it("stores nothing again for content the library already holds (a duplicate, even under another extension)", async () => {
    const { intakeFile } = await import("../server/services/intake");
    const { logger } = await import("../server/logger");
    const first = (await database.db.select().from(scans))[0]!;
    const file = path.join(t.dir, "same-again.tiff");
    await fs.writeFile(file, await paperScan({ seed: 41 }));
    let stored = false;
    storing = () => {
      stored = true;
      released();
    };
    const result = await intakeFile(
      { database, boss, library, log: logger },
      { path: file, originalName: "same-again.tiff", source: "inbox", removeSource: true },
    );
    expect(result.duplicateOf).toBe(first.id);
    expect(stored).toBe(false);
    const [row] = await database.db.select().from(scans).where(eq(scans.id, result.scanId));
    expect(row).toMatchObject({ status: "duplicate", originalKey: first.originalKey });
    const keys = await library.list("originals/");
    expect(keys).toEqual([first.originalKey]);
  });
});

describe("intake: two arrivals of the same content at once", () => {
  it("records the first as queued and the other as its duplicate, neither failing", async () => {
    const { intakeFile } = await import("../server/services/intake");
    const { logger } = await import("../server/logger");
    const content = await paperScan({ seed: 43 });
    const files = ["race-a.tif", "race-b.tif"].map((n) => path.join(t.dir, n));
    for (const f of files) await fs.writeFile(f, content);
    // Both are held while storing their original, then let go together: both then look for a
    // first scan of that content, find none, and insert one; the unique index refuses the second.
    const held: (() => void)[] = [];
    const bothHeld = new Promise<void>((r) => (storing = () => (held.push(released), held.length === 2 && r())));
    const arrivals = files.map((f) =>
      intakeFile(
        { database, boss, library, log: logger },
        { path: f, originalName: path.basename(f), source: "inbox", removeSource: true },
      ),
    );
    await bothHeld;
    storing = () => released();
    held.forEach((go) => go());
    const results = await Promise.all(arrivals);
    const rows = await database.db.select().from(scans).where(eq(scans.sha256, results[0]!.sha256));
    expect(rows.map((r) => r.status).sort()).toEqual(["duplicate", "queued"]);
    const queued = rows.find((r) => r.status === "queued")!;
    expect(rows.find((r) => r.status === "duplicate")!.duplicateOfId).toBe(queued.id);
    expect(results.map((r) => r.duplicateOf).filter(Boolean)).toEqual([queued.id]);
  });
});

describe("intake: a collision that does not go away", () => {
  it("stops after three tries with a message naming the file and the constraint, and keeps the arriving file", async () => {
    const { intakeFile } = await import("../server/services/intake");
    const { logger } = await import("../server/logger");
    storing = () => released();
    // A rule of this test's own that every new scan breaks: one scan per original name. The
    // same-content race resolves on its next try; this one cannot, and once looped for ever.
    const first = (await database.db.select().from(scans))[0]!;
    await database.pool.query("create unique index test_one_scan_per_name on scans (original_name)");
    try {
      const file = path.join(t.dir, "clash.tif");
      await fs.writeFile(file, await paperScan({ seed: 42 }));
      const before = (await database.db.select().from(scans)).length;
      let tries = 0;
      const counting = { database, boss, library, log: logger };
      const originalCommit = library.commit.bind(library);
      library.commit = async (...args) => (tries++, originalCommit(...args));
      await database.db.update(scans).set({ originalName: "clash.tif" }).where(eq(scans.id, first.id));
      await expect(intakeFile(counting, { path: file, originalName: "clash.tif", source: "inbox", removeSource: true })).rejects.toThrow(
        /^Could not record clash\.tif: its scan row collided 3 times with one already in the library \(test_one_scan_per_name\); the file is left where it was$/,
      );
      library.commit = originalCommit;
      expect(tries).toBe(3);
      expect((await fs.stat(file)).size).toBeGreaterThan(0); // the arriving file is kept
      expect(await database.db.select().from(scans)).toHaveLength(before);
    } finally {
      await database.pool.query("drop index test_one_scan_per_name");
    }
  });
});
