/**
 * Off-site copy: with the library in a local folder and an off-site bucket (a fake S3 server
 * speaking the real API on 127.0.0.1), each master is copied there by a queued job and has a
 * status. A re-check reads the copy back and compares SHA-256s: a copy changed in the bucket is
 * caught and marked failed. A bucket that cannot be reached leaves the status failed with the
 * reason while the job is retried, and the copy lands once the bucket is back.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import supertest from "supertest";
import { HeadObjectCommand } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { s3Client } from "../server/storage/s3";
import { FAKE_S3_CREDENTIALS, startFakeS3, type FakeS3 } from "../scripts/lib/fake-s3";
import type { Fragment } from "../shared/schemas/fragments";
import type { FragmentOffsite } from "../shared/schemas/offsite";

let stack: Stack;
let operator: supertest.Agent;
let admin: supertest.Agent;
let viewer: supertest.Agent;
let fragment: Fragment;
let revived: FakeS3 | undefined;

const sha = (b: Buffer) => crypto.createHash("sha256").update(b).digest("hex");

async function masterRow(): Promise<{ id: string; key: string }> {
  const { rows } = await stack.database.pool.query<{ id: string; key: string }>(
    "select id, key from outputs where fragment_id = $1 and kind = 'master'",
    [fragment.id],
  );
  return rows[0]!;
}

async function offsite(id = fragment.id): Promise<FragmentOffsite> {
  const res = await operator.get(`/api/fragments/${id}/offsite`);
  expect(res.status).toBe(200);
  return res.body as FragmentOffsite;
}

beforeAll(async () => {
  stack = await startStack({ offsite: true, watcher: false });
  operator = await userAgent(stack, "operator");
  admin = await userAgent(stack, "admin");
  viewer = await userAgent(stack, "viewer");
  // One piece on a pale bed at 300 DPI (invented test data).
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="900" height="700"><rect width="100%" height="100%" fill="#f6f6f3"/><rect x="150" y="120" width="500" height="400" fill="#1e8449"/></svg>`;
  const file = path.join(stack.inbox, "offsite-bed.tif");
  await fs.writeFile(
    file,
    await sharp(Buffer.from(svg))
      .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
      .toBuffer(),
  );
  const scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId as string;
  await waitFor(
    "the split",
    async () => ((await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === 1 ? true : null),
    45_000,
  );
  await operator.post(`/api/scans/${scanId}/approve-remaining`);
  fragment = await waitFor(
    "the master",
    async () => {
      const [f] = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
      return f?.renderState === "done" ? f : null;
    },
    60_000,
  );
}, 120_000);

afterAll(async () => {
  await revived?.stop().catch(() => {});
  await stack?.stop();
});

describe("the off-site copy of masters", () => {
  it("copies each new master to the bucket with its SHA-256, and says so per master", async () => {
    const done = await waitFor("the off-site copy", async () => {
      const o = await offsite();
      return o.copy?.status === "copied" ? o : null;
    });
    expect(done.enabled).toBe(true);
    expect(done.target).toContain("s3://offsite/");
    // The copy's key is the master's own row's, not the library key a later master would reuse.
    const master = await masterRow();
    const key = `masters/${fragment.id}/${master.id}.tif`;
    expect(done.copy!.key).toBe(key);
    const local = await fs.readFile(stack.libraryPath(master.key));
    expect(done.copy!.sha256).toBe(sha(local));
    expect(done.copy!.copiedAt).not.toBeNull();
    // What is really in the bucket: the same bytes, with the checksum as metadata.
    expect(sha(await fs.readFile(stack.s3!.objectFile("offsite", key)))).toBe(sha(local));
    const client = s3Client({
      bucket: "offsite",
      prefix: "",
      region: "us-east-1",
      endpoint: stack.s3!.endpoint,
      forcePathStyle: true,
      credentials: { ...FAKE_S3_CREDENTIALS },
      partSizeBytes: 8 << 20,
    });
    const head = await client.send(new HeadObjectCommand({ Bucket: "offsite", Key: key }));
    expect(head.Metadata?.sha256).toBe(sha(local));
    expect(head.ContentLength).toBe(local.length);
  });

  it("re-checks a good copy as copied, and catches a copy changed in the bucket", async () => {
    const ok = await operator.post(`/api/fragments/${fragment.id}/offsite/check`);
    expect(ok.status).toBe(200);
    expect(ok.body.copy).toMatchObject({ status: "copied", message: null });
    expect(ok.body.copy.checkedAt).not.toBeNull();

    // Damage the stored object behind the store's back (bit rot, or someone overwrote it).
    const objectFile = stack.s3!.objectFile("offsite", (await offsite()).copy!.key);
    const bytes = await fs.readFile(objectFile);
    bytes[Math.floor(bytes.length / 2)]! ^= 0xff;
    await fs.writeFile(objectFile, bytes);
    const bad = await operator.post(`/api/fragments/${fragment.id}/offsite/check`);
    expect(bad.status).toBe(200);
    expect(bad.body.copy.status).toBe("failed");
    expect(bad.body.copy.message).toMatch(/^Checksum mismatch: the off-site copy has SHA-256 [0-9a-f]{12}…, but [0-9a-f]{12}… was copied/);
    expect((await offsite()).copy!.status).toBe("failed");

    // Copy again: the copy is whole once more and re-checks clean.
    expect((await operator.post(`/api/fragments/${fragment.id}/offsite/copy`)).status).toBe(202);
    await waitFor("the fresh copy", async () => ((await offsite()).copy?.status === "copied" ? true : null));
    const again = await operator.post(`/api/fragments/${fragment.id}/offsite/check`);
    expect(again.body.copy.status).toBe("copied");
  });

  it("moves a copy made under the older shared key to the master's own key on its next copy, and removes the old object", async () => {
    const master = await masterRow();
    const legacy = `masters/${fragment.id}.tif`;
    // As a copy made before keys were per master stands: under the library's key, the row naming it.
    await stack.offsite!.put(legacy, stack.libraryPath(master.key));
    await stack.database.pool.query("update offsite_copies set key = $1 where output_id = $2", [legacy, master.id]);
    expect((await offsite()).copy!.key).toBe(legacy);
    // A re-check still reads the old object and compares it with the master in the library.
    const check = await operator.post(`/api/fragments/${fragment.id}/offsite/check`);
    expect(check.body.copy).toMatchObject({ status: "copied", key: legacy });

    expect((await operator.post(`/api/fragments/${fragment.id}/offsite/copy`)).status).toBe(202);
    const moved = await waitFor("the copy under its own key", async () => {
      const o = await offsite();
      return o.copy?.status === "copied" && o.copy.key !== legacy ? o : null;
    });
    expect(moved.copy!.key).toBe(`masters/${fragment.id}/${master.id}.tif`);
    expect(await stack.offsite!.exists(moved.copy!.key)).toBe(true);
    expect(await stack.offsite!.exists(legacy)).toBe(false);
  });

  it("leaves an object under the older key that is not this master's own copy (a kept copy of the master before it)", async () => {
    const master = await masterRow();
    const legacy = `masters/${fragment.id}.tif`;
    // Another master's copy, kept by a delete, sits under the old key; this master's copy to that
    // key never landed (no copied_at), or landed and was since replaced by other bytes.
    const other = path.join(stack.inbox, "..", "kept-copy.bin");
    await fs.writeFile(other, Buffer.from("the copy a delete kept, of the master before this one"));
    for (const copiedAt of [null, new Date()]) {
      await stack.offsite!.put(legacy, other);
      await stack.database.pool.query("update offsite_copies set key = $1, copied_at = $2, status = 'failed' where output_id = $3", [
        legacy,
        copiedAt,
        master.id,
      ]);
      expect((await operator.post(`/api/fragments/${fragment.id}/offsite/copy`)).status).toBe(202);
      await waitFor("the copy under its own key", async () => {
        const o = await offsite();
        return o.copy?.status === "copied" && o.copy.key !== legacy ? o : null;
      });
      expect(sha(await fs.readFile(stack.s3!.objectFile("offsite", legacy)))).toBe(sha(await fs.readFile(other)));
    }
  });

  it("does not write a re-check's finding over a copy that began while it read", async () => {
    const { checkMaster } = await import("../server/services/offsite");
    const { logger } = await import("../server/logger");
    const master = await masterRow();
    expect((await offsite()).copy!.status).toBe("copied");
    // While the re-check reads the bucket, a fresh copy is asked for (the row goes pending).
    const bucket = Object.create(stack.offsite!) as NonNullable<typeof stack.offsite>;
    bucket.createReadStream = async (k: string) => {
      await stack.database.pool.query("update offsite_copies set status = 'pending' where output_id = $1", [master.id]);
      return stack.offsite!.createReadStream(k);
    };
    const row = await checkMaster(
      { database: stack.database, boss: stack.boss, library: stack.library, offsite: bucket, log: logger },
      master.id,
    );
    expect(row!.status).toBe("pending");
    expect((await offsite()).copy!.status).toBe("pending");
    await stack.database.pool.query("update offsite_copies set status = 'copied' where output_id = $1", [master.id]);
  });

  it("lets an admin queue a re-check of every master; viewers see no copy actions", async () => {
    const all = await admin.post("/api/offsite/check");
    expect(all.status).toBe(202);
    expect(all.body.queued).toBe(1);
    expect((await operator.post("/api/offsite/check")).status).toBe(403);
    expect((await viewer.post(`/api/fragments/${fragment.id}/offsite/check`)).status).toBe(403);
    expect((await viewer.get(`/api/fragments/${fragment.id}/offsite`)).status).toBe(403);
  });

  it("marks the copy failed with the reason while the bucket is down, retries, and copies once it is back", async () => {
    const { port, directory } = stack.s3!;
    await stack.s3!.stop();
    expect((await operator.post(`/api/fragments/${fragment.id}/offsite/copy`)).status).toBe(202);
    const failed = await waitFor(
      "the failed attempts",
      async () => {
        const o = await offsite();
        return o.copy?.status === "failed" && o.copy.attempts >= 2 ? o : null;
      },
      40_000,
    );
    expect(failed.copy!.message).toMatch(
      /^Copy to the bucket s3:\/\/offsite\/ at http:\/\/127\.0\.0\.1:\d+ failed: .*cannot be reached.* Retrying \(attempt \d of \d\)\.$/,
    );
    // The queue itself shows the job being retried, not dropped.
    const { rows } = await stack.database.pool.query("select max(retry_count) as retries from pgboss.job where name = 'offsite-copy'");
    expect(Number(rows[0].retries)).toBeGreaterThanOrEqual(1);

    revived = await startFakeS3({ directory, buckets: ["library", "offsite"], port });
    const back = await waitFor(
      "the copy after the bucket came back",
      async () => {
        const o = await offsite();
        return o.copy?.status === "copied" ? o : null;
      },
      60_000,
    );
    expect(back.copy!.message).toBeNull();
  });
});
