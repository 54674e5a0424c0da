import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import supertest from "supertest";
import { twoPieceBed } from "./helpers/fixtures";
import { approveRemaining, renderedPieces, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";
import type { LibraryOverview, TidyReport } from "../shared/schemas/library";
import { tidyLibrary } from "../server/services/library-tidy";
import { fragmentThumbKey } from "../server/services/fragment-thumbs";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let scanId: string;
let fragments: Fragment[];

const scan = twoPieceBed;

const DAY = 24 * 3600_000;

/** Sets a library file's modification time `ms` in the past. */
async function age(key: string, ms: number) {
  const when = new Date(Date.now() - ms);
  await fs.utimes(stack.libraryPath(key), when, when);
}

/** Writes a file straight into the library folder, as a stopped process might have left it. */
async function plant(key: string, bytes: Buffer) {
  const file = stack.libraryPath(key);
  await fs.mkdir(path.dirname(file), { recursive: true });
  await fs.writeFile(file, bytes);
}

/** Every key the database names: what a tidy must never touch. */
async function namedKeys(): Promise<string[]> {
  const { rows } = await stack.database.pool.query(
    `select original_key as k from scans union select preview_key from scans where preview_key is not null
     union select thumb_key from scans where thumb_key is not null union select key from outputs`,
  );
  return rows.map((r) => r.k as string);
}

const folder = (r: TidyReport, name: string) => r.folders.find((f) => f.folder === name)!;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  ({ scanId, fragments } = await uploadScan(operator, { name: "tidy-bed.tif", bytes: await scan(), pieces: 2 }));
}, 90_000);
afterAll(async () => {
  await stack?.stop();
});

