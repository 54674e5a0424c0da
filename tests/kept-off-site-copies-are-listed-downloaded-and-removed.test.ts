/**
 * A master's off-site copy kept when its piece's files were deleted is named by no row any more:
 * the Library's list of kept copies finds it in the bucket, with the piece it was of, and an admin
 * can download it (the bytes that were copied) or remove it for good (audited). Live masters'
 * copies are never listed, downloaded or removed through it, nor is any other key. Real stack: a
 * local library, PostgreSQL, pg-boss and an off-site bucket on a fake S3 server speaking the real
 * API on 127.0.0.1.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import type { KeptCopies, KeptCopy } from "../shared/schemas/offsite";
import { copyLockOf, copyMaster } from "../server/services/offsite";
import { logger } from "../server/logger";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { approvedPieces } from "./helpers/approved-pieces";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let viewer: supertest.Agent;
let pieces: Fragment[];

const sha = (b: Buffer) => crypto.createHash("sha256").update(b).digest("hex");

/** Three pieces at 300 DPI on a pale bed (invented test data). */
const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1100" height="500">
  <rect width="100%" height="100%" fill="#f6f6f3"/>
  <rect x="60" y="90" width="240" height="300" fill="#8c2f39"/><rect x="420" y="90" width="240" height="300" fill="#2f6f8c"/>
  <rect x="780" y="90" width="240" height="300" fill="#6f8c2f"/>
