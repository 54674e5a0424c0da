/**
 * The studio's creator and copyright (set by an admin) and a resolution an operator sets on a scan
 * whose file says a wrong one reach the files: the masters and the batch copies made after.
 * Each file is read back with two readers that share no code:
 * - exifr (npm) for the TIFF 6.0 / EXIF 2.3 IFD0 fields XResolution (282), ResolutionUnit (296),
 *   Artist (315) and Copyright (33432);
 * - sharp's metadata() (libvips) for the density and the raw XMP packet, whose Dublin Core fields
 *   (ISO 16684-1: dc:creator as rdf:Seq, dc:rights as rdf:Alt) are matched below.
 * TIFF and EXIF ASCII fields are 7-bit (TIFF 6.0 Section 2): "©" is spelled "(C)" there; the XMP
 * keeps the exact text.
 */
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";
import type { PresetSummary } from "../shared/schemas/preset-api";
import { splitScan } from "../worker/pipeline/split";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let viewer: supertest.Agent;
let scanId: string;
let bedFile: string;

const CREATOR = "Mara Ilves";
const COPYRIGHT = "© 2026 Mara Ilves";

/**
 * Two pieces, drawn at 600 DPI but saved as if 72 (a program that knew no resolution wrote its
 * default): 1200 × 900 px = 2 × 1.5 in at 600 DPI, but 16.7 × 12.5 in at 72.
 */
