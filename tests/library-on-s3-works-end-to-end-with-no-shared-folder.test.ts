/**
 * The product with its library on S3-compatible storage (a fake S3 server speaking the real API on
 * 127.0.0.1): a scan goes in through the inbox, a worker on "another machine" (its own process and
 * data folder, no folder shared with the server) splits and renders it, an output batch runs, and
 * the master and the output are objects in the bucket that download through the API, streamed and
 * resumable. No library folder is ever made on either side; only the bounded caches hold copies.
 */
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";
import { execFileSync, type ChildProcess } from "node:child_process";
import sharp from "sharp";
import supertest from "supertest";
import { GetObjectCommand, ListObjectsV2Command } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { twoPieceBed } from "./helpers/fixtures";
import { spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { s3Client } from "../server/storage/s3";
import { FAKE_S3_CREDENTIALS } from "../scripts/lib/fake-s3";
import { walk } from "../server/storage/files";
import type { Fragment } from "../shared/schemas/fragments";

let stack: Stack;
let operator: supertest.Agent;
let worker: ChildProcess;
let workerData: string;
let scanId: string;
let fragments: Fragment[];

const scan = twoPieceBed;

const binary = (req: supertest.Test) =>
  req.buffer(true).parse((r, cb) => {
    const chunks: Buffer[] = [];
    r.on("data", (c: Buffer) => chunks.push(c));
    r.on("end", () => cb(null, Buffer.concat(chunks)));
  });

/** An independent client straight to the fake S3: what is really in the bucket. */
function bucket() {
  const client = s3Client({
    bucket: "library",
    prefix: "",
    region: "us-east-1",
    endpoint: stack.s3!.endpoint,
    forcePathStyle: true,
    credentials: { ...FAKE_S3_CREDENTIALS },
    partSizeBytes: 8 << 20,
  });
  return {
    async keys() {
      const r = await client.send(new ListObjectsV2Command({ Bucket: "library" }));
      return (r.Contents ?? []).map((o) => o.Key!).sort();
    },
    async bytes(key: string) {
      const r = await client.send(new GetObjectCommand({ Bucket: "library", Key: key }));
      return Buffer.from(await r.Body!.transformToByteArray());
    },
  };
}
const sha = (b: Buffer) => crypto.createHash("sha256").update(b).digest("hex");

beforeAll(async () => {
  // The server and watcher in this process; the worker in its own, with a data folder of its own.
  stack = await startStack({ s3: true, worker: false });
  operator = await userAgent(stack, "operator");
  workerData = path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), "worker-machine");
  worker = spawnProcess("worker/main.ts", {
    ...stack.env,
    PLATEN_PROCESS: "s3-worker",
    PLATEN_DATA_DIR: workerData,
    PLATEN_LIBRARY_DIR: path.join(workerData, "library"),
  });
  await fs.writeFile(path.join(stack.inbox, "s3-bed.tif"), await scan());
  const row = await waitFor(
    "the scan to be split",
    async () => {
      const list = (await operator.get("/api/scans")).body.scans as {
        id: string;
        status: string;
        fragments: { total: number };
      }[];
      return list.find((s) => s.status === "ready" && s.fragments.total === 2);
    },
    60_000,
  );
  scanId = row.id;
  await operator.post(`/api/scans/${scanId}/approve-remaining`);
  fragments = await waitFor(
    "the masters",
    async () => {
      const list = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
      return list.length === 2 && list.every((f) => f.renderState === "done") ? list : null;
    },
    60_000,
  );
}, 120_000);

afterAll(async () => {
  if (worker && worker.exitCode === null) {
    worker.kill("SIGTERM");
    await new Promise((r) => worker.once("exit", r));
  }
  await stack?.stop();
});

