/**
 * What a stopped process leaves on the tidy's machine goes, wherever the program wrote it: the
 * library's own temp files and scratch, the off-site bucket client's scratch and downloads, and,
 * with the library on S3 (a fake S3 server speaking the S3 API), that client's scratch and cache
 * downloads. And it goes even when the tidy is held for an admin: no database names such files.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import type { TidyReport } from "../shared/schemas/library";
import type { S3Storage } from "../server/storage/s3";
import { randomName } from "../server/storage/files";
import { runTidy } from "../server/services/library-tidy";
import { libraryTidyJob } from "../worker/jobs/library-tidy";
import { logger } from "../server/logger";

const DAY = 24 * 3600_000;
const OLD = () => new Date(Date.now() - 2 * DAY);

/** Where a storage client's cache downloads to (LocalCache: `<cache>/tmp`, then renamed into place). */
const fetchDir = (s: S3Storage) => path.join(s.cache.dir, "tmp");

const unfinishedRow = (r: TidyReport) => r.folders.find((f) => f.folder === "unfinished/");

/** Writes a file (its folders made), dated `when` (null: now). */
async function leave(file: string, bytes: number, when: Date | null = OLD()) {
  await fs.mkdir(path.dirname(file), { recursive: true });
  await fs.writeFile(file, Buffer.alloc(bytes, 5));
  if (when) await fs.utimes(file, when, when);
}

/** A job's scratch folder as `withScratch` makes it (mkdtemp "work-"), with one file, all dated old. */
async function leaveWork(parent: string, bytes: number): Promise<string> {
  await fs.mkdir(parent, { recursive: true });
  const dir = await fs.mkdtemp(path.join(parent, "work-"));
  await leave(path.join(dir, "piece.v"), bytes);
  const when = OLD();
  await fs.utimes(dir, when, when);
  return dir;
}

/** A staged copy as the storage makes it (its own stageCopy), never committed, dated old. */
async function leaveStaged(storage: S3Storage, bytes: number): Promise<string> {
  const src = path.join(storage.scratchDir, "..", `src-${crypto.randomBytes(4).toString("hex")}`);
  await leave(src, bytes, null);
  const staged = await storage.stageCopy(src);
  await fs.rm(src);
  const when = OLD();
  await fs.utimes(staged.temp, when, when);
  return staged.temp;
}

const gone = async (files: string[]) => {
  for (const f of files) await expect(fs.stat(f), f).rejects.toThrow();
};
const there = async (files: string[]) => {
  for (const f of files) expect((await fs.stat(f)).isFile() || (await fs.stat(f)).isDirectory(), f).toBe(true);
};