async function wrongDpiBed(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="2600" height="1600">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="200" y="200" width="1200" height="900" fill="#8e44ad"/>
    <rect x="1700" y="240" width="600" height="800" fill="#d35400"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .tiff({ compression: "lzw", xres: 72 / 25.4, yres: 72 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

async function fragmentsOf(id: string): Promise<Fragment[]> {
  return (await operator.get(`/api/scans/${id}/fragments`)).body.fragments as Fragment[];
}

async function rendered(revisions?: Map<string, number>) {
  return waitFor(
    "the masters",
    async () => {
      const list = await fragmentsOf(scanId);
      const done = list.every(
        (f) => f.status === "approved" && f.renderState === "done" && (!revisions || f.revision > revisions.get(f.id)!),
      );
      return done ? list : null;
    },
    60_000,
  );
}

async function masters() {
  const { rows } = await stack.database.pool.query<{ key: string; dpi: number; fragment_id: string }>(
    "select o.key, o.dpi, o.fragment_id from outputs o join fragments f on f.id = o.fragment_id where f.scan_id = $1 and o.kind = 'master' order by f.position",
    [scanId],
  );
  return rows;
}

/** The XMP packet sharp reads from a file, as text. */
async function xmpOf(file: string): Promise<string> {
  const meta = await sharp(file).metadata();
  return meta.xmp ? meta.xmp.toString("utf8") : "";
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  bedFile = path.join(stack.inbox, "wrong-dpi-bed.tif");
  const bytes = await wrongDpiBed();
  await fs.writeFile(bedFile, bytes);
  ({ scanId } = await uploadScan(operator, { name: path.basename(bedFile), bytes, pieces: 2 }));
});
afterAll(async () => {
  await stack?.stop();
});

describe("the studio's settings", () => {
  it("are read by operators, changed only by admins, and bad input is refused with its field", async () => {
    expect((await viewer.get("/api/studio/settings")).status).toBe(403);
    const read = await operator.get("/api/studio/settings");
    expect(read.status).toBe(200);
    expect(read.body.settings).toMatchObject({ name: "Test studio", creator: null, copyright: null });
    expect((await operator.patch("/api/studio/settings").send({ creator: CREATOR })).status).toBe(403);
    expect((await viewer.patch("/api/studio/settings").send({ creator: CREATOR })).status).toBe(403);

    const twoLines = await admin.patch("/api/studio/settings").send({ creator: "Mara\nIlves" });
    expect(twoLines.status).toBe(400);
    expect(twoLines.body.error).toMatchObject({ field: "creator", message: expect.stringMatching(/one line/) });
    const lowDpi = await admin.patch("/api/studio/settings").send({ defaultDpi: 10 });
    expect(lowDpi.status).toBe(400);
    expect(lowDpi.body.error.field).toBe("defaultDpi");
    expect((await admin.patch("/api/studio/settings").send({})).status).toBe(400);
    expect((await admin.patch("/api/studio/settings").send({ colour: "red" })).status).toBe(400);
    expect((await admin.patch("/api/studio/settings").send({ copyright: "x".repeat(301) })).status).toBe(400);
  });

  it("saves creator and copyright, trimmed, with an audit row naming what changed", async () => {
    const res = await admin.patch("/api/studio/settings").send({ creator: `  ${CREATOR} `, copyright: COPYRIGHT });
    expect(res.status).toBe(200);
    expect(res.body.settings).toMatchObject({ creator: CREATOR, copyright: COPYRIGHT, name: "Test studio" });
    // Empty means none.
    const { rows } = await stack.database.pool.query("select before, after, summary from audit_events where action = 'studio.settings'");
    expect(rows).toHaveLength(1);
    expect(rows[0].before).toEqual({ creator: null, copyright: null });
    expect(rows[0].after).toEqual({ creator: CREATOR, copyright: COPYRIGHT });
    expect(rows[0].summary).toMatch(/creator, copyright line/);
    // Saving the same again changes nothing and records nothing.
    await admin.patch("/api/studio/settings").send({ creator: CREATOR });
    expect((await stack.database.pool.query("select 1 from audit_events where action = 'studio.settings'")).rowCount).toBe(1);
  });
});

describe("a scan's resolution", () => {
  it("is refused for viewers, for bad figures, and on a scan that is not ready", async () => {
    expect((await viewer.patch(`/api/scans/${scanId}/resolution`).send({ x: 600 })).status).toBe(403);
    for (const bad of [{ x: 0 }, { x: 49 }, { x: 12_801 }, { x: "600" }, { x: 600.123 }, { x: 600, z: 1 }, {}]) {
      const res = await operator.patch(`/api/scans/${scanId}/resolution`).send(bad);
      expect(res.status, JSON.stringify(bad)).toBe(400);
      expect(res.body.error.message).toMatch(/Expected|Unrecognized key: "z"/);
    }
    const missing = await operator.patch("/api/scans/00000000-0000-4000-8000-000000000000/resolution").send({ x: 600 });
    expect(missing.status).toBe(404);
    // A queued scan is still being read: its figure would be overwritten.
    await stack.database.pool.query("update scans set status = 'queued' where id = $1", [scanId]);
    try {
      const busy = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 600 });
      expect(busy.status).toBe(409);
      expect(busy.body.error.message).toMatch(/still being read/);
    } finally {
      await stack.database.pool.query("update scans set status = 'ready' where id = $1", [scanId]);
    }
  });

  it("is read as the file says at first: 72 DPI, low, and the pieces far too large", async () => {
    const scan = (await operator.get(`/api/scans/${scanId}`)).body.scan;
    expect(scan.dpi).toMatchObject({ x: 72, y: 72, source: "embedded" });
    const big = (await fragmentsOf(scanId)).find((f) => Math.round(f.rect.width) === 1200)!;
    // 1200 px at 72 DPI = 16.667 in (hand-computed).
    expect(big.sizeIn.width).toBeCloseTo(1200 / 72, 2);
  });

  it("set by an operator, moves the scan's and its pieces' sizes, and is on the audit trail with the file's figure", async () => {
    const res = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 600 });
    expect(res.status).toBe(200);
    expect(res.body.scan.dpi).toEqual({ x: 600, y: 600, source: "set", origin: null });
    // 2600 × 1600 px at 600 DPI = 4.333 × 2.667 in = 11.007 × 6.773 cm (1 in = 2.54 cm exactly).
    expect(res.body.scan.physical.widthIn).toBeCloseTo(2600 / 600, 2);
    expect(res.body.scan.physical.heightCm).toBeCloseTo((1600 / 600) * 2.54, 1);
    const big = (await fragmentsOf(scanId)).find((f) => Math.round(f.rect.width) === 1200)!;
    expect(big.sizeIn.width).toBeCloseTo(2, 2);
    expect(big.dpi).toEqual({ x: 600, y: 600, source: "set" });
    const { rows } = await stack.database.pool.query(
      "select before, after, summary from audit_events where action = 'scan.resolution' and subject_id = $1",
      [scanId],
    );
    expect(rows).toHaveLength(1);
    expect(rows[0].before).toMatchObject({ dpiX: 72, dpiY: 72, dpiSource: "embedded", resolutionOrigin: "tiff" });
    expect(rows[0].after).toMatchObject({ dpiX: 600, dpiY: 600, dpiSource: "set" });
    expect(rows[0].summary).toMatch(/to 600 DPI \(was 72 DPI, embedded\)/);
    // The original is never touched: the library's copy still says 72.
    const [{ original_key: key }] = (await stack.database.pool.query("select original_key from scans where id = $1", [scanId])).rows;
    const original = await exifr.parse(stack.libraryPath(key), { tiff: true, pick: ["XResolution"] });
    expect(original.XResolution).toBe(72);
  });

  it("is what the split uses for the scan in place of the file's figure", async () => {
    const plain = await splitScan(bedFile);
    const set = await splitScan(bedFile, { setDpi: { x: 600, y: 600 } });
    expect(plain.dpi).toMatchObject({ x: 72, source: "embedded" });
    expect(set.dpi).toMatchObject({ x: 600, y: 600, source: "set" });
    // The analysis copy is made at 75 DPI from the scan's true resolution: 2600 px × 75 / 600 = 325 px.
    expect(set.analysis.width).toBe(325);
    expect(set.fragments).toHaveLength(2);
  });
});

