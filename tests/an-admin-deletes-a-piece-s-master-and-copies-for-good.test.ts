/**
 * Masters are the archive: deleting one is an admin's action, asked first. The plan says what
 * goes (the master, the render's web copy, every batch copy), the deletion removes no more files
 * than the admin was shown, takes the piece out of approved work, keeps the original scan byte for
 * byte, leaves the other pieces alone and keeps the batch's item without its file. Approving the
 * piece again renders a new master from the original. Real PostgreSQL, pg-boss, worker and files.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import sharp from "sharp";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { batchItems, fragments, outputs, scans } from "../server/db/schema";
import type { Fragment } from "../shared/schemas/fragments";
import type { PresetSummary } from "../shared/schemas/preset-api";
import { approvedPieces, renderedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let scanId: string;
let pieces: Fragment[];
let batchId: string;

/** Two pieces at 300 DPI (invented test data). */
const TWO_PIECES = `<svg xmlns="http://www.w3.org/2000/svg" width="1300" height="800">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="600" height="450" fill="#1f6f8b"/>
    <rect x="850" y="120" width="300" height="400" fill="#c0392b"/>
  </svg>`;

const sha256 = async (file: string) =>
  crypto
    .createHash("sha256")
    .update(await fs.readFile(file))
    .digest("hex");
const outputsOf = (fragmentId: string) => stack.db.select().from(outputs).where(eq(outputs.fragmentId, fragmentId));
const rendered = () => renderedPieces(operator, scanId, 2, 60_000);

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  ({ scanId, fragments: pieces } = await approvedPieces(operator, {
    name: "two-pieces-for-deleting.tif",
    svg: TWO_PIECES,
    compression: "lzw",
    pieces: 2,
  }));
  const presets = (await operator.get("/api/presets")).body.presets as PresetSummary[];
  const web = presets.find((p) => p.name === "web")!;
  const made = await operator.post("/api/batches").send({ name: "Listing", selection: { filter: { scanId } }, presetIds: [web.id] });
  expect(made.status).toBe(201);
  batchId = made.body.batch.id;
  await waitFor("the batch", async () => (await operator.get(`/api/batches/${batchId}`)).body.batch.finishedAt, 60_000);
});
afterAll(async () => {
  await stack?.stop();
});