</svg>`;

/** The piece's master row and its off-site row (key, SHA-256 recorded when it was copied). */
async function copyOf(fragmentId: string) {
  const { rows } = await stack.database.pool.query<{ outputId: string; key: string; sha256: string; status: string }>(
    `select o.id as "outputId", c.key, c.sha256, c.status from outputs o join offsite_copies c on c.output_id = o.id
      where o.fragment_id = $1 and o.kind = 'master'`,
    [fragmentId],
  );
  return rows[0]!;
}

const settled = () =>
  waitFor(
    "renders and off-site copies to settle",
    async () => {
      const { rows: busy } = await stack.database.pool.query(
        "select 1 from pgboss.job where name in ('fragment-render', 'offsite-copy', 'fragment-rights') and state in ('created', 'retry', 'active') limit 1",
      );
      if (busy.length) return null;
      for (const p of pieces) if ((await copyOf(p.id).catch(() => null))?.status !== "copied") return null;
      return true;
    },
    90_000,
  );

/** Sessions waiting for this advisory lock (a bigint key: its high and low 32 bits are classid and objid). */
const waitingFor = async (lock: string): Promise<number> => {
  const { rows } = await stack.database.pool.query<{ n: number }>(
    `select count(*)::int as n from pg_locks, (select hashtextextended($1, 0) as k) h
      where locktype = 'advisory' and not granted and objsubid = 1
        and classid::bigint = (h.k >> 32) & 4294967295 and objid::bigint = h.k & 4294967295`,
    [lock],
  );
  return rows[0]!.n;
};

const list = async (): Promise<KeptCopies> => {
  const res = await admin.get("/api/offsite/kept");
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res.body as KeptCopies;
};
const planOf = async (id: string) => (await admin.get(`/api/fragments/${id}/files`)).body.plan as { files: number };
const deleteKeeping = async (id: string) => {
  const res = await admin.delete(`/api/fragments/${id}/files`).query({ upTo: (await planOf(id)).files });
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  expect(res.body.offsite).toBe("kept");
};
const binary = (res: supertest.Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on("data", (c: Buffer) => chunks.push(c));
  res.on("end", () => cb(null, Buffer.concat(chunks)));
};

beforeAll(async () => {
  stack = await startStack({ offsite: true, watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  pieces = (await approvedPieces(operator, { name: "kept-stamps.tif", svg, pieces: 3 })).fragments;
  // A title for the first (written into its master, which is copied again): the list names it so.
  const res = await operator.patch(`/api/fragments/${pieces[0]!.id}`).send({ title: "Claret stamp" });
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  await settled();
}, 180_000);
afterAll(async () => {
  await stack?.stop();
});

describe("kept off-site copies", () => {
  let kept: { outputId: string; key: string; sha256: string };

  it("lists nothing while every master is live", async () => {
    expect(await list()).toEqual({
      enabled: true,
      target: expect.stringContaining("s3://offsite/"),
      copies: [],
      totalBytes: 0,
      otherInstallations: 0,
      note: null,
    });
  });

  it("lists a master's copy kept by a delete, with its piece's name, size and recorded SHA-256; the live masters' copies are not listed", async () => {
    const a = pieces[0]!;
    kept = await copyOf(a.id);
    expect(kept.sha256).toMatch(/^[0-9a-f]{64}$/);
    await deleteKeeping(a.id);
    const held = await fs.readFile(stack.s3!.objectFile("offsite", kept.key));
    const { copies, totalBytes } = await list();
    expect(copies).toEqual([
      {
        key: kept.key,
        sizeBytes: held.length,
        modifiedAt: expect.stringMatching(/^\d{4}-\d\d-\d\dT/),
        sha256: kept.sha256,
        fragmentId: a.id,
        outputId: kept.outputId,
        piece: {
          id: a.id,
          title: "Claret stamp",
          scanName: "kept-stamps.tif",
          position: a.position,
          revision: expect.any(Number),
          status: "rejected",
        },
        fileName: `kept-stamps-${String(a.position).padStart(2, "0")}-master-kept.tif`,
      },
    ] satisfies KeptCopy[]);
    expect(totalBytes).toBe(held.length);
    // The copy carries this installation's mark (the studio row's installation id).
    const mine = (await stack.database.pool.query<{ id: string }>("select installation_id as id from studio")).rows[0]!.id;
    expect(mine).toMatch(/^[0-9a-f-]{36}$/);
    expect((await stack.offsite!.stat(kept.key)).metadata?.["platen-installation"]).toBe(mine);
    // The live masters' copies are in the bucket all the same.
    for (const p of pieces.slice(1)) expect(await stack.offsite!.exists((await copyOf(p.id)).key)).toBe(true);
  });

  it("downloads the kept copy: the bytes whose SHA-256 was recorded when it was copied, under a safe file name", async () => {
    const res = await admin.get("/api/offsite/kept/file").query({ key: kept.key }).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toBe("image/tiff");
    expect(res.headers["content-disposition"]).toBe(
      `attachment; filename=kept-stamps-${String(pieces[0]!.position).padStart(2, "0")}-master-kept.tif`,
    );
    expect(sha(res.body as Buffer)).toBe(kept.sha256);
  });

  it("refuses a live master's copy, keys outside masters/ and keys of another shape, naming what was expected", async () => {
    const live = await copyOf(pieces[1]!.id);
    for (const call of [
      () => admin.get("/api/offsite/kept/file").query({ key: live.key }),
      () => admin.delete("/api/offsite/kept").query({ key: live.key }),
    ]) {
      const res = await call();
      expect(res.status).toBe(409);
      expect(res.body.error.message).toBe(
        "This off-site copy belongs to a master that is still in the library, so it is not a kept copy. It goes only with its piece's files, from the piece's page.",
      );
    }
    expect(await stack.offsite!.exists(live.key)).toBe(true);
    for (const key of [`previews/${pieces[1]!.scanId}.jpg`, "masters/../originals/ab/cd.tif", "masters/readme.txt"]) {
      const res = await admin.delete("/api/offsite/kept").query({ key });
      expect(res.status).toBe(400);
      expect(res.body.error).toEqual({
        code: "bad_request",
        field: "key",
        message: `key: Expected the key of a kept off-site copy, such as masters/<piece>/<master>.tif, but received "${key}"`,
      });
    }
    const res = await admin.delete("/api/offsite/kept");
    expect(res.status).toBe(400);
    expect(res.body.error.field).toBe("key");
  });

  it("lets no viewer or operator list, download or remove one", async () => {
    for (const agent of [viewer, operator]) {
      for (const res of [
        await agent.get("/api/offsite/kept"),
        await agent.get("/api/offsite/kept/file").query({ key: kept.key }),
        await agent.delete("/api/offsite/kept").query({ key: kept.key }),
      ]) {
        expect(res.status).toBe(403);
        expect(res.body.error.code).toBe("forbidden");
      }
    }
    expect(await stack.offsite!.exists(kept.key)).toBe(true);
  });

  it("waits some seconds for an upload of the same master, then says a copy is uploading and removes nothing", async () => {
    const copy = (await list()).copies[0]!;
    expect(copy.outputId).toMatch(/^[0-9a-f-]{36}$/);
    // Another connection holds the master's copy lock, as an upload of it does.
    const holder = await stack.database.pool.connect();
    try {
      await holder.query("select pg_advisory_lock(hashtextextended($1, 0))", [copyLockOf(copy.outputId!)]);
      const res = await admin.delete("/api/offsite/kept").query({ key: copy.key });
      expect(res.status, JSON.stringify(res.body)).toBe(409);
      expect(res.body.error.message).toMatch(/^A copy of this master is being uploaded to the off-site bucket right now/);
      expect(await stack.offsite!.exists(copy.key)).toBe(true);
      const { rows } = await stack.database.pool.query("select 1 from audit_events where action = 'offsite.remove_kept'");
      expect(rows).toHaveLength(0);
    } finally {
      await holder.query("select pg_advisory_unlock_all()");
      holder.release();
    }
    // The server's connection is back to waiting without limit for what else it runs.
    expect((await list()).copies.map((c) => c.key)).toContain(copy.key);
  });

  it("removes it for good: the object is gone from the bucket and the trail says what went", async () => {
    const mark = Number(
      (await stack.database.pool.query<{ id: string | null }>("select max(id) as id from audit_events")).rows[0]!.id ?? 0,
    );
    const res = await admin.delete("/api/offsite/kept").query({ key: kept.key });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toEqual({ key: kept.key, sizeBytes: expect.any(Number), sha256: kept.sha256 });
    expect(await stack.offsite!.exists(kept.key)).toBe(false);
    await expect(fs.stat(stack.s3!.objectFile("offsite", kept.key))).rejects.toMatchObject({ code: "ENOENT" });
    const { rows } = await stack.database.pool.query(
      `select action, subject_type, subject_id, summary, before, after, actor_email from audit_events where id > $1`,
      [mark],
    );
    expect(rows).toEqual([
      {
        action: "offsite.remove_kept",
        subject_type: "fragment",
        subject_id: pieces[0]!.id,
        summary: expect.stringMatching(/^Removed for good the kept off-site copy of the master of “Claret stamp” \([\d.]+ [KM]B\)$/),
        before: { key: kept.key, sizeBytes: res.body.sizeBytes, sha256: kept.sha256, modifiedAt: expect.any(String) },
        after: { key: null },
        actor_email: "admin@test.example",
      },
    ]);
    expect((await list()).copies).toEqual([]);
    // Asked again: it is not there to remove or download.
    for (const again of [
      await admin.delete("/api/offsite/kept").query({ key: kept.key }),
      await admin.get("/api/offsite/kept/file").query({ key: kept.key }),
    ]) {
      expect(again.status).toBe(404);
      expect(again.body.error.message).toBe(`The kept off-site copy "${kept.key}" (it may have been removed already) was not found.`);
    }
  });

  it("finds a copy under the key of the older shape (masters/<piece>.tif) that no row names, and removes it", async () => {
    const b = pieces[1]!;
    const oldKey = `masters/${b.id}.tif`;
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), "kept-old-"));
    const file = path.join(dir, "old.tif");
    const bytes = crypto.randomBytes(4096);
    await fs.writeFile(file, bytes);
    // As a copy made before keys were per master, kept by a delete, leaves it.
    await stack.offsite!.put(oldKey, file);
    await fs.rm(dir, { recursive: true, force: true });
    const { copies } = await list();
    expect(copies.map((c) => [c.key, c.outputId, c.sizeBytes, c.sha256, c.piece?.id])).toEqual([[oldKey, null, 4096, sha(bytes), b.id]]);
    const res = await admin.delete("/api/offsite/kept").query({ key: oldKey });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(await stack.offsite!.exists(oldKey)).toBe(false);
    // The piece's live copy is untouched.
    expect(await stack.offsite!.exists((await copyOf(b.id)).key)).toBe(true);
  });

  it("leaves alone the copies another installation sharing the bucket put there: not listed, not served, not removed", async () => {
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), "kept-other-"));
    const file = path.join(dir, "theirs.tif");
    await fs.writeFile(file, crypto.randomBytes(2048));
    // A live master of theirs: a key of the same shape, whose rows are in their database, not ours.
    const theirs = `masters/${crypto.randomUUID()}/${crypto.randomUUID()}.tif`;
    await stack.offsite!.put(theirs, file, { metadata: { "platen-installation": crypto.randomUUID() } });
    await fs.rm(dir, { recursive: true, force: true });
    const before = (await list()).copies.map((c) => c.key);
    const body = await list();
    expect(body.copies.map((c) => c.key)).toEqual(before);
    expect(body.copies.map((c) => c.key)).not.toContain(theirs);
    expect(body.otherInstallations).toBe(1);
    for (const res of [
      await admin.get("/api/offsite/kept/file").query({ key: theirs }),
      await admin.delete("/api/offsite/kept").query({ key: theirs }),
    ]) {
      expect(res.status, JSON.stringify(res.body)).toBe(409);
      expect(res.body.error.message).toMatch(/^This copy was put in the bucket by another Platen installation that shares it/);
    }
    expect(await stack.offsite!.exists(theirs)).toBe(true);
    await stack.offsite!.remove(theirs);
  });

  it("waits, removing a copy, for an upload of it under way (the same per-master lock), then removes what landed", async () => {
    const c = pieces[2]!;
    const { outputId, key } = await copyOf(c.id);
    const scratch = await fs.mkdtemp(path.join(os.tmpdir(), "kept-race-"));
    let removal: Promise<supertest.Response> | undefined;
    let uploaded: string | null = null;
    let listedDuring: string[] = [];
    const bucket = Object.create(stack.offsite!) as NonNullable<typeof stack.offsite>;
    bucket.put = async (k: string, file: string) => {
      // The master is read before its files go; the upload is of those bytes.
      const copy = path.join(scratch, "master.tif");
      await fs.copyFile(file, copy);
      // While this copy uploads, the admin deletes the piece's files keeping the copy…
      await deleteKeeping(c.id);
      // …finds it on the list (the earlier copy of the same master is under the same key)…
      listedDuring = (await list()).copies.map((x) => x.key);
      // …and asks for it to go: the removal waits for this upload's lock.
      removal = admin
        .delete("/api/offsite/kept")
        .query({ key })
        .then((r) => r);
      await waitFor(
        "the removal to wait for the copy's lock",
        async () => {
          return (await waitingFor(copyLockOf(outputId))) > 0;
        },
        20_000,
      );
      const put = await stack.offsite!.put(k, copy);
      uploaded = put.sha256;
      return put;
    };
    await copyMaster({ database: stack.database, boss: stack.boss, library: stack.library, offsite: bucket, log: logger }, outputId, {
      retryCount: 0,
      retryLimit: 3,
    });
    await fs.rm(scratch, { recursive: true, force: true });
    expect(listedDuring).toEqual([key]);
    const res = await removal!;
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    // What was removed is what the upload that held the lock put there.
    expect(uploaded).toMatch(/^[0-9a-f]{64}$/);
    expect(res.body.sha256).toBe(uploaded);
    expect(await stack.offsite!.exists(key)).toBe(false);
    expect((await list()).copies).toEqual([]);
  });
});

describe("kept off-site copies without an off-site bucket", () => {
  let bare: Stack;
  let bareAdmin: supertest.Agent;
  beforeAll(async () => {
    bare = await startStack({ watcher: false, worker: false });
    bareAdmin = await userAgent(bare, "admin");
  }, 60_000);
  afterAll(async () => {
    await bare?.stop();
  });

  it("the list says off-site copy is off; a download or removal is refused saying so", async () => {
    const res = await bareAdmin.get("/api/offsite/kept");
    expect(res.status).toBe(200);
    expect(res.body).toEqual({
      enabled: false,
      target: null,
      copies: [],
      totalBytes: 0,
      otherInstallations: 0,
      note: "Off-site copy is off (no PLATEN_OFFSITE_BUCKET), so no copies are kept off-site.",
    });
    const key = `masters/${crypto.randomUUID()}/${crypto.randomUUID()}.tif`;
    for (const r of [
      await bareAdmin.get("/api/offsite/kept/file").query({ key }),
      await bareAdmin.delete("/api/offsite/kept").query({ key }),
    ]) {
      expect(r.status).toBe(409);
      expect(r.body.error.message).toBe("Off-site copy is off: set PLATEN_OFFSITE_BUCKET (and its endpoint and keys) to turn it on.");
    }
  });
});
