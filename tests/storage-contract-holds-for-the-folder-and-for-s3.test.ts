/**
 * One contract for the library's storage, run against the local folder and against the S3
 * implementation talking to a fake S3 server (s3rver, the real S3 API over HTTP on 127.0.0.1):
 * put and read back, stat and checksum, list, remove, atomic writes, originals written once, bad
 * keys refused, a missing key named in a clear error, a large file uploaded in parts and a
 * download that streams instead of arriving whole.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import type { Readable } from "node:stream";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { snapshotFile } from "../server/storage/files";
import { LocalStorage } from "../server/storage/local";
import { S3Storage, s3Client } from "../server/storage/s3";
import { StorageError, type Storage } from "../server/storage/storage";
import { FAKE_S3_CREDENTIALS, startFakeS3, type FakeS3 } from "../scripts/lib/fake-s3";

const MiB = 1024 * 1024;
const PART = 5 * MiB;
let dir: string;
let fake: FakeS3;
/** S3 commands sent, by name (counted by a middleware on the client). */
const sent = new Map<string, number>();

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "platen-storage-"));
  fake = await startFakeS3({ directory: path.join(dir, "s3"), buckets: ["contract"] });
});
afterAll(async () => {
  await fake?.stop();
  await fs.rm(dir, { recursive: true, force: true });
});

function makeS3(name: string, cacheMaxBytes = 256 * MiB): S3Storage {
  const settings = {
    bucket: "contract",
    prefix: `${name}/`,
    region: "us-east-1",
    endpoint: fake.endpoint,
    forcePathStyle: true,
    credentials: { ...FAKE_S3_CREDENTIALS },
    partSizeBytes: PART,
  };
  const client = s3Client(settings);
  client.middlewareStack.add(
    (next, context) => async (args) => {
      const n = context.commandName ?? "?";
      sent.set(n, (sent.get(n) ?? 0) + 1);
      return next(args);
    },
    { step: "initialize", name: "countCommands" },
  );
  return new S3Storage(
    settings,
    {
      scratchDir: path.join(dir, name, "work"),
      cacheDir: path.join(dir, name, "cache"),
      cacheMaxBytes,
    },
    client,
  );
}

const implementations: [string, () => Storage][] = [
  ["the local folder", () => new LocalStorage(path.join(dir, "local-library"))],
  ["S3 (fake server)", () => makeS3("s3-library")],
];

async function fileWith(content: string | Buffer): Promise<string> {
  const f = path.join(dir, `src-${crypto.randomBytes(4).toString("hex")}`);
  await fs.writeFile(f, content);
  return f;
}

async function readAll(s: Readable): Promise<Buffer> {
  const parts: Buffer[] = [];
  for await (const c of s) parts.push(c as Buffer);
  return Buffer.concat(parts);
}

const sha = (b: Buffer | string) => crypto.createHash("sha256").update(b).digest("hex");

async function refused(p: Promise<unknown>, code: StorageError["code"]): Promise<StorageError> {
  const err = await p.then(
    () => null,
    (e: unknown) => e,
  );
  expect(err, `expected a ${code} error`).toBeInstanceOf(StorageError);
  expect((err as StorageError).code).toBe(code);
  return err as StorageError;
}