describe("the library on S3", () => {
  it("holds the original, previews, masters and web copies as objects in the bucket", async () => {
    const keys = await bucket().keys();
    const [scanRow] = (
      await stack.database.pool.query("select original_key, preview_key, thumb_key, sha256 from scans where id = $1", [scanId])
    ).rows;
    expect(keys).toContain(scanRow.original_key);
    expect(keys).toContain(scanRow.preview_key);
    expect(keys).toContain(scanRow.thumb_key);
    // The original is byte for byte the scan that went in (its address is its SHA-256).
    expect(sha(await bucket().bytes(scanRow.original_key))).toBe(scanRow.sha256);
    for (const f of fragments) {
      expect(keys).toContain(`masters/${f.id}.tif`);
      expect(keys).toContain(`web/${f.id}.jpg`);
    }
  });

  it("downloads a master through the API, streamed from the bucket, whole or by range", async () => {
    const f = fragments[0]!;
    const res = await binary(operator.get(`/api/fragments/${f.id}/outputs/master`));
    expect(res.status).toBe(200);
    const inBucket = await bucket().bytes(`masters/${f.id}.tif`);
    expect(sha(res.body as Buffer)).toBe(sha(inBucket));
    expect(res.headers["content-length"]).toBe(String(inBucket.length));
    expect(res.headers["content-disposition"]).toMatch(/attachment/);
    const meta = await sharp(res.body as Buffer).metadata();
    expect(meta.format).toBe("tiff");
    expect(Math.round(meta.density!)).toBe(300);
    // A resumed download: bytes 100–1099 only.
    const part = await binary(operator.get(`/api/fragments/${f.id}/outputs/master`).set("Range", "bytes=100-1099"));
    expect(part.status).toBe(206);
    expect(part.headers["content-range"]).toBe(`bytes 100-1099/${inBucket.length}`);
    expect((part.body as Buffer).equals(inBucket.subarray(100, 1100))).toBe(true);
    const outside = await operator.get(`/api/fragments/${f.id}/outputs/master`).set("Range", `bytes=${inBucket.length + 10}-`);
    expect(outside.status).toBe(416);
    expect(outside.body.error.message).toBe(`The requested range is outside the file (${inBucket.length} bytes).`);
    // Previews and fragment pictures come from the bucket too.
    const preview = await binary(operator.get(`/api/scans/${scanId}/preview`));
    expect(preview.status).toBe(200);
    expect((await sharp(preview.body as Buffer).metadata()).format).toBe("jpeg");
    const thumb = await binary(operator.get(`/api/fragments/${f.id}/thumb`));
    expect(thumb.status).toBe(200);
    expect((await bucket().keys()).some((k) => k.startsWith(`thumbs/fragments/${f.id}-`))).toBe(true);
  });

  it("runs a batch whose output lands in the bucket and downloads in the zip", async () => {
    const presets = (await operator.get("/api/presets")).body.presets as {
      id: string;
      name: string;
    }[];
    const web = presets.find((p) => p.name === "web")!;
    const res = await operator.post("/api/batches").send({ selection: { fragmentIds: [fragments[0]!.id] }, presetIds: [web.id] });
    expect(res.status).toBe(201);
    const done = await waitFor(
      "the batch",
      async () => {
        const r = (await operator.get(`/api/batches/${res.body.batch.id}`)).body;
        return r.batch.finishedAt ? r : null;
      },
      60_000,
    );
    expect(done.batch.counts).toMatchObject({ done: 1, failed: 0 });
    const outputKeys = (await bucket().keys()).filter((k) => k.startsWith(`outputs/${fragments[0]!.id}/`));
    expect(outputKeys).toHaveLength(1);
    const zipPath = path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), "s3-batch.zip");
    const zip = await binary(operator.get(`/api/batches/${res.body.batch.id}/download`));
    expect(zip.status).toBe(200);
    await fs.writeFile(zipPath, zip.body as Buffer);
    // Python's zipfile module as an independent reader: the file in the zip is the object in the bucket.
    const inZip = execFileSync("python3", [
      "-c",
      "import zipfile,sys; z=zipfile.ZipFile(sys.argv[1]); n=[x for x in z.namelist() if x!='outputs.csv'][0]; sys.stdout.buffer.write(z.read(n))",
      zipPath,
    ]);
    expect(sha(inZip)).toBe(sha(await bucket().bytes(outputKeys[0]!)));
    const csv = execFileSync(
      "python3",
      ["-c", "import zipfile,sys; sys.stdout.write(zipfile.ZipFile(sys.argv[1]).read('outputs.csv').decode())", zipPath],
      { encoding: "utf8" },
    );
    expect(csv).toContain(sha(inZip));
  });

  it("made no library folder on either machine: only the caches hold copies, and scratch is empty", async () => {
    for (const dataDir of [stack.env.PLATEN_DATA_DIR!, workerData]) {
      await expect(fs.access(path.join(dataDir, "library"))).rejects.toThrow();
      expect((await walk(path.join(dataDir, "work"))).filter((f) => !f.startsWith("uploads/"))).toEqual([]);
    }
    await expect(fs.access(stack.env.PLATEN_LIBRARY_DIR!)).rejects.toThrow();
    // The worker read the original through its cache (a copy of the object, nothing more).
    const cached = await walk(path.join(workerData, "cache", "files"));
    expect(cached.some((f) => f.startsWith("originals/"))).toBe(true);
    expect(cached.some((f) => f.startsWith("masters/"))).toBe(true);
  });

  it("tidies the bucket as the folder: a left-over object goes once old enough, every named one stays", async () => {
    const { tidyLibrary } = await import("../server/services/library-tidy");
    const tmp = path.join(os.tmpdir(), `platen-s3-leftover-${process.pid}.jpg`);
    await fs.writeFile(tmp, "left over in the bucket");
    const leftOver = "outputs/00000000-0000-4000-8000-000000000000/left-over-r1-none.jpg";
    await stack.library.put(leftOver, tmp);
    await fs.rm(tmp, { force: true });
    // Just written: too young for a tidy now; two days on (the object's own date from the bucket), it goes.
    const now = await tidyLibrary(stack.db, stack.library, { dryRun: true });
    expect(now.folders.find((f) => f.folder === "outputs/")).toMatchObject({ leftOver: 1, tooYoung: 1, removed: 0 });
    const later = new Date(Date.now() + 2 * 24 * 3600_000);
    const done = await tidyLibrary(stack.db, stack.library, { dryRun: false, now: later });
    expect(done).toMatchObject({ removed: 1, held: false, failed: 0 });
    expect(await stack.library.exists(leftOver)).toBe(false);
    const { rows } = await stack.database.pool.query("select original_key as k from scans union select key from outputs");
    for (const r of rows) expect(await stack.library.exists(r.k), r.k).toBe(true);
  });
});