describe("the library tidy", () => {
  const planted = {
    master: `masters/${crypto.randomUUID()}.tif`,
    output: `outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.jpg`,
    young: `outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.jpg`,
    original: `originals/00/${"0".repeat(64)}.tif`,
  };
  let staleThumb: string;

  it("finds the files an edit and a stopped process left, and only those", async () => {
    // A fragment's small picture is cached per revision: an edit leaves the old one behind.
    const f = fragments[0]!;
    expect((await operator.get(`/api/fragments/${f.id}/thumb`)).status).toBe(200);
    staleThumb = fragmentThumbKey(f.id, f.revision);
    expect(await stack.library.exists(staleThumb)).toBe(true);
    const edit = await operator.patch(`/api/fragments/${f.id}`).send({ rect: { ...f.rect, width: f.rect.width - 20 } });
    expect(edit.status).toBe(200);
    expect((await operator.get(`/api/fragments/${f.id}/thumb`)).status).toBe(200);
    // Masters and web copies for both pieces.
    await approveRemaining(operator, scanId);
    await renderedPieces(operator, scanId, 2, 60_000);
    await plant(planted.master, Buffer.from("II*\0left over"));
    await plant(planted.output, Buffer.alloc(1000, 1));
    await plant(planted.young, Buffer.alloc(10, 1));
    await plant(planted.original, Buffer.from("II*\0an original nothing names"));
    // Everything is two days old but the young one, named or not: age alone removes nothing.
    for (const k of [...(await namedKeys()), staleThumb, planted.master, planted.output, planted.original]) await age(k, 2 * DAY);
    for (const k of await stack.library.list("thumbs/fragments/")) await age(k, 2 * DAY);

    const res = await admin.get("/api/library");
    expect(res.status).toBe(200);
    const overview = res.body as LibraryOverview;
    expect(overview.library.kind).toBe("local");
    expect(overview.offsite).toBeNull();
    const r = overview.tidy;
    expect(r.dryRun).toBe(true);
    expect(r.graceHours).toBe(24);
    expect(folder(r, "thumbs/")).toMatchObject({ leftOver: 1, removed: 1, tooYoung: 0 });
    expect(folder(r, "masters/")).toMatchObject({ files: 3, leftOver: 1, removed: 1 });
    expect(folder(r, "outputs/")).toMatchObject({ leftOver: 2, removed: 1, removedBytes: 1000, tooYoung: 1 });
    expect(folder(r, "web/")).toMatchObject({ files: 2, leftOver: 0 });
    expect(folder(r, "originals/")).toMatchObject({ files: 2, leftOver: 1, removed: 0 });
    expect(r.removed).toBe(3);
    // A dry run removes nothing.
    for (const k of [staleThumb, planted.master, planted.output]) expect(await stack.library.exists(k)).toBe(true);
  });

  it("is for admins only", async () => {
    expect((await operator.get("/api/library")).status).toBe(403);
    expect((await operator.post("/api/library/tidy").send({})).status).toBe(403);
    expect((await admin.post("/api/library/tidy").send({ dryRun: "yes" })).status).toBe(400);
  });

  it("removes the old left-overs, keeps every named file, the young one and the original, and records it", async () => {
    const before = await namedKeys();
    // An original no scan names with a master nothing names: the masters may be its lost scan's
    // pieces (a restored database), so the tidy is held until the admin confirms it.
    const held = await admin.post("/api/library/tidy").send({});
    expect(held.status).toBe(409);
    expect(held.body.error.message).toMatch(
      /^Nothing was removed\. The library holds an original the database does not know .*a tidy now would remove a master nothing names/,
    );
    for (const k of [staleThumb, planted.master, planted.output]) expect(await stack.library.exists(k)).toBe(true);
    const res = await admin.post("/api/library/tidy").send({ allowLarge: true, upTo: 3 });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ dryRun: false, removed: 3 });
    for (const k of [staleThumb, planted.master, planted.output]) expect(await stack.library.exists(k)).toBe(false);
    for (const k of [planted.young, planted.original]) expect(await stack.library.exists(k)).toBe(true);
    for (const k of before) expect(await stack.library.exists(k), k).toBe(true);
    // The current thumbnails stay.
    for (const f of (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[])
      expect((await stack.library.exists(fragmentThumbKey(f.id, f.revision))) || f.id !== fragments[0]!.id).toBe(true);
    const audit = (await admin.get("/api/audit").query({ action: "library.tidy" })).body.events;
    expect(audit[0].summary).toMatch(/removed 3 left-over files/);
    // Nothing is left to do now but the young file and the original.
    const again = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(again.removed).toBe(0);
    expect(folder(again, "outputs/").tooYoung).toBe(1);
  });

  it("holds a tidy that would remove most of the library until an admin confirms it", async () => {
    // Thirty old copies no row names, more than half of the derived files: as if the database were
    // another library's. The worker's tidy waits; an admin is told why and may go on.
    const many = Array.from({ length: 30 }, () => `outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.jpg`);
    for (const k of many) {
      await plant(k, Buffer.alloc(100, 2));
      await age(k, 2 * DAY);
    }
    const look = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(look.caution).toMatch(/^A tidy now would remove 30 of the library's \d+ derived files, more than half/);
    const refused = await admin.post("/api/library/tidy").send({});
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/^Nothing was removed\. A tidy now would remove 30 of/);
    const { runTidy } = await import("../server/services/library-tidy");
    const regular = await runTidy(stack.db, stack.library, null);
    expect(regular).toMatchObject({ held: true, removed: 0 });
    for (const k of many) expect(await stack.library.exists(k)).toBe(true);
    // Confirmed for fewer files than there now are: held again, with why.
    const tooFew = await admin.post("/api/library/tidy").send({ allowLarge: true, upTo: 10 });
    expect(tooFew.status).toBe(409);
    expect(tooFew.body.error.message).toMatch(/More than the 10 files confirmed: look again/);
    const confirmed = await admin.post("/api/library/tidy").send({ allowLarge: true, upTo: 30 });
    expect(confirmed.status).toBe(200);
    expect(confirmed.body).toMatchObject({ removed: 30, held: false });
    for (const k of many) expect(await stack.library.exists(k)).toBe(false);
  });

  it("treats a file as young by the grace period given", async () => {
    const later = await tidyLibrary(stack.db, stack.library, { dryRun: true, now: new Date(Date.now() + 2 * DAY) });
    expect(folder(later, "outputs/")).toMatchObject({ removed: 1, tooYoung: 0 });
    const strict = await tidyLibrary(stack.db, stack.library, { dryRun: true, graceHours: 24 * 365 });
    expect(strict.removed).toBe(0);
  });

  it("removes the temp files and scratch folders a stopped process left, once they are old, and nothing else there", async () => {
    const root = path.dirname(path.dirname(stack.libraryPath("masters/x.tif")));
    const scratch = stack.library.scratchDir;
    const old = new Date(Date.now() - 2 * DAY);
    const leave = async (file: string, bytes: number, when: Date | null = old) => {
      await fs.mkdir(path.dirname(file), { recursive: true });
      await fs.writeFile(file, Buffer.alloc(bytes, 3));
      if (when) await fs.utimes(file, when, when);
    };
    // The names LocalStorage.put and writeAtomic give a file while it is written beside its
    // target, a staged copy, a job's scratch folder and a multer upload, as a crash leaves them.
    const tempMaster = path.join(root, "masters", `.${Date.now()}-0123456789ab-${crypto.randomUUID().slice(0, 8)}.tif.tmp`);
    const tempOutput = path.join(root, "outputs", crypto.randomUUID(), `.${Date.now()}-ba9876543210-.tmp.jpg`);
    const staged = path.join(scratch, `.${Date.now()}-00112233aabb-stage.tmp`);
    const work = path.join(scratch, "work-Ab12Cd");
    const upload = path.join(scratch, "uploads", crypto.randomBytes(16).toString("hex"));
    const youngTemp = path.join(root, "web", `.${Date.now()}-ffeeddccbbaa-young.jpg.tmp`);
    const busyWork = path.join(scratch, "work-Zz99Yy");
    // Not names the program makes: left alone, whatever their age.
    // Nor anything outside the key folders, even with a temp file's name (a disk's lost+found).
    const notOurs = [
      path.join(root, "masters", ".keep"),
      path.join(scratch, "notes.txt"),
      path.join(scratch, "uploads", "readme"),
      path.join(root, "lost+found", `.${Date.now()}-0123456789ab-found.tif.tmp`),
    ];
    await leave(tempMaster, 4000);
    await leave(tempOutput, 300);
    await leave(staged, 200);
    await leave(path.join(work, "piece-1.v"), 1000);
    await fs.utimes(work, old, old);
    await leave(upload, 50);
    await leave(youngTemp, 10, null);
    // A job's folder with one old file and one just written is in use.
    await leave(path.join(busyWork, "a.v"), 10);
    await leave(path.join(busyWork, "b.v"), 10, null);
    await fs.utimes(busyWork, old, old);
    for (const f of notOurs) await leave(f, 5);

    const look = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(look.caution).toBeNull();
    expect(folder(look, "unfinished/")).toMatchObject({
      files: 7,
      leftOver: 7,
      removed: 5,
      removedBytes: 4000 + 300 + 200 + 1000 + 50,
      tooYoung: 2,
      failed: 0,
    });
    // The stored keys' folders do not count them: a temp file is not a key.
    expect(await stack.library.list("masters/")).not.toContain(path.relative(root, tempMaster));

    const done = await admin.post("/api/library/tidy").send({});
    expect(done.status).toBe(200);
    expect(folder(done.body as TidyReport, "unfinished/")).toMatchObject({ removed: 5, tooYoung: 2 });
    for (const f of [tempMaster, tempOutput, staged, work, upload]) await expect(fs.stat(f), f).rejects.toThrow();
    for (const f of [youngTemp, path.join(busyWork, "a.v"), path.join(busyWork, "b.v"), ...notOurs])
      expect((await fs.stat(f)).isFile(), f).toBe(true);
    // The upload folder itself stays for the next upload.
    expect((await fs.stat(path.join(scratch, "uploads"))).isDirectory()).toBe(true);
    const after = (await admin.get("/api/library")).body.tidy as TidyReport;
    expect(folder(after, "unfinished/")).toMatchObject({ files: 2, removed: 0, tooYoung: 2 });
    await fs.rm(youngTemp);
    await fs.rm(busyWork, { recursive: true });
    for (const f of notOurs) await fs.rm(f);
    await fs.rmdir(path.join(root, "lost+found"));
  });
});

