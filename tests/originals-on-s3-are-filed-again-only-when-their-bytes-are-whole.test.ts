/**
 * Filing the originals a database lost again, with the library on S3 (a fake S3 server speaking
 * the real API on 127.0.0.1): an original is checked against the checksum its name gives by
 * reading its bytes, not the checksum the store keeps beside them, so an object whose bytes have
 * rotted is left as it is and nothing new is stored; a whole one is filed as a new scan under the
 * same key, the object unchanged. Scenes are invented.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { pieceBed, sha256 } from "./helpers/fixtures";
import { startStack, type Stack } from "./helpers/stack";
import { refileOriginal, REFILE_GRACE_MS, unknownOriginals } from "../server/services/library-refile";
import { logger } from "../server/logger";

let stack: Stack;
const admin = { id: null, email: "admin@test.example" };
const later = () => new Date(Date.now() + REFILE_GRACE_MS + 60_000);

/** Stores an original in the S3 library the way a filing does (write-once, its checksum as metadata). */
async function storeOriginal(bytes: Buffer): Promise<string> {
  const key = `originals/${sha256(bytes).slice(0, 2)}/${sha256(bytes)}.tif`;
  const file = path.join(stack.inbox, "..", `${sha256(bytes)}.tif`);
  await fs.writeFile(file, bytes);
  await stack.library.put(key, file, { sha256: sha256(bytes) });
  return key;
}

beforeAll(async () => {
  stack = await startStack({ s3: true, worker: false, watcher: false });
}, 60_000);
afterAll(async () => {
  await stack?.stop();
});

describe("originals the database lost, in an S3 library", () => {
  it("leaves one whose bytes rotted as it is, though the store's checksum still looks right", async () => {
    const bytes = await pieceBed(7, 1);
    const key = await storeOriginal(bytes);
    expect((await stack.library.stat(key)).sha256).toBe(sha256(bytes));
    // Bit rot behind the store's back: the bytes change, the metadata does not.
    const objectFile = stack.s3!.objectFile("library", key);
    const rotted = Buffer.from(await fs.readFile(objectFile));
    rotted[rotted.length >> 1]! ^= 0xff;
    await fs.writeFile(objectFile, rotted);
    const before = await stack.library.list("originals/");
    const deps = { database: stack.database, boss: stack.boss, library: stack.library, log: logger };
    expect(await refileOriginal(deps, key, admin, { now: later() })).toEqual({ outcome: "damaged" });
    expect(await stack.library.list("originals/")).toEqual(before);
    expect((await stack.database.pool.query("select 1 from scans")).rows).toHaveLength(0);
    await stack.library.remove(key).catch(() => {});
  });

  it("files a whole one as a new scan under the same key, the object unchanged", async () => {
    const bytes = await pieceBed(8, 1);
    const key = await storeOriginal(bytes);
    expect(await unknownOriginals(stack.db, stack.library)).toContain(key);
    const deps = { database: stack.database, boss: stack.boss, library: stack.library, log: logger };
    const r = await refileOriginal(deps, key, admin, { now: later() });
    expect(r.outcome).toBe("filed");
    const { rows } = await stack.database.pool.query<{ original_key: string; source: string; sha256: string }>(
      "select original_key, source, sha256 from scans where id = $1",
      [(r as { scanId: string }).scanId],
    );
    expect(rows[0]).toEqual({ original_key: key, source: "library", sha256: sha256(bytes) });
    expect(sha256(await fs.readFile(stack.s3!.objectFile("library", key)))).toBe(sha256(bytes));
    expect(await unknownOriginals(stack.db, stack.library)).not.toContain(key);
  });
});
