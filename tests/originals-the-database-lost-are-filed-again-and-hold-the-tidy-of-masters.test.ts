/**
 * A database restored from a backup older than the library no longer knows the scans filed since:
 * their originals (never removed) and masters are in the library with no row naming them. The
 * Library's tidy then holds back from removing masters and says why, and an admin can have those
 * originals filed again as new scans, from the library itself, without changing them. The real
 * stack (PostgreSQL, pg-boss, the worker, a library folder); the restore is played by deleting one
 * scan's rows, as a backup taken before it was filed would lack them. Scenes are invented.
 */
import fs from "node:fs/promises";
import path from "node:path";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { pieceBed, sha256 } from "./helpers/fixtures";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";
import type { LibraryOverview } from "../shared/schemas/library";
import { refileOriginal, REFILE_GRACE_MS, unknownOriginals } from "../server/services/library-refile";
import { logger } from "../server/logger";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
/** The scan the "restored" database lost: its original's key and bytes, and its master's key. */
let lost: { originalKey: string; bytes: Buffer; masterKey: string; mtimeMs: number };

const DAY = 24 * 3600_000;
async function age(key: string, ms: number) {
  const when = new Date(Date.now() - ms);
  await fs.utimes(stack.libraryPath(key), when, when);
}
const overview = async () => (await admin.get("/api/library")).body as LibraryOverview;
const folder = (o: LibraryOverview, name: string) => o.tidy.folders.find((f) => f.folder === name)!;

async function fileScan(name: string, bytes: Buffer, pieces: number): Promise<string> {
  const file = path.join(stack.inbox, "..", name);
  await fs.writeFile(file, bytes);
  const res = await operator.post("/api/scans/upload").attach("files", file);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const scanId = res.body.results[0].scanId as string;
  await waitFor(
    "the split",
    async () => ((await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === pieces ? true : null),
    45_000,
  );
  return scanId;
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  await fileScan("kept-bed.tif", await pieceBed(1, 2), 2);
  const bytes = await pieceBed(2, 1);
  const lostId = await fileScan("lost-bed.tif", bytes, 1);
  expect((await operator.post(`/api/scans/${lostId}/approve-remaining`)).status).toBe(200);
  await waitFor(
    "the lost scan's master",
    async () => {
      const list = (await operator.get(`/api/scans/${lostId}/fragments`)).body.fragments as Fragment[];
      return list.length === 1 && list[0]!.renderState === "done" ? true : null;
    },
    60_000,
  );
  const { rows } = await stack.database.pool.query<{ original_key: string; master: string }>(
    `select s.original_key, o.key as master from scans s join fragments f on f.scan_id = s.id join outputs o on o.fragment_id = f.id and o.kind = 'master' where s.id = $1`,
    [lostId],
  );
  // The restore: a backup from before this scan was filed has none of its rows.
  await stack.database.pool.query(`delete from scans where id = $1`, [lostId]);
  // Both files are old, as a week's work would be by the time of the restore.
  await age(rows[0]!.original_key, 7 * DAY);
  await age(rows[0]!.master, 7 * DAY);
  const st = await fs.stat(stack.libraryPath(rows[0]!.original_key));
  lost = { originalKey: rows[0]!.original_key, bytes, masterKey: rows[0]!.master, mtimeMs: st.mtimeMs };
}, 150_000);
afterAll(async () => {
  await stack?.stop();
});

