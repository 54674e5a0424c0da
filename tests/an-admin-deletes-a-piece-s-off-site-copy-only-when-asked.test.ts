/**
 * Deleting a piece's files keeps the master's copy in the off-site bucket (the studio's backup)
 * unless the admin also asks for that copy to go. The real stack with a local library and an
 * off-site bucket on a fake S3 server speaking the real API on 127.0.0.1; the bucket is asked
 * directly (HEAD through the project's S3 storage) whether the object is still there.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import { copyMaster } from "../server/services/offsite";
import { logger } from "../server/logger";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let pieces: Fragment[];

/** Four pieces at 300 DPI on a pale bed (invented test data). */
async function scan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1400" height="500">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="60" y="90" width="240" height="300" fill="#5b2e7d"/><rect x="400" y="90" width="240" height="300" fill="#2e7d5b"/>
    <rect x="740" y="90" width="240" height="300" fill="#7d5b2e"/><rect x="1080" y="90" width="240" height="300" fill="#2e4f7d"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

const masterKey = async (id: string) =>
  (await stack.database.pool.query<{ key: string }>(`select key from outputs where fragment_id = $1 and kind = 'master'`, [id])).rows[0]!
    .key;
/** The key of the piece's master's copy in the bucket, as its row records it. */
const copyKey = async (id: string) =>
  (
    await stack.database.pool.query<{ key: string }>(
      `select c.key from offsite_copies c join outputs o on o.id = c.output_id where o.fragment_id = $1 and o.kind = 'master'`,
      [id],
    )
  ).rows[0]!.key;
const plan = async (id: string) => (await admin.get(`/api/fragments/${id}/files`)).body.plan;
const inBucket = (key: string) => stack.offsite!.exists(key);
/** SHA-256 of the bytes the fake S3 server really holds for a key (not the metadata said at upload). */
const heldSha = async (key: string) =>
  crypto
    .createHash("sha256")
    .update(await fs.readFile(stack.s3!.objectFile("offsite", key)))
    .digest("hex");