describe("with a local library and an off-site bucket", () => {
  let stack: Stack;
  let admin: supertest.Agent;
  let offsite: S3Storage;

  beforeAll(async () => {
    stack = await startStack({ watcher: false, worker: false, offsite: true });
    admin = await userAgent(stack, "admin");
    offsite = stack.offsite!;
  }, 60_000);
  afterAll(async () => {
    await stack?.stop();
  });

  it("removes what a stop left in the off-site client's scratch and downloads, and in an S3 setting's folders no longer in use", async () => {
    // Where the off-site client writes on this machine (<work>/offsite, <cache>/offsite/tmp), and
    // where the library's S3 client wrote before the library was moved to a folder.
    const { workDir, cacheDir } = stack.cfg.storage;
    expect(offsite.scratchDir).toBe(path.join(workDir, "offsite"));
    const offsiteStaged = await leaveStaged(offsite, 700);
    const offsiteWork = await leaveWork(offsite.scratchDir, 300);
    const offsiteFetch = path.join(fetchDir(offsite), randomName("fetch"));
    await leave(offsiteFetch, 90);
    const oldS3Work = await leaveWork(workDir, 40);
    const oldS3Upload = path.join(workDir, "uploads", crypto.randomBytes(16).toString("hex"));
    await leave(oldS3Upload, 20);
    const oldS3Fetch = path.join(cacheDir, "tmp", randomName("fetch"));
    await leave(oldS3Fetch, 10);
    // Young, or not names the program makes, or a cache's own copies: they stay.
    const youngFetch = path.join(fetchDir(offsite), randomName("fetch"));
    await leave(youngFetch, 5, null);
    const youngWork = path.join(offsite.scratchDir, "work-Yy77Zz", "piece.v");
    await leave(youngWork, 5, null);
    const keep = [
      youngFetch,
      youngWork,
      path.join(fetchDir(offsite), "notes.txt"),
      path.join(offsite.scratchDir, "notes.txt"),
      path.join(cacheDir, "files", "masters", "a.tif~0123abcd"),
      path.join(offsite.cache.dir, "files", "masters", "b.tif~0123abcd"),
    ];
    for (const f of keep.slice(2)) await leave(f, 5);
    const removed = [offsiteStaged, offsiteWork, offsiteFetch, oldS3Work, oldS3Upload, oldS3Fetch];

    const look = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(look.caution).toBeNull();
    expect(unfinishedRow(look)).toMatchObject({
      files: 8,
      removed: 6,
      removedBytes: 700 + 300 + 90 + 40 + 20 + 10,
      tooYoung: 2,
      failed: 0,
    });
    await there(removed);

    const done = await admin.post("/api/library/tidy").send({});
    expect(done.status).toBe(200);
    expect(unfinishedRow(done.body as TidyReport)).toMatchObject({ removed: 6, tooYoung: 2 });
    await gone(removed);
    await there(keep);
    // The folders themselves stay for the next writes.
    for (const d of [offsite.scratchDir, fetchDir(offsite), path.join(workDir, "uploads")])
      expect((await fs.stat(d)).isDirectory(), d).toBe(true);
    for (const f of keep) await fs.rm(f);
    await fs.rmdir(path.dirname(youngWork));
  });

  it("takes a confirmation for no more files than the person was shown, unfinished writes counted", async () => {
    const plantOutputs = async (n: number) => {
      for (let i = 0; i < n; i++) await leave(stack.libraryPath(`outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.jpg`), 100);
    };
    await plantOutputs(29);
    const temps = [
      path.join(stack.library.scratchDir, `.${randomName("stage")}.tmp`),
      path.join(stack.library.scratchDir, "uploads", crypto.randomBytes(16).toString("hex")),
    ];
    for (const t of temps) await leave(t, 50);
    // The person is shown 31 files to remove (29 left-overs, 2 unfinished writes) with the caution…
    const shown = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(shown.caution).toMatch(/^A tidy now would remove 29 of the library's 29 derived files, more than half/);
    expect(shown.removed).toBe(31);
    // …and one more left-over turns up before they confirm: 32 would go, more than confirmed.
    await plantOutputs(1);
    const refused = await admin.post("/api/library/tidy").send({ allowLarge: true, upTo: shown.removed });
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/More than the 31 files confirmed: look again\./);
    expect((await stack.library.list("outputs/")).length).toBe(30);
    // The unfinished writes went all the same, and the message says so.
    expect(refused.body.error.message).toMatch(/Only unfinished writes, which no database names, were removed: 2 files \(100 B\)\.$/);
    await gone(temps);
    const again = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(again.removed).toBe(30);
    const confirmed = await admin.post("/api/library/tidy").send({ allowLarge: true, upTo: again.removed });
    expect(confirmed.status).toBe(200);
    expect(confirmed.body).toMatchObject({ removed: 30, held: false });
    expect(await stack.library.list("outputs/")).toEqual([]);
  });

  const lastTidyEvent = async () =>
    (
      await stack.database.pool.query(
        "select id, actor_id, actor_email, summary, after from audit_events where action = 'library.tidy' order by id desc limit 1",
      )
    ).rows[0];

  it("removes old unfinished writes in a tidy held for an admin, says so, and records it", async () => {
    // A database that names none of the library's originals (a new or restored one): the
    // left-overs wait for an admin, but what stopped processes left on this machine does not.
    const original = `originals/ab/${"ab".repeat(32)}.tif`;
    await leave(stack.libraryPath(original), 30);
    const output = stack.libraryPath(`outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.jpg`);
    await leave(output, 100);
    const round = async () => {
      // The library's own temp files, staged copies, scratch folders and uploads (as a stop leaves them).
      const files = [
        path.join(path.dirname(output), `.${randomName("")}.tmp.jpg`),
        path.join(stack.library.scratchDir, `.${randomName("stage")}.tmp`),
        path.join(stack.library.scratchDir, "uploads", crypto.randomBytes(16).toString("hex")),
        await leaveWork(stack.library.scratchDir, 60),
      ];
      for (const f of files.slice(0, 3)) await leave(f, 10);
      return files;
    };

    const first = await round();
    const look = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(look.caution).toMatch(/^The database names not even the library's one original/);
    expect(unfinishedRow(look)).toMatchObject({ removed: 4, removedBytes: 90 });

    // An admin's tidy, not confirmed: refused, but the unfinished writes are gone and it says so.
    const refused = await admin.post("/api/library/tidy").send({});
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/Only unfinished writes, which no database names, were removed: 4 files \(90 B\)\.$/);
    await gone(first);
    await there([output, stack.libraryPath(original)]);
    // …and the audit trail names who removed them.
    const byAdmin = await lastTidyEvent();
    expect(byAdmin.actor_email).toBe("admin@test.example");
    expect(byAdmin.summary).toBe(
      "Tidied the library, held by its caution: removed only what stopped processes left unfinished, 4 files (90 B)",
    );
    expect(byAdmin.after).toEqual({ removed: 4, bytes: 90, held: true });

    // The worker's regular tidy: held, removes only the unfinished writes, and says so in its
    // report and the audit trail.
    const second = await round();
    const held = await runTidy(stack.db, stack.library, null);
    expect(held).toMatchObject({ held: true, removed: 4, removedBytes: 90 });
    expect(unfinishedRow(held)).toMatchObject({ removed: 4, tooYoung: 0 });
    for (const f of held.folders.filter((x) => x.folder !== "unfinished/")) expect(f.removed, f.folder).toBe(0);
    expect(held.caution).toMatch(
      /^The database names not even .* Only unfinished writes, which no database names, were removed: 4 files \(90 B\)\.$/,
    );
    await gone(second);

    // The admin tidies above were just now; as if they were two days ago, the regular one is due.
    await stack.database.pool.query("update library_tidies set at = at - interval '2 days'");
    const tidies = (await stack.database.pool.query("select count(*)::int as n from library_tidies")).rows[0].n as number;
    const third = await round();
    await libraryTidyJob(
      { database: stack.database, library: stack.library, log: logger.child({ test: true }), config: { tidyEveryHours: 24 } },
      {},
      { jobId: "test", retryCount: 0, retryLimit: 0 },
    );
    await gone(third);
    await there([output, stack.libraryPath(original)]);
    const byWorker = await lastTidyEvent();
    expect(byWorker.actor_id).toBeNull();
    expect(byWorker.summary).toMatch(
      /^The worker's tidy of the library is held for an admin .*removed only what stopped processes left unfinished: 4 files \(90 B\)$/,
    );
    expect(byWorker.after).toEqual({ removed: 4, bytes: 90, held: true });
    expect(Number(byWorker.id)).toBeGreaterThan(Number(byAdmin.id));
    // A held tidy is no tidy: the next is due as before.
    expect((await stack.database.pool.query("select count(*)::int as n from library_tidies")).rows[0].n).toBe(tidies);
  });
});

