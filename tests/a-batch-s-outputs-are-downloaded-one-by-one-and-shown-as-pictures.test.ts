/**
 * Each output on a batch's page can be downloaded on its own, and is shown as a small picture of
 * the file as it came out (the mock-up in its frame, the print on its paper). The real stack
 * (PostgreSQL, pg-boss, the worker, a library folder); the pictures are read back with sharp, the
 * file's bytes compared by SHA-256. Names and scenes are invented.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import type { batchDetailResponse } from "../shared/schemas/preset-api";
import type { z } from "zod";
import { tidyLibrary } from "../server/services/library-tidy";
import { MAX_WAITING, OUTPUT_THUMB_EDGE, outputThumb, outputThumbKey, picturesInHand } from "../server/services/output-thumbs";
import type { Storage } from "../server/storage/storage";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

type Detail = z.infer<typeof batchDetailResponse>;
type Item = Detail["items"][number];

let stack: Stack;
let operator: supertest.Agent;
let viewer: supertest.Agent;
let pieces: Fragment[];
let batch: Detail;

const sha = (b: Buffer) => crypto.createHash("sha256").update(b).digest("hex");
const itemOf = (preset: string, position = 1): Item => batch.items.find((i) => i.preset === preset && i.position === position)!;
const url = (i: Item, what: "file" | "thumb") => `/api/batches/${batch.batch.id}/items/${i.id}/${what}`;
/** supertest keeps a binary body as a Buffer with this parser. */
const binary = ((res: NodeJS.ReadableStream, done: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on("data", (c: Buffer) => chunks.push(c));
  res.on("end", () => done(null, Buffer.concat(chunks)));
}) as unknown as Parameters<supertest.Test["parse"]>[0];
const outputRow = async (itemId: string) =>
  (
    await stack.database.pool.query<{ id: string; key: string; updated_at: Date }>(
      `select o.id, o.key, o.updated_at from batch_items b join outputs o on o.id = b.output_id where b.id = $1`,
      [itemId],
    )
  ).rows[0]!;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1100" height="600">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="80" y="80" width="420" height="300" fill="#1f5e8c"/><rect x="640" y="90" width="300" height="420" fill="#b5462b"/></svg>`;
  const file = path.join(stack.inbox, "..", "two-labels.tif");
  await fs.writeFile(
    file,
    await sharp(Buffer.from(svg))
      .tiff({ xres: 300 / 25.4, yres: 300 / 25.4 })
      .toBuffer(),
  );
  const scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId as string;
  await waitFor(
    "the split",
    async () => ((await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === 2 ? true : null),
    45_000,
  );
  expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
  pieces = await waitFor(
    "the masters",
    async () => {
      const list = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
      return list.length === 2 && list.every((f) => f.renderState === "done") ? list.sort((a, b) => a.position - b.position) : null;
    },
    90_000,
  );
  const pdf = await operator.post("/api/presets").send({
    name: "Card PDF",
    settings: {
      kind: "print",
      name: "Card PDF",
      paper: { size: "letter" },
      layout: { mode: "area", widthIn: 8, heightIn: 10 },
      printDpi: 300,
      scale: { mode: "fit" },
      output: "pdf",
    },
  });
  expect(pdf.status, JSON.stringify(pdf.body)).toBe(201);
  const wall = await operator
    .post("/api/presets")
    .send({ name: "wall", settings: { kind: "mockup", name: "wall", width: 600, height: 600 } });
  expect(wall.status, JSON.stringify(wall.body)).toBe(201);
  const presets = (await operator.get("/api/presets")).body.presets as { id: string; name: string }[];
  const ids = ["web", "print-a4", "Card PDF", "wall"].map((n) => presets.find((p) => p.name === n)!.id);
  const made = await operator
    .post("/api/batches")
    .send({ name: "Pictures", selection: { fragmentIds: pieces.map((p) => p.id) }, presetIds: ids });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  batch = await waitFor(
    "the batch",
    async () => {
      const d = (await operator.get(`/api/batches/${made.body.batch.id}`)).body as Detail;
      return d.batch.finishedAt ? d : null;
    },
    120_000,
  );
  expect(batch.items.every((i) => i.state === "done")).toBe(true);
}, 240_000);
afterAll(async () => {
  await stack?.stop();
});