beforeAll(async () => {
  stack = await startStack({ offsite: true, watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  const file = path.join(stack.inbox, "four-stamps.tif");
  await fs.writeFile(file, await scan());
  const scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId as string;
  await waitFor(
    "the split",
    async () => ((await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === 4 ? true : null),
    45_000,
  );
  expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
  pieces = await waitFor(
    "the masters, copied off-site",
    async () => {
      const list = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
      if (list.length !== 4 || list.some((f) => f.renderState !== "done")) return null;
      for (const f of list) if ((await plan(f.id))?.offsite?.status !== "copied") return null;
      return list.sort((a, b) => a.position - b.position);
    },
    90_000,
  );
}, 150_000);
afterAll(async () => {
  await stack?.stop();
});

describe("deleting a piece's files and its off-site copy", () => {
  it("says the off-site copy is there, and keeps it unless asked", async () => {
    const [a] = pieces;
    const p = await plan(a!.id);
    expect(p.offsite).toEqual({ status: "copied" });
    const key = await copyKey(a!.id);
    expect(await inBucket(key)).toBe(true);
    const res = await admin.delete(`/api/fragments/${a!.id}/files`).query({ upTo: p.files });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ removed: p.files, notRemoved: 0, offsite: "kept", offsiteError: null });
    expect(await inBucket(key)).toBe(true);
  });

  it("leaves a kept copy as it was when the piece is approved again: the new master's copy has a key of its own", async () => {
    const a = pieces[0]!;
    const { rows } = await stack.database.pool.query<{ before: { offsite: { key: string } } }>(
      `select before from audit_events where action = 'fragment.delete_files' and subject_id = $1`,
      [a.id],
    );
    const keptKey = rows[0]!.before.offsite.key;
    const keptSha = await heldSha(keptKey);
    expect((await stack.offsite!.stat(keptKey)).sha256).toBe(keptSha);
    // A new title (written into the master), so the new master's bytes differ from the kept copy's.
    const res = await operator.patch(`/api/fragments/${a.id}`).send({ status: "approved", title: "Violet stamp, second pass" });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const again = await waitFor(
      "the new master's copy",
      async () => ((await plan(a.id))?.offsite?.status === "copied" ? await copyKey(a.id) : null),
      60_000,
    );
    expect(again).not.toBe(keptKey);
    // The kept copy is untouched; the new copy holds the new master.
    expect(await heldSha(keptKey)).toBe(keptSha);
    const fresh = await heldSha(again);
    expect(fresh).toBe(await stack.library.checksum(await masterKey(a.id)));
    expect(fresh).not.toBe(keptSha);
  });

  it("removes it from the bucket when asked, and the trail says so", async () => {
    const b = pieces[1]!;
    const p = await plan(b.id);
    const key = await copyKey(b.id);
    expect((await admin.delete(`/api/fragments/${b.id}/files`).query({ upTo: p.files, offsite: "maybe" })).status).toBe(400);
    const res = await admin.delete(`/api/fragments/${b.id}/files`).query({ upTo: p.files, offsite: "delete" });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ offsite: "removed", offsiteError: null });
    expect(await inBucket(key)).toBe(false);
    const { rows } = await stack.database.pool.query<{ summary: string; before: { offsite: unknown }; after: { offsite: string } }>(
      `select summary, before, after from audit_events where action = 'fragment.delete_files' and subject_id = $1`,
      [b.id],
    );
    expect(rows).toHaveLength(1);
    expect(rows[0]!.summary).toContain("and its off-site copy");
    expect(rows[0]!.before.offsite).toEqual({ key, status: "copied" });
    expect(rows[0]!.after.offsite).toBe("deleted");
    // The other pieces' copies are untouched.
    expect(await inBucket(await copyKey(pieces[2]!.id))).toBe(true);
  });

  it("is refused while the master is still being copied there, deleting nothing", async () => {
    const c = pieces[2]!;
    const key = await copyKey(c.id);
    await stack.database.pool.query(
      `update offsite_copies set status = 'pending' where output_id = (select id from outputs where fragment_id = $1 and kind = 'master')`,
      [c.id],
    );
    const p = await plan(c.id);
    expect(p.offsite).toEqual({ status: "pending" });
    const res = await admin.delete(`/api/fragments/${c.id}/files`).query({ upTo: p.files, offsite: "delete" });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/being copied off-site/);
    expect((await plan(c.id)).files).toBe(p.files);
    expect(await inBucket(key)).toBe(true);
  });

  it("is refused while a retry of the copy uploads, though the attempt before it failed", async () => {
    const c = pieces[2]!;
    const masterId = (
      await stack.database.pool.query<{ id: string }>(`select id from outputs where fragment_id = $1 and kind = 'master'`, [c.id])
    ).rows[0]!.id;
    // As a failed first attempt leaves it, waiting for its retry.
    await stack.database.pool.query(
      `update offsite_copies set status = 'failed', message = 'Copy failed: timeout. Retrying (attempt 2 of 4).' where output_id = $1`,
      [masterId],
    );
    expect((await plan(c.id)).offsite).toEqual({ status: "failed" });
    // The retry: while its upload is under way, the admin asks to delete the files and the copy.
    const during: { status?: string; answer?: number; message?: string } = {};
    const bucket = Object.create(stack.offsite!) as typeof stack.offsite & object;
    bucket.put = async (k: string, file: string) => {
      const p = await plan(c.id);
      during.status = p.offsite?.status;
      const res = await admin.delete(`/api/fragments/${c.id}/files`).query({ upTo: p.files, offsite: "delete" });
      during.answer = res.status;
      during.message = res.body.error?.message;
      return stack.offsite!.put(k, file);
    };
    await copyMaster({ database: stack.database, boss: stack.boss, library: stack.library, offsite: bucket, log: logger }, masterId, {
      retryCount: 1,
      retryLimit: 3,
    });
    expect(during).toEqual({ status: "pending", answer: 409, message: expect.stringMatching(/being copied off-site/) });
    // The copy finished; the files and the copy are all still there.
    expect((await plan(c.id)).offsite).toEqual({ status: "copied" });
    expect(await inBucket(await copyKey(c.id))).toBe(true);
    expect(await stack.library.exists(await masterKey(c.id))).toBe(true);
  });

  it("says so, with the key and the copy's checksum, when the bucket cannot remove it now; the library's files go all the same", async () => {
    const d = pieces[3]!;
    const p = await plan(d.id);
    const key = await copyKey(d.id);
    const sha256 = (await stack.database.pool.query<{ sha256: string }>(`select sha256 from offsite_copies where key = $1`, [key])).rows[0]!
      .sha256;
    expect(sha256).toMatch(/^[0-9a-f]{64}$/);
    await stack.s3!.stop();
    const res = await admin.delete(`/api/fragments/${d.id}/files`).query({ upTo: p.files, offsite: "delete" });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ removed: p.files, offsite: "kept" });
    expect(res.body.offsiteError).toContain(key);
    // The checksum names the object too, for the admin to be sure before removing it by hand.
    expect(res.body.offsiteError).toContain(sha256);
    expect((await plan(d.id)).files).toBe(0);
  });
});