describe("originals the database does not know", () => {
  it("hold a tidy that would remove masters nothing names, with why", async () => {
    const o = await overview();
    expect(folder(o, "originals/")).toMatchObject({ leftOver: 1, removed: 0 });
    expect(folder(o, "masters/")).toMatchObject({ leftOver: 1, removed: 1 });
    expect(o.tidy.caution).toMatch(
      /^The library holds an original the database does not know \(it may have been restored from an older backup\), and a tidy now would remove a master nothing names/,
    );
    const refused = await admin.post("/api/library/tidy").send({});
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/^Nothing was removed\. The library holds an original the database does not know/);
    expect(await stack.library.exists(lost.masterKey)).toBe(true);
    // The worker's regular tidy never removes masters, so it is not held by this.
    const { runTidy } = await import("../server/services/library-tidy");
    expect((await runTidy(stack.db, stack.library, null)).held).toBe(false);
    expect(await stack.library.exists(lost.masterKey)).toBe(true);
  });

  it("are filed again by an admin only, as new scans from the library, the original untouched", async () => {
    expect((await operator.post("/api/library/refile")).status).toBe(403);
    const res = await admin.post("/api/library/refile");
    expect(res.status, JSON.stringify(res.body)).toBe(202);
    expect(res.body).toEqual({ originals: 1, queued: 1 });
    const scan = await waitFor(
      "the scan filed again, split",
      async () => {
        const { rows } = await stack.database.pool.query<{ id: string }>(`select id from scans where original_key = $1`, [
          lost.originalKey,
        ]);
        if (!rows[0]) return null;
        const s = (await operator.get(`/api/scans/${rows[0].id}`)).body.scan;
        return s.fragments.total === 1 ? s : null;
      },
      60_000,
    );
    expect(scan.source).toBe("library");
    expect(scan.sha256).toBe(sha256(lost.bytes));
    expect(scan.originalName).toBe(`filed-again-${sha256(lost.bytes).slice(0, 12)}.tif`);
    expect(scan.status).not.toBe("duplicate");
    // The original is the same file, byte for byte and untouched: filed again, never rewritten.
    const file = stack.libraryPath(lost.originalKey);
    expect(sha256(await fs.readFile(file))).toBe(sha256(lost.bytes));
    expect((await fs.stat(file)).mtimeMs).toBe(lost.mtimeMs);
    // The trail: the admin's ask and what the job filed, both under the admin's name.
    const { rows } = await stack.database.pool.query<{
      summary: string;
      actor_email: string;
      subject_type: string;
      subject_id: string | null;
    }>(`select summary, actor_email, subject_type, subject_id from audit_events where action = 'library.refile' order by id`);
    expect(rows.map((r) => r.actor_email)).toEqual(["admin@test.example", "admin@test.example"]);
    expect(rows[0]).toMatchObject({
      subject_type: "studio",
      summary: "Asked for the original the database did not know to be filed again as new scans",
    });
    expect(rows[1]).toMatchObject({
      subject_type: "scan",
      subject_id: scan.id,
      summary: `Filed an original the database did not know again as ${scan.originalName}`,
    });
  });

  it("once filed again, leave the tidy free to go on, and there is nothing more to file", async () => {
    let o = await overview();
    expect(folder(o, "originals/").leftOver).toBe(0);
    expect(o.tidy).toMatchObject({ unknownOriginals: 0, foreignDatabase: false, caution: null });
    // The same content under another name (the file came back as .tiff): a spare copy no scan
    // names, but nothing to file again and no reason to hold the tidy.
    const spare = lost.originalKey.replace(/\.tif$/, ".tiff");
    await fs.copyFile(stack.libraryPath(lost.originalKey), stack.libraryPath(spare));
    await age(spare, 2 * DAY);
    o = await overview();
    expect(folder(o, "originals/").leftOver).toBe(1);
    expect(o.tidy).toMatchObject({ unknownOriginals: 0, caution: null });
    const again = await admin.post("/api/library/refile");
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe("The database knows every original in the library: there is nothing to file again.");
  });

  it("queues an original once however often it is asked for, while its job waits", async () => {
    const bytes = await pieceBed(6, 1);
    const key = `originals/${sha256(bytes).slice(0, 2)}/${sha256(bytes)}.tif`;
    await fs.mkdir(path.dirname(stack.libraryPath(key)), { recursive: true });
    await fs.writeFile(stack.libraryPath(key), bytes);
    // Written a moment ago: its job finds it too young and waits until it is old enough.
    const first = await admin.post("/api/library/refile");
    expect(first.body).toEqual({ originals: 1, queued: 1 });
    const jobs = async () =>
      (
        await stack.database.pool.query(
          `select state from pgboss.job where name = 'library-refile' and data->>'key' = $1 and state in ('created', 'retry', 'active')`,
          [key],
        )
      ).rows.length;
    await waitFor(
      "the job to look at it and wait",
      async () => {
        const { rows } = await stack.database.pool.query(
          `select 1 from pgboss.job where name = 'library-refile' and data->>'key' = $1 and state = 'completed'`,
          [key],
        );
        return rows.length === 1 ? true : null;
      },
      30_000,
    );
    expect(await jobs()).toBe(1);
    const again = await admin.post("/api/library/refile");
    expect(again.body).toEqual({ originals: 1, queued: 0 });
    expect(await jobs()).toBe(1);
    await fs.rm(stack.libraryPath(key));
  });

  it("records a filing and its audit row together: an audit that fails leaves no scan", async () => {
    const { intakeFile } = await import("../server/services/intake");
    const bytes = await pieceBed(9, 1);
    const key = `originals/${sha256(bytes).slice(0, 2)}/${sha256(bytes)}.tif`;
    const file = path.join(stack.inbox, "..", "audit-fails.tif");
    await fs.writeFile(file, bytes);
    const deps = { database: stack.database, boss: stack.boss, library: stack.library, log: logger };
    await expect(
      intakeFile(deps, {
        path: file,
        originalName: "audit-fails.tif",
        source: "library",
        removeSource: false,
        audit: async () => {
          throw new Error("the trail is down (test)");
        },
      }),
    ).rejects.toThrow("the trail is down (test)");
    expect((await stack.database.pool.query(`select 1 from scans where sha256 = $1`, [sha256(bytes)])).rows).toHaveLength(0);
    // Its original was stored before the transaction (as every filing's is) and stays: known to none.
    expect(await unknownOriginals(stack.db, stack.library)).toContain(key);
    await fs.rm(stack.libraryPath(key));
  });

  it("leaves a damaged original (its bytes are not the checksum its name says) and one still being filed where they are", async () => {
    // A file under an original's name whose bytes hash to something else.
    const damagedKey = `originals/ab/${"ab".repeat(32)}.tif`;
    await fs.mkdir(path.dirname(stack.libraryPath(damagedKey)), { recursive: true });
    await fs.writeFile(stack.libraryPath(damagedKey), await pieceBed(3, 1));
    await age(damagedKey, 2 * DAY);
    // One written a moment ago: its scan's row may be on its way.
    const youngBytes = await pieceBed(4, 1);
    const youngKey = `originals/${sha256(youngBytes).slice(0, 2)}/${sha256(youngBytes)}.tif`;
    await fs.mkdir(path.dirname(stack.libraryPath(youngKey)), { recursive: true });
    await fs.writeFile(stack.libraryPath(youngKey), youngBytes);
    const before = sha256(await fs.readFile(stack.libraryPath(damagedKey)));
    const deps = { database: stack.database, boss: stack.boss, library: stack.library, log: logger };
    const admin = { id: null, email: "admin@test.example" };
    expect((await unknownOriginals(stack.db, stack.library)).sort()).toEqual([damagedKey, youngKey].sort());
    expect(await refileOriginal(deps, damagedKey, admin)).toEqual({ outcome: "damaged" });
    expect(await refileOriginal(deps, youngKey, admin)).toMatchObject({ outcome: "too-young" });
    expect(sha256(await fs.readFile(stack.libraryPath(damagedKey)))).toBe(before);
    expect((await unknownOriginals(stack.db, stack.library)).sort()).toEqual([damagedKey, youngKey].sort());
    const { rows } = await stack.database.pool.query<{ summary: string }>(
      `select summary from audit_events where action = 'library.refile' order by id desc limit 1`,
    );
    expect(rows[0]!.summary).toBe(`Left an original as it is: its bytes no longer match the checksum its name gives (${damagedKey})`);
    // Past the grace period the young one is filed; asked again, a known one is left alone.
    const later = await refileOriginal(deps, youngKey, admin, { now: new Date(Date.now() + REFILE_GRACE_MS + 1000) });
    expect(later.outcome).toBe("filed");
    expect(await refileOriginal(deps, youngKey, admin, { now: new Date(Date.now() + REFILE_GRACE_MS + 1000) })).toEqual({
      outcome: "known",
    });
    expect(await unknownOriginals(stack.db, stack.library)).toEqual([damagedKey]);
    expect(await refileOriginal(deps, `originals/cd/${"cd".repeat(32)}.tif`, admin)).toEqual({ outcome: "missing" });
    // A key that is not an original's name (its folder is not its checksum's start) is not filed.
    expect(await refileOriginal(deps, `originals/ef/${"ab".repeat(32)}.tif`, admin)).toEqual({ outcome: "damaged" });
  });
});