describe.each(implementations)("storage contract: %s", (_name, make) => {
  let storage: Storage;
  beforeAll(() => {
    storage = make();
  });

  it("stores a file under a key and gives back the same bytes, size and checksum", async () => {
    const body = "a stored preview, byte for byte";
    const put = await storage.put("previews/one.jpg", await fileWith(body));
    expect(put.written).toBe(true);
    expect(await storage.exists("previews/one.jpg")).toBe(true);
    expect((await readAll(await storage.createReadStream("previews/one.jpg"))).toString()).toBe(body);
    const st = await storage.stat("previews/one.jpg");
    expect(st.size).toBe(Buffer.byteLength(body));
    expect(await storage.checksum("previews/one.jpg")).toBe(sha(body));
    await storage.withLocalFile("previews/one.jpg", async (p) => expect(await fs.readFile(p, "utf8")).toBe(body));
  });

  it("moves a handed-over file in, and leaves a copied one where it was", async () => {
    const moved = await fileWith("moved");
    await storage.put("web/moved.jpg", moved, { move: true });
    await expect(fs.access(moved)).rejects.toThrow();
    const copied = await fileWith("copied");
    await storage.put("web/copied.jpg", copied);
    expect(await fs.readFile(copied, "utf8")).toBe("copied");
    expect((await readAll(await storage.createReadStream("web/moved.jpg"))).toString()).toBe("moved");
  });

  it("lists the keys under a prefix, sorted, without temporary files", async () => {
    for (const k of ["masters/b.tif", "masters/a.tif", "mastersx/c.tif", "outputs/f1/p1.jpg"]) await storage.put(k, await fileWith(k));
    // A write in progress must not show up in a listing.
    let during: string[] = [];
    await storage.writeAtomic("masters/c.tif", async (tmp) => {
      await fs.writeFile(tmp, "half");
      during = await storage.list("masters/");
    });
    expect(during).toEqual(["masters/a.tif", "masters/b.tif"]);
    expect(await storage.list("masters/")).toEqual(["masters/a.tif", "masters/b.tif", "masters/c.tif"]);
    expect(await storage.list("outputs/")).toEqual(["outputs/f1/p1.jpg"]);
    expect(await storage.list("")).toEqual(expect.arrayContaining(["masters/a.tif", "mastersx/c.tif", "previews/one.jpg"]));
  });

  it("replaces a rewritable file atomically: readers see the old file until the new one is whole", async () => {
    await storage.put("masters/f.tif", await fileWith("old master"));
    await storage.writeAtomic("masters/f.tif", async (tmp) => {
      await fs.writeFile(tmp, "new mas");
      expect((await readAll(await storage.createReadStream("masters/f.tif"))).toString()).toBe("old master");
      await fs.appendFile(tmp, "ter");
    });
    expect((await readAll(await storage.createReadStream("masters/f.tif"))).toString()).toBe("new master");
    // A write that fails leaves the old file untouched.
    await expect(
      storage.writeAtomic("masters/f.tif", async (tmp) => {
        await fs.writeFile(tmp, "broken");
        throw new Error("encoder crashed");
      }),
    ).rejects.toThrow("encoder crashed");
    expect((await readAll(await storage.createReadStream("masters/f.tif"))).toString()).toBe("new master");
    expect(await storage.list("masters/")).not.toContain(expect.stringMatching(/tmp/));
  });

  it("writes an original once: a second put or commit never replaces it, and it cannot be removed", async () => {
    const key = "originals/ab/abcdef.tif";
    expect((await storage.put(key, await fileWith("the scan"))).written).toBe(true);
    expect((await storage.put(key, await fileWith("something else"))).written).toBe(false);
    const staged = await storage.stageCopy(await fileWith("staged other"));
    expect(staged.sha256).toBe(sha("staged other"));
    expect((await storage.commit(staged, key)).written).toBe(false);
    await expect(fs.access(staged.temp)).rejects.toThrow();
    expect((await storage.writeAtomic(key, (tmp) => fs.writeFile(tmp, "rewritten"))).written).toBe(false);
    expect((await readAll(await storage.createReadStream(key))).toString()).toBe("the scan");
    await refused(storage.remove(key), "write-once");
    expect(await storage.exists(key)).toBe(true);
  });

  it("stages a copy while hashing it and commits it under its content address", async () => {
    const src = await fileWith("inbox scan bytes");
    const staged = await storage.stageCopy(src);
    expect(staged).toMatchObject({ sha256: sha("inbox scan bytes"), sizeBytes: 16 });
    await storage.commit(staged, `originals/${staged.sha256.slice(0, 2)}/${staged.sha256}.tif`);
    expect(await storage.checksum(`originals/${staged.sha256.slice(0, 2)}/${staged.sha256}.tif`)).toBe(staged.sha256);
    expect(await fs.readFile(src, "utf8")).toBe("inbox scan bytes");
  });

  it("stages no link and nothing but a regular file, leaving what a link names untouched", async () => {
    const target = await fileWith("somebody else's file");
    const link = `${target}.link.tif`;
    await fs.symlink(target, link);
    await expect(storage.stageCopy(link)).rejects.toThrow(/is a link: only files themselves are taken in/);
    await expect(storage.stageCopy(path.dirname(target))).rejects.toThrow(/is not a regular file/);
    expect(await fs.readFile(target, "utf8")).toBe("somebody else's file");
  });

  it("removes a file, and removing it again is no error", async () => {
    await storage.put("web/gone.jpg", await fileWith("x"));
    await storage.remove("web/gone.jpg");
    expect(await storage.exists("web/gone.jpg")).toBe(false);
    await storage.remove("web/gone.jpg");
  });

  it("refuses keys that are not plain relative names, before touching anything", async () => {
    const src = await fileWith("evil");
    for (const bad of ["../escape.txt", "/etc/passwd", "a/../../b", "a//b", "", "a\\b", "./a", "masters/", "ü.jpg", "a/.hidden"]) {
      const err = await refused(storage.put(bad, src), "bad-key");
      expect(err.message).toContain("Refusing library key");
      await refused(storage.exists(bad), "bad-key");
      await refused(storage.createReadStream(bad), "bad-key");
      await refused(
        storage.withLocalFile(bad, async () => {}),
        "bad-key",
      );
    }
    await refused(storage.list("../"), "bad-key");
    await expect(fs.access(path.join(dir, "escape.txt"))).rejects.toThrow();
  });

  it("says clearly which key is missing", async () => {
    for (const call of [
      () => storage.stat("masters/none.tif"),
      () => storage.createReadStream("masters/none.tif"),
      () => storage.withLocalFile("masters/none.tif", async () => {}),
      () => storage.checksum("masters/none.tif"),
    ]) {
      const err = await refused(call(), "missing");
      expect(err.message).toMatch(/^Nothing is stored under "masters\/none\.tif" in /);
    }
    expect(await storage.exists("masters/none.tif")).toBe(false);
  });

  it("takes a large file (24 MiB) and streams it back in chunks, or any byte range of it", async () => {
    const big = path.join(dir, `big-${_name.replace(/\W/g, "")}.bin`);
    const fh = await fs.open(big, "w");
    const hash = crypto.createHash("sha256");
    for (let i = 0; i < 24; i++) {
      const chunk = crypto.randomBytes(MiB);
      hash.update(chunk);
      await fh.write(chunk);
    }
    await fh.close();
    const digest = hash.digest("hex");
    const before = new Map(sent);
    const put = await storage.put("masters/big.tif", big);
    expect(put).toMatchObject({ written: true, size: 24 * MiB, sha256: digest });
    if (storage.kind === "s3") {
      // 24 MiB in 5 MiB parts is five parts: a multipart upload, not one PUT.
      const delta = (n: string) => (sent.get(n) ?? 0) - (before.get(n) ?? 0);
      expect(delta("CreateMultipartUploadCommand")).toBe(1);
      expect(delta("UploadPartCommand")).toBe(5);
      expect(delta("CompleteMultipartUploadCommand")).toBe(1);
      expect(delta("PutObjectCommand")).toBe(0);
    }
    expect((await storage.stat("masters/big.tif")).size).toBe(24 * MiB);
    expect(await storage.checksum("masters/big.tif")).toBe(digest);

    // The first chunk arrives long before the whole file: the body is streamed, not buffered.
    const stream = await storage.createReadStream("masters/big.tif");
    let chunks = 0;
    let bytes = 0;
    const streamed = crypto.createHash("sha256");
    for await (const c of stream) {
      chunks++;
      bytes += (c as Buffer).length;
      streamed.update(c as Buffer);
      expect((c as Buffer).length).toBeLessThan(4 * MiB);
    }
    expect(chunks).toBeGreaterThan(4);
    expect(bytes).toBe(24 * MiB);
    expect(streamed.digest("hex")).toBe(digest);

    // A range, as a resumed download asks for it.
    const whole = await fs.readFile(big);
    const range = await readAll(
      await storage.createReadStream("masters/big.tif", {
        start: 10 * MiB + 7,
        end: 10 * MiB + 7 + 99_999,
      }),
    );
    expect(range.equals(whole.subarray(10 * MiB + 7, 10 * MiB + 7 + 100_000))).toBe(true);
    const tail = await readAll(await storage.createReadStream("masters/big.tif", { start: 24 * MiB - 10 }));
    expect(tail.equals(whole.subarray(24 * MiB - 10))).toBe(true);
  });
});