describe("the worker's regular tidy", () => {
  it("runs on its own when PLATEN_TIDY_EVERY_HOURS is set, leaves masters to an admin, waits that long for the next, and says so in the audit trail", async () => {
    const own = await startStack({ watcher: false, server: false, worker: false, env: { PLATEN_TIDY_EVERY_HOURS: "24" } });
    const { startWorker } = await import("../worker/worker");
    const { logger } = await import("../server/logger");
    let worker: Awaited<ReturnType<typeof startWorker>> | undefined;
    const when = new Date(Date.now() - 2 * DAY);
    const leave = async (key: string) => {
      const file = own.libraryPath(key);
      await fs.mkdir(path.dirname(file), { recursive: true });
      await fs.writeFile(file, "left over");
      await fs.utimes(file, when, when);
    };
    try {
      const output = `outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.png`;
      const master = `masters/${crypto.randomUUID()}.tif`;
      await leave(output);
      await leave(master);
      // The worker asks for the tidy as it starts, and runs it.
      worker = await startWorker({
        config: own.cfg,
        database: own.database,
        boss: own.boss,
        library: own.library,
        log: logger.child({ test: true }),
      });
      // Done when its record is on the trail (written once the files are removed).
      const rows = await waitFor(
        "the regular tidy",
        async () => {
          const { rows } = await own.database.pool.query("select actor_id, summary from audit_events where action = 'library.tidy'");
          return rows.length > 0 ? rows : null;
        },
        30_000,
      );
      expect(await own.library.exists(output)).toBe(false);
      // Masters are the archive: a left-over one waits for an admin who is asked first.
      expect(await own.library.exists(master)).toBe(true);
      expect(rows).toHaveLength(1);
      expect(rows[0].actor_id).toBeNull();
      expect(rows[0].summary).toMatch(/^The worker tidied the library: removed 1 left-over file /);
      // Asked again within the day (as the next hour's ask would), it leaves a new left-over alone.
      const next = `outputs/${crypto.randomUUID()}/${crypto.randomUUID()}-r1-none.png`;
      await leave(next);
      const id = await own.boss.send("library-tidy", {});
      await waitFor(
        "the second ask to be handled",
        async () => ((await own.boss.getJobById("library-tidy", id!))?.state === "completed" ? true : null),
        30_000,
      );
      expect(await own.library.exists(next)).toBe(true);
      expect((await own.database.pool.query("select count(*)::int as n from library_tidies")).rows[0].n).toBe(1);
      // Against a database that names none of the library's originals (a new or restored one),
      // the worker's tidy removes nothing and waits for an admin.
      await leave(`originals/ab/${"ab".repeat(32)}.tif`);
      const { runTidy } = await import("../server/services/library-tidy");
      const held = await runTidy(own.db, own.library, null);
      expect(held.held).toBe(true);
      expect(held.caution).toMatch(/^The database names not even the library's one original: it may not be this library's database/);
      expect(await own.library.exists(next)).toBe(true);
    } finally {
      await worker?.stop(2000);
      await own.stop();
    }
  }, 60_000);
});