describe("deleting a piece's master and copies", () => {
  it("is for admins only", async () => {
    const id = pieces[0]!.id;
    expect((await operator.get(`/api/fragments/${id}/files`)).status).toBe(403);
    expect((await operator.delete(`/api/fragments/${id}/files`).query({ upTo: 10 })).status).toBe(403);
    expect(await outputsOf(id)).toHaveLength(3);
  });

  it("says what goes, removes no more than was shown, and keeps the original and the other piece", async () => {
    const [piece, other] = pieces;
    const [scan] = await stack.db.select().from(scans).where(eq(scans.id, scanId));
    const originalBefore = await sha256(stack.libraryPath(scan!.originalKey));
    const mine = await outputsOf(piece!.id);
    const theirs = await outputsOf(other!.id);
    const master = mine.find((o) => o.kind === "master")!;

    const plan = (await admin.get(`/api/fragments/${piece!.id}/files`)).body.plan;
    expect(plan).toEqual({
      master: { format: "tiff", bytes: master.bytes },
      copies: 2, // the render's web copy and the batch's copy
      files: 3,
      bytes: mine.reduce((s, o) => s + o.bytes, 0),
      batches: 1,
      blocked: null,
      offsite: null, // no off-site bucket on this stack
    });

    // Shown fewer files than would go: refused, nothing gone.
    const short = await admin.delete(`/api/fragments/${piece!.id}/files`).query({ upTo: 2 });
    expect(short.status).toBe(409);
    expect(short.body.error.message).toBe("This would delete 3 files, more than the 2 you were shown. Look at what goes again.");
    expect(await outputsOf(piece!.id)).toHaveLength(3);
    // Malformed: a clear message, nothing gone.
    const bad = await admin.delete(`/api/fragments/${piece!.id}/files`).query({ upTo: "all" });
    expect(bad.status).toBe(400);
    expect(bad.body.error.field).toBe("upTo");

    const res = await admin.delete(`/api/fragments/${piece!.id}/files`).query({ upTo: 3 });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ removed: 3, notRemoved: 0, offsite: "none", offsiteError: null });
    expect(await outputsOf(piece!.id)).toEqual([]);
    for (const o of mine) await expect(fs.stat(stack.libraryPath(o.key))).rejects.toMatchObject({ code: "ENOENT" });
    const [row] = await stack.db.select().from(fragments).where(eq(fragments.id, piece!.id));
    expect([row!.status, row!.renderState]).toEqual(["rejected", "none"]);

    // The original is untouched, the other piece keeps every file.
    expect(await sha256(stack.libraryPath(scan!.originalKey))).toBe(originalBefore);
    expect((await outputsOf(other!.id)).map((o) => o.key).sort()).toEqual(theirs.map((o) => o.key).sort());
    for (const o of theirs) expect((await fs.stat(stack.libraryPath(o.key))).size).toBe(o.bytes);
    // The batch keeps the item, without its file; the other piece's copy is still listed.
    const items = await stack.db.select().from(batchItems).where(eq(batchItems.batchId, batchId));
    expect(items.find((i) => i.fragmentId === piece!.id)!.outputId).toBeNull();
    expect(items.find((i) => i.fragmentId === other!.id)!.outputId).not.toBeNull();

    // Nothing left to delete: said so.
    const again = await admin.delete(`/api/fragments/${piece!.id}/files`).query({ upTo: 3 });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe("This piece has no master or copies to delete.");
  });

  it("is refused while its render or a batch copy of it is in flight, and approving the piece again makes a new master", async () => {
    const [piece, other] = pieces;
    // Held in the states the render and the batch job put them in (set here, not raced for).
    await stack.db.update(fragments).set({ renderState: "rendering" }).where(eq(fragments.id, other!.id));
    let plan = (await admin.get(`/api/fragments/${other!.id}/files`)).body.plan;
    expect(plan.blocked).toBe("Its master is being rendered. Delete its files once the render is done.");
    expect((await admin.delete(`/api/fragments/${other!.id}/files`).query({ upTo: 10 })).status).toBe(409);
    await stack.db.update(fragments).set({ renderState: "done" }).where(eq(fragments.id, other!.id));
    await stack.db.update(batchItems).set({ state: "running" }).where(eq(batchItems.fragmentId, other!.id));
    plan = (await admin.get(`/api/fragments/${other!.id}/files`)).body.plan;
    expect(plan.blocked).toBe("A batch is still making a copy of this piece. Cancel it or wait until it is done.");
    const refused = await admin.delete(`/api/fragments/${other!.id}/files`).query({ upTo: 10 });
    expect([refused.status, refused.body.error.message]).toEqual([409, plan.blocked]);
    await stack.db.update(batchItems).set({ state: "done" }).where(eq(batchItems.fragmentId, other!.id));
    expect(await outputsOf(other!.id)).toHaveLength(3);

    expect((await operator.patch(`/api/fragments/${piece!.id}`).send({ status: "approved" })).status).toBe(200);
    await rendered();
    const master = (await outputsOf(piece!.id)).find((o) => o.kind === "master")!;
    const meta = await sharp(stack.libraryPath(master.key)).metadata();
    // 600 × 450 px at 300 DPI, as the first master was.
    expect([meta.width, meta.height, Math.round(meta.density!)]).toEqual([600, 450, 300]);
  });

  it("the Library lists rejected pieces that still keep files, and a deletion takes one off", async () => {
    const other = pieces[1]!;
    const before = (await admin.get("/api/library")).body.rejectedKept;
    expect(before).toEqual({ pieces: 0, files: 0, bytes: 0, largest: [] });
    expect((await operator.patch(`/api/fragments/${other.id}`).send({ status: "rejected" })).status).toBe(200);
    const kept = await outputsOf(other.id);
    const listed = (await admin.get("/api/library")).body.rejectedKept;
    expect(listed).toEqual({
      pieces: 1,
      files: kept.length,
      bytes: kept.reduce((s, o) => s + o.bytes, 0),
      largest: [
        {
          id: other.id,
          title: null,
          scanName: "two-pieces-for-deleting.tif",
          position: other.position,
          files: kept.length,
          bytes: kept.reduce((s, o) => s + o.bytes, 0),
        },
      ],
    });
    expect((await admin.delete(`/api/fragments/${other.id}/files`).query({ upTo: kept.length })).status).toBe(200);
    expect((await admin.get("/api/library")).body.rejectedKept.pieces).toBe(0);
  });

  it("answers an unknown piece with 404", async () => {
    const res = await admin.get("/api/fragments/00000000-0000-4000-8000-000000000000/files");
    expect(res.status).toBe(404);
  });
});