describe("one output of a batch", () => {
  it("a piece's web copy has its small picture made by the worker with its master, before anyone asks; a batch output's waits to be looked at", async () => {
    // Nothing has asked the web server for a picture yet: whatever is in the library, the worker made.
    for (const piece of pieces) {
      const { rows } = await stack.database.pool.query<{ id: string; updated_at: Date }>(
        `select id, updated_at from outputs where fragment_id = $1 and kind = 'web'`,
        [piece.id],
      );
      const key = outputThumbKey(rows[0]!.id, rows[0]!.updated_at);
      expect(await stack.library.exists(key)).toBe(true);
      const meta = await sharp(stack.libraryPath(key)).metadata();
      expect(Math.max(meta.width!, meta.height!)).toBeLessThanOrEqual(OUTPUT_THUMB_EDGE);
      expect(await stack.library.exists(outputThumbKey(rows[0]!.id, rows[0]!.updated_at, 1024))).toBe(false);
    }
    // Batch outputs are many and mostly never looked at one by one (the page loads pictures as
    // they scroll into view): theirs are made on the first ask, not by the batch.
    for (const item of batch.items) {
      const row = await outputRow(item.id);
      expect(await stack.library.exists(outputThumbKey(row.id, row.updated_at)), `${item.preset} ${item.position}`).toBe(false);
    }
  });

  it("downloads as its own file, byte for byte, under the name the batch shows", async () => {
    for (const preset of ["web", "print-a4", "Card PDF"]) {
      const item = itemOf(preset);
      const res = await viewer.get(url(item, "file")).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      const row = await outputRow(item.id);
      expect(sha(res.body as Buffer)).toBe(sha(await fs.readFile(stack.libraryPath(row.key))));
      // RFC 6266: the name as a token, or quoted when it needs to be.
      expect(res.headers["content-disposition"]).toMatch(new RegExp(`^attachment; filename="?${item.fileName!.replace(/[.]/g, "\\.")}"?$`));
    }
  });

  it("is shown as a picture of the file itself, no larger than the thumbnail edge", async () => {
    for (const preset of ["web", "print-a4"]) {
      const item = itemOf(preset);
      const res = await viewer.get(url(item, "thumb")).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      expect(res.headers["content-type"]).toBe("image/jpeg");
      const meta = await sharp(res.body as Buffer).metadata();
      expect(meta.format).toBe("jpeg");
      expect(Math.max(meta.width!, meta.height!)).toBe(Math.min(OUTPUT_THUMB_EDGE, Math.max(item.pixelWidth!, item.pixelHeight!)));
      // Same shape as the file (to the pixel the rounding allows).
      expect(Math.abs(meta.width! / meta.height! - item.pixelWidth! / item.pixelHeight!)).toBeLessThan(0.01);
      // Its colour is the file's: the mean of each channel within 3 levels of the file's own.
      const row = await outputRow(item.id);
      const a = (await sharp(res.body as Buffer).stats()).channels.slice(0, 3).map((c) => c.mean);
      const b = (await sharp(stack.libraryPath(row.key)).flatten({ background: "#ffffff" }).stats()).channels
        .slice(0, 3)
        .map((c) => c.mean);
      for (let k = 0; k < 3; k++) expect(Math.abs(a[k]! - b[k]!)).toBeLessThan(3);
    }
    // The larger look: 1024 px on the long edge (never more than the file); no other size.
    const a4 = itemOf("print-a4");
    const large = await viewer
      .get(`${url(a4, "thumb")}?edge=1024`)
      .buffer(true)
      .parse(binary);
    expect(large.status).toBe(200);
    const lm = await sharp(large.body as Buffer).metadata();
    expect(Math.max(lm.width!, lm.height!)).toBe(1024);
    const odd = await viewer.get(`${url(a4, "thumb")}?edge=500`);
    expect(odd.status).toBe(400);
    expect(odd.body.error.message).toBe("edge: Expected an edge of 320 or 1024 pixels");
    // The mock-up's picture is square like the mock-up.
    const m = itemOf("wall");
    const meta = await sharp((await viewer.get(url(m, "thumb")).buffer(true).parse(binary)).body as Buffer).metadata();
    expect(meta.width).toBe(meta.height);
  });

  it("keeps its picture: made once, then sent from the library; the tidy counts it as in use", async () => {
    const item = itemOf("web", 2);
    expect((await viewer.get(url(item, "thumb"))).status).toBe(200);
    const row = await outputRow(item.id);
    const key = outputThumbKey(row.id, row.updated_at);
    const first = await fs.stat(stack.libraryPath(key));
    expect((await viewer.get(url(item, "thumb"))).status).toBe(200);
    expect((await fs.stat(stack.libraryPath(key))).mtimeMs).toBe(first.mtimeMs);
    const report = await tidyLibrary(stack.db, stack.library, { dryRun: true, graceHours: 0 });
    expect(report.folders.find((f) => f.folder === "thumbs/")?.leftOver ?? 0).toBe(0);
    // (the larger look made above is in use too)
    expect(report.folders.find((f) => f.folder === "thumbs/")!.files).toBeGreaterThanOrEqual(2);
    // A picture of an output no row names any more is a left-over.
    await fs.copyFile(stack.libraryPath(key), stack.libraryPath(outputThumbKey(row.id, new Date(0))));
    const again = await tidyLibrary(stack.db, stack.library, { dryRun: true, graceHours: 0 });
    expect(again.folders.find((f) => f.folder === "thumbs/")?.leftOver).toBe(1);
  });

  it("a piece's own web copy is shown the same way on the approved work, as made after its recipe", async () => {
    const piece = pieces[1]!;
    const f = (await viewer.get(`/api/fragments/${piece.id}`)).body.fragment as Fragment;
    const web = f.outputs.find((o) => o.kind === "web")!;
    expect(web.updatedAt).toMatch(/^\d{4}-\d\d-\d\dT/);
    const res = await viewer.get(`/api/fragments/${piece.id}/outputs/web/thumb`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    const meta = await sharp(res.body as Buffer).metadata();
    expect(Math.max(meta.width!, meta.height!)).toBe(Math.min(OUTPUT_THUMB_EDGE, Math.max(web.width, web.height)));
    const key = (
      await stack.database.pool.query<{ key: string }>(`select key from outputs where fragment_id = $1 and kind = 'web'`, [piece.id])
    ).rows[0]!.key;
    const a = (await sharp(res.body as Buffer).stats()).channels.slice(0, 3).map((c) => c.mean);
    const b = (await sharp(stack.libraryPath(key)).stats()).channels.slice(0, 3).map((c) => c.mean);
    for (let k = 0; k < 3; k++) expect(Math.abs(a[k]! - b[k]!)).toBeLessThan(3);
  });

  it("is made once when asked for many times at once, and past a full queue the server says it is busy", async () => {
    const item = itemOf("print-a4", 2);
    const row = await outputRow(item.id);
    const out = { id: row.id, key: row.key, format: "tiff", updatedAt: new Date(Date.UTC(2026, 0, 1)) };
    // A library that counts the pictures written and holds each decode until released.
    let writes = 0;
    let release!: () => void;
    const gate = new Promise<void>((r) => (release = r));
    const library: Storage = Object.create(stack.library, {
      writeAtomic: { value: (k: string, fn: (tmp: string) => Promise<void>) => ((writes += 1), stack.library.writeAtomic(k, fn)) },
      withLocalFile: { value: async <T>(k: string, fn: (p: string) => Promise<T>) => (await gate, stack.library.withLocalFile(k, fn)) },
    });
    const same = Array.from({ length: 5 }, () => outputThumb(library, out, { maxPixels: 5e8 }));
    // Other pictures fill the two makers and the queue behind them; the next one is refused at once.
    const others = Array.from({ length: MAX_WAITING + 1 }, (_, i) =>
      outputThumb(library, { ...out, id: crypto.randomUUID(), updatedAt: new Date(i) }, { maxPixels: 5e8 }),
    );
    await expect.poll(picturesInHand).toBe(2 + MAX_WAITING);
    await expect(outputThumb(library, { ...out, id: crypto.randomUUID() }, { maxPixels: 5e8 })).rejects.toMatchObject({ status: 503 });
    release();
    const keys = await Promise.all(same);
    await Promise.all(others);
    expect(new Set(keys)).toEqual(new Set([outputThumbKey(out.id, out.updatedAt)]));
    expect(writes).toBe(1 + MAX_WAITING + 1);
  });

  it("says a PDF has no picture, and a file not in the batch or not visible is not found", async () => {
    const res = await viewer.get(url(itemOf("Card PDF"), "thumb"));
    expect(res.status).toBe(404);
    expect(res.body.error.message).toBe("A PDF has no picture here; download it to look at it.");
    // A file gone from the library: not found, and that answer is not kept by the browser.
    const wall = itemOf("wall", 2);
    await fs.rm(stack.libraryPath((await outputRow(wall.id)).key));
    for (const what of ["thumb", "file"] as const) {
      const gone = await viewer.get(url(wall, what));
      expect(gone.status).toBe(404);
      expect(String(gone.headers["cache-control"] ?? "")).not.toMatch(/max-age/);
    }
    const other = await viewer.get(`/api/batches/${batch.batch.id}/items/${crypto.randomUUID()}/file`);
    expect(other.status).toBe(404);
    expect((await viewer.get(`/api/batches/${batch.batch.id}/items/not-an-id/thumb`)).status).toBe(400);
    expect((await stack.agent().get(url(itemOf("web"), "file"))).status).toBe(401);
    // A piece no longer approved: a viewer no longer gets its files; an operator still does.
    await stack.database.pool.query(`update fragments set status = 'rejected' where id = $1`, [pieces[0]!.id]);
    expect((await viewer.get(url(itemOf("web", 1), "file"))).status).toBe(404);
    expect((await viewer.get(url(itemOf("web", 1), "thumb"))).status).toBe(404);
    expect((await operator.get(url(itemOf("web", 1), "file"))).status).toBe(200);
    expect((await viewer.get(`/api/fragments/${pieces[0]!.id}/outputs/web/thumb`)).status).toBe(404);
    // A picture made already stands for its file: the file gone, the picture is not shown either.
    const web = (
      await stack.database.pool.query<{ id: string; key: string; updated_at: Date }>(
        `select id, key, updated_at from outputs where fragment_id = $1 and kind = 'web'`,
        [pieces[1]!.id],
      )
    ).rows[0]!;
    expect(await stack.library.exists(outputThumbKey(web.id, web.updated_at))).toBe(true);
    await fs.rm(stack.libraryPath(web.key));
    expect((await viewer.get(`/api/fragments/${pieces[1]!.id}/outputs/web/thumb`)).status).toBe(404);
  });
});