describe("with the library on S3", () => {
  let stack: Stack;
  let admin: supertest.Agent;

  beforeAll(async () => {
    stack = await startStack({ watcher: false, worker: false, s3: true });
    admin = await userAgent(stack, "admin");
  }, 60_000);
  afterAll(async () => {
    await stack?.stop();
  });

  it("removes what a stop left in the S3 client's scratch and cache downloads, never the cache's copies", async () => {
    const library = stack.library as S3Storage;
    expect(library.kind).toBe("s3");
    // A real object and its real local copy, as a job reading it by path leaves it in the cache.
    const src = path.join(library.scratchDir, "..", "cached-src");
    await leave(src, 64, null);
    await library.put("masters/kept-in-cache.tif", src);
    const cached = await library.withLocalFile("masters/kept-in-cache.tif", async (p) => p);
    await fs.utimes(cached, OLD(), OLD());

    const staged = await leaveStaged(library, 400);
    const work = await leaveWork(library.scratchDir, 200);
    const upload = path.join(library.scratchDir, "uploads", crypto.randomBytes(16).toString("hex"));
    await leave(upload, 100);
    const fetch = path.join(fetchDir(library), randomName("fetch"));
    await leave(fetch, 50);
    const youngFetch = path.join(fetchDir(library), randomName("fetch"));
    await leave(youngFetch, 5, null);
    const notOurs = path.join(fetchDir(library), "readme");
    await leave(notOurs, 5);

    const look = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(unfinishedRow(look)).toMatchObject({ files: 5, removed: 4, removedBytes: 750, tooYoung: 1, failed: 0 });
    const done = await admin.post("/api/library/tidy").send({});
    expect(done.status).toBe(200);
    expect(unfinishedRow(done.body as TidyReport)).toMatchObject({ removed: 4, tooYoung: 1 });
    await gone([staged, work, upload, fetch]);
    await there([youngFetch, notOurs, cached]);
    expect(await library.exists("masters/kept-in-cache.tif")).toBe(true);
  });
});