describe("the files carry them", () => {
  let revisions: Map<string, number>;

  it("masters of approved pieces record the set resolution and the studio's creator and copyright", async () => {
    expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
    const list = await rendered();
    revisions = new Map(list.map((f) => [f.id, f.revision]));
    const rows = await masters();
    expect(rows).toHaveLength(2);
    for (const m of rows) {
      expect(m.dpi).toBe(600);
      const file = stack.libraryPath(m.key);
      const tags = await exifr.parse(file, { tiff: true, xmp: false, pick: ["XResolution", "ResolutionUnit", "Artist", "Copyright"] });
      expect(tags.XResolution).toBe(600);
      expect([2, "inches"]).toContain(tags.ResolutionUnit);
      expect(tags.Artist).toBe(CREATOR);
      expect(tags.Copyright).toBe("(C) 2026 Mara Ilves");
      // Second reader: libvips.
      const meta = await sharp(file).metadata();
      expect(meta.density).toBeCloseTo(600, 0);
      const xmp = await xmpOf(file);
      expect(xmp).toMatch(/<dc:creator><rdf:Seq><rdf:li>Mara Ilves<\/rdf:li><\/rdf:Seq><\/dc:creator>/);
      expect(xmp).toContain(`<rdf:li xml:lang="x-default">${COPYRIGHT}</rdf:li>`);
    }
  });

  it("a new resolution on a rendered scan renders its approved pieces again, at a new revision", async () => {
    const res = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 1200 });
    expect(res.status).toBe(200);
    await rendered(revisions);
    const rows = await masters();
    expect(rows.map((m) => m.dpi)).toEqual([1200, 1200]);
    for (const m of rows) {
      const tags = await exifr.parse(stack.libraryPath(m.key), { tiff: true, pick: ["XResolution"] });
      expect(tags.XResolution).toBe(1200);
    }
    const { rows: audit } = await stack.database.pool.query(
      "select summary from audit_events where action = 'scan.resolution' order by id desc limit 1",
    );
    expect(audit[0].summary).toMatch(/was 600 DPI, set\); 2 approved pieces rendered again/);
  });

  it("batch copies carry the creator and copyright, and a changed copyright makes them anew instead of reusing", async () => {
    const presets = (await operator.get("/api/presets")).body.presets as PresetSummary[];
    const web = presets.find((p) => p.name === "web")!;
    const body = { selection: { filter: { scanId } }, presetIds: [web.id] };
    const run = async () => {
      const res = await operator.post("/api/batches").send(body);
      expect(res.status).toBe(201);
      return waitFor(
        "the batch",
        async () => {
          const r = (await operator.get(`/api/batches/${res.body.batch.id}`)).body;
          return r.batch.finishedAt ? r : null;
        },
        60_000,
      );
    };
    const first = await run();
    expect(first.batch.counts).toMatchObject({ done: 2, failed: 0 });
    const { rows: made } = await stack.database.pool.query(
      "select o.key from outputs o join batch_items i on i.output_id = o.id where i.batch_id = $1",
      [first.batch.id],
    );
    const webBytes = await fs.readFile(stack.libraryPath(made[0].key));
    const exif = await exifr.parse(webBytes, { tiff: true, xmp: false, pick: ["Artist", "Copyright"] });
    expect(exif).toMatchObject({ Artist: CREATOR, Copyright: "(C) 2026 Mara Ilves" });

    expect((await operator.post("/api/batches/estimate").send(body)).body.reused).toBe(2);
    const NEW = "© 2026 Mara Ilves. All rights reserved.";
    expect((await admin.patch("/api/studio/settings").send({ copyright: NEW })).status).toBe(200);
    expect((await operator.post("/api/batches/estimate").send(body)).body.reused).toBe(0);
    const second = await run();
    expect(second.batch.counts).toMatchObject({ done: 2, failed: 0 });
    const { rows } = await stack.database.pool.query(
      "select o.key from outputs o join batch_items i on i.output_id = o.id where i.batch_id = $1",
      [second.batch.id],
    );
    for (const r of rows) {
      const tags = await exifr.parse(stack.libraryPath(r.key), { tiff: true, xmp: false, pick: ["Copyright"] });
      expect(tags.Copyright).toBe("(C) 2026 Mara Ilves. All rights reserved.");
      expect(await xmpOf(stack.libraryPath(r.key))).toContain(NEW);
    }
    // The first batch's copies stand as they were made.
    const { rows: all } = await stack.database.pool.query("select count(*)::int as n from outputs where kind = 'preset'");
    expect(all[0].n).toBe(4);
  });
});