describe("a file held open for hashing and sending", () => {
  it("sends the version it hashed when a new one is renamed over its name in between", async () => {
    const first = crypto.randomBytes(3 * MiB);
    const name = await fileWith(first);
    const snapshot = await snapshotFile(name);
    try {
      // A re-render writes a new file and renames it over the old name (as the library does).
      const next = await fileWith("a newer, shorter version");
      await fs.rename(next, name);
      expect(snapshot.size).toBe(first.length);
      expect(snapshot.sha256).toBe(sha(first));
      const sentBytes = await readAll(snapshot.stream() as Readable);
      expect(sha(sentBytes)).toBe(snapshot.sha256);
      // Asked again, it gives the same bytes from the start.
      expect(sha(await readAll(snapshot.stream() as Readable))).toBe(sha(first));
    } finally {
      await snapshot.close();
    }
    expect(await fs.readFile(name, "utf8")).toBe("a newer, shorter version");
  });

  it("takes a checksum it is given without reading, and an empty file as an empty stream", async () => {
    const empty = await snapshotFile(await fileWith(""));
    // SHA-256 of the empty string (FIPS 180-4; the well-known e3b0c442… value).
    expect(empty.sha256).toBe("e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
    expect((await readAll(empty.stream() as Readable)).length).toBe(0);
    await empty.close();
    const given = await snapshotFile(await fileWith("abc"), "given-by-the-caller");
    expect(given.sha256).toBe("given-by-the-caller");
    expect(given.size).toBe(3);
    await given.close();
  });
});

describe("storage settings", () => {
  it("picks the implementation from PLATEN_STORAGE and refuses an incomplete S3 setting, naming the variable", async () => {
    const { loadConfig } = await import("../server/config");
    const { openStorage } = await import("../server/storage");
    const base = {
      PLATEN_DATA_DIR: path.join(dir, "cfg"),
      PLATEN_LIBRARY_DIR: path.join(dir, "cfg", "library"),
    };
    expect(openStorage(loadConfig(base)).kind).toBe("local");
    const s3 = loadConfig({
      ...base,
      PLATEN_STORAGE: "s3",
      PLATEN_S3_BUCKET: "studio-bucket",
      PLATEN_S3_PREFIX: "kestrel",
      PLATEN_S3_FORCE_PATH_STYLE: "1",
    });
    expect(s3.storage.s3).toMatchObject({
      bucket: "studio-bucket",
      prefix: "kestrel/",
      region: expect.any(String),
      forcePathStyle: true,
    });
    const opened = openStorage(s3);
    expect(opened.kind).toBe("s3");
    expect(opened.description).toBe("the bucket s3://studio-bucket/kestrel/");
    expect(() => loadConfig({ ...base, PLATEN_STORAGE: "s3" })).toThrow(/PLATEN_S3_BUCKET: is required when PLATEN_STORAGE is s3/);
    expect(() => loadConfig({ ...base, PLATEN_STORAGE: "s3", PLATEN_S3_BUCKET: "Bad_Bucket" })).toThrow(
      /PLATEN_S3_BUCKET: must be an S3 bucket name/,
    );
    expect(() => loadConfig({ ...base, PLATEN_S3_BUCKET: "b-1", PLATEN_S3_ACCESS_KEY_ID: "key-only" })).toThrow(/set both or neither/);
    expect(() =>
      loadConfig({
        ...base,
        PLATEN_STORAGE: "s3",
        PLATEN_S3_BUCKET: "b-1",
        PLATEN_OFFSITE_BUCKET: "b-2",
      }),
    ).toThrow(/off-site copy is for a local library/);
    // Prefixes: folders with or without the closing slash; a bad one is refused (and at once, even
    // when long: the check must not backtrack on it).
    for (const [given, kept] of [
      ["a/b", "a/b/"],
      ["a/b/", "a/b/"],
      ["", ""],
    ] as const)
      expect(loadConfig({ ...base, PLATEN_S3_BUCKET: "b-1", PLATEN_S3_PREFIX: given }).storage.s3!.prefix).toBe(kept);
    for (const bad of ["../up", "a//b", "/root", `${"studio-archive".repeat(4)} `])
      expect(() => loadConfig({ ...base, PLATEN_S3_BUCKET: "b-1", PLATEN_S3_PREFIX: bad }), bad).toThrow(
        /PLATEN_S3_PREFIX: must be a folder-like prefix/,
      );
  });
});

describe("S3 storage: the local copy for tools that read paths", () => {
  it("downloads a file once, fetches it again after it is rewritten, and keeps the cache under its bound", async () => {
    const s3 = makeS3("cache-check", 300 * 1024);
    await s3.put("masters/m.tif", await fileWith("first render"));
    const gets = () => sent.get("GetObjectCommand") ?? 0;
    const g0 = gets();
    const p1 = await s3.withLocalFile("masters/m.tif", async (p) => {
      expect(await fs.readFile(p, "utf8")).toBe("first render");
      return p;
    });
    await s3.withLocalFile("masters/m.tif", async (p) => expect(p).toBe(p1));
    expect(gets() - g0).toBe(1);
    // Another machine rewrites the key: the next use fetches the new version.
    const other = makeS3("cache-check");
    await other.put("masters/m.tif", await fileWith("second render"));
    await s3.withLocalFile("masters/m.tif", async (p) => expect(await fs.readFile(p, "utf8")).toBe("second render"));
    expect(gets() - g0).toBe(2);
    // Files it uploads itself are kept as the local copy: no download at all.
    await s3.put("web/own.jpg", await fileWith("own upload"), { move: true });
    await s3.withLocalFile("web/own.jpg", async (p) => expect(await fs.readFile(p, "utf8")).toBe("own upload"));
    expect(gets() - g0).toBe(2);

    // Ten 100 KiB files through a 300 KiB cache: the least recently used go.
    for (let i = 0; i < 10; i++) {
      await other.put(`outputs/f/${i}.jpg`, await fileWith(crypto.randomBytes(100 * 1024)));
      await s3.withLocalFile(`outputs/f/${i}.jpg`, async (p) => expect((await fs.stat(p)).size).toBe(100 * 1024));
      await s3.cache.sweep();
    }
    expect(await s3.cache.size()).toBeLessThanOrEqual(300 * 1024);
    expect(await s3.cache.size()).toBeGreaterThan(0);
  });

  it("names the bucket when it does not exist", async () => {
    const settings = {
      bucket: "no-such-bucket",
      prefix: "",
      region: "us-east-1",
      endpoint: fake.endpoint,
      forcePathStyle: true,
      credentials: { ...FAKE_S3_CREDENTIALS },
      partSizeBytes: PART,
    };
    const s3 = new S3Storage(settings, {
      scratchDir: path.join(dir, "nb", "work"),
      cacheDir: path.join(dir, "nb", "cache"),
      cacheMaxBytes: MiB,
    });
    const err = await refused(s3.put("web/x.jpg", await fileWith("x")), "unavailable");
    expect(err.message).toContain('"no-such-bucket"');
  });
});
