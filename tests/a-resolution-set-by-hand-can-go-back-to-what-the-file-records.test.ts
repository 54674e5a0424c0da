/**
 * A resolution set by hand can be taken back: the scan keeps what its file records (or that it
 * records none) beside the figure in use, and goes back to it, its approved pieces rendered again
 * at that figure. Masters' resolutions are read back with exifr (npm), TIFF 6.0 XResolution (tag
 * 282); the test files' own resolution is written by sharp (libvips) into TIFF 6.0 XResolution /
 * YResolution with ResolutionUnit 2 (inch), and a PNG written without a pHYs chunk (PNG spec,
 * 11.3.5.3) records none. The migration's fill of older rows is run against this database.
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

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let viewer: supertest.Agent;

/** Two pieces on a light bed; `dpi` written into the TIFF, or a PNG with no resolution at all. */
async function bed(kind: "tiff72" | "png-none", colour: string): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="2200" height="1400">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="180" y="180" width="1000" height="800" fill="${colour}"/>
    <rect x="1450" y="220" width="500" height="700" fill="#2e4a62"/>
  </svg>`;
  const img = sharp(Buffer.from(svg));
  return kind === "tiff72"
    ? img.tiff({ compression: "lzw", xres: 72 / 25.4, yres: 72 / 25.4, resolutionUnit: "inch" }).toBuffer()
    : withoutPhys(await img.png().toBuffer());
}

/**
 * libvips writes a pHYs chunk into every PNG; this takes it out. PNG spec 5.2–5.3: an 8-byte
 * signature, then chunks of length (4, big-endian), type (4), data, CRC (4) over type and data,
 * so dropping a whole chunk leaves every other chunk's CRC valid.
 */
function withoutPhys(png: Buffer): Buffer {
  const parts = [png.subarray(0, 8)];
  for (let at = 8; at < png.length;) {
    const size = 12 + png.readUInt32BE(at);
    if (png.toString("latin1", at + 4, at + 8) !== "pHYs") parts.push(png.subarray(at, at + size));
    at += size;
  }
  const out = Buffer.concat(parts);
  expect(out.includes(Buffer.from("pHYs"))).toBe(false);
  return out;
}

async function upload(name: string, bytes: Buffer): Promise<string> {
  return (await uploadScan(operator, { name, bytes, pieces: 2 })).scanId;
}

const scanOf = async (id: string) => (await operator.get(`/api/scans/${id}`)).body.scan;
const fragmentsOf = async (id: string) => (await operator.get(`/api/scans/${id}/fragments`)).body.fragments as Fragment[];

/** The current masters of a scan's pieces, once every one is made at `dpi` for its revision. */
async function mastersAt(scanId: string, dpi: number) {
  return waitFor(
    `masters at ${dpi} DPI`,
    async () => {
      const list = await fragmentsOf(scanId);
      if (!list.every((f) => f.renderState === "done")) return null;
      const { rows } = await stack.database.pool.query<{ key: string; dpi: number; revision: number; fragment_revision: number }>(
        `select o.key, o.dpi, o.revision, f.revision as fragment_revision from outputs o
         join fragments f on f.id = o.fragment_id
        where f.scan_id = $1 and o.kind = 'master' and o.revision = f.revision`,
        [scanId],
      );
      return rows.length === 2 && rows.every((r) => r.dpi === dpi) ? rows : null;
    },
    60_000,
  );
}

const resolutionAudits = async (scanId: string) =>
  (
    await stack.database.pool.query<{ summary: string; before: Record<string, unknown>; after: Record<string, unknown> }>(
      "select summary, before, after from audit_events where action = 'scan.resolution' and subject_id = $1 order by id",
      [scanId],
    )
  ).rows;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
});
afterAll(async () => {
  await stack?.stop();
});

describe("a file that records a wrong figure", () => {
  let scanId: string;
  beforeAll(async () => {
    scanId = await upload("says-72.tif", await bed("tiff72", "#8e44ad"));
    expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
    await mastersAt(scanId, 72);
  });

  it("shows what the file records beside the figure in use", async () => {
    const scan = await scanOf(scanId);
    expect(scan.dpi).toEqual({ x: 72, y: 72, source: "embedded", origin: "tiff" });
    expect(scan.fileDpi).toEqual({ x: 72, y: 72, origin: "tiff" });
  });

  it("keeps the file's figure when one is set by hand", async () => {
    const res = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 600 });
    expect(res.status).toBe(200);
    expect(res.body.scan.dpi).toMatchObject({ x: 600, source: "set", origin: null });
    expect(res.body.scan.fileDpi).toEqual({ x: 72, y: 72, origin: "tiff" });
    for (const m of await mastersAt(scanId, 600)) {
      expect((await exifr.parse(stack.libraryPath(m.key), { tiff: true, pick: ["XResolution"] })).XResolution).toBe(600);
    }
  });

  it("only an operator who is signed in may go back", async () => {
    expect((await viewer.delete(`/api/scans/${scanId}/resolution`)).status).toBe(403);
    expect((await stack.agent().delete(`/api/scans/${scanId}/resolution`)).status).toBe(401);
    expect((await scanOf(scanId)).dpi.source).toBe("set");
    const missing = await operator.delete("/api/scans/00000000-0000-4000-8000-000000000000/resolution");
    expect(missing.status).toBe(404);
  });

  it("goes back to the file's figure: new revisions, masters at 72 DPI again, the change audited", async () => {
    const before = new Map((await fragmentsOf(scanId)).map((f) => [f.id, f.revision]));
    const res = await operator.delete(`/api/scans/${scanId}/resolution`);
    expect(res.status).toBe(200);
    expect(res.body.scan.dpi).toEqual({ x: 72, y: 72, source: "embedded", origin: "tiff" });
    for (const f of await fragmentsOf(scanId)) expect(f.revision).toBe(before.get(f.id)! + 1);
    for (const m of await mastersAt(scanId, 72)) {
      expect((await exifr.parse(stack.libraryPath(m.key), { tiff: true, pick: ["XResolution"] })).XResolution).toBe(72);
    }
    const audits = await resolutionAudits(scanId);
    expect(audits).toHaveLength(2);
    expect(audits[1]!.summary).toMatch(
      /^Put says-72\.tif back to the resolution its file records, 72 DPI \(was 600 DPI, set\); 2 approved pieces rendered again$/,
    );
    expect(audits[1]!.before).toMatchObject({ dpiX: 600, dpiSource: "set" });
    expect(audits[1]!.after).toEqual({ dpiX: 72, dpiY: 72, dpiSource: "embedded", resolutionOrigin: "tiff" });
  });

  it("going back again changes nothing: no revision, no render, no audit row", async () => {
    const before = new Map((await fragmentsOf(scanId)).map((f) => [f.id, f.revision]));
    const res = await operator.delete(`/api/scans/${scanId}/resolution`);
    expect(res.status).toBe(200);
    expect(res.body.scan.dpi.source).toBe("embedded");
    for (const f of await fragmentsOf(scanId)) {
      expect(f.revision).toBe(before.get(f.id));
      expect(f.renderState).toBe("done");
    }
    expect(await resolutionAudits(scanId)).toHaveLength(2);
  });
});

describe("a file that records none", () => {
  let scanId: string;
  beforeAll(async () => {
    scanId = await upload("says-nothing.png", await bed("png-none", "#c0392b"));
  });

  it("goes back to the studio's assumed resolution as it is now", async () => {
    const scan = await scanOf(scanId);
    expect(scan.dpi).toMatchObject({ source: "assumed", x: 300 });
    expect(scan.fileDpi).toEqual({ x: null, y: null, origin: null });
    expect((await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 1200 })).status).toBe(200);
    expect((await admin.patch("/api/studio/settings").send({ defaultDpi: 400 })).status).toBe(200);
    const res = await operator.delete(`/api/scans/${scanId}/resolution`);
    expect(res.status).toBe(200);
    expect(res.body.scan.dpi).toEqual({ x: 400, y: 400, source: "assumed", origin: null });
    // Sizes follow: 2200 px at 400 DPI is 5.5 in.
    expect(res.body.scan.physical.widthIn).toBeCloseTo(5.5, 6);
    const audits = await resolutionAudits(scanId);
    expect(audits.at(-1)!.summary).toMatch(
      /^Put says-nothing\.png back to the studio's assumed 400 DPI \(its file records none\) \(was 1200 DPI, set\)$/,
    );
  });
});

describe("the migration that keeps the file's figure", () => {
  it("fills it for scans analysed before, from their resolution or, when set by hand, from the first audit row", async () => {
    const idOf = async (name: string) =>
      (await stack.database.pool.query<{ id: string }>("select id from scans where original_name = $1", [name])).rows[0]!.id;
    const tif = await idOf("says-72.tif");
    const png = await idOf("says-nothing.png");
    // As a database from before the migration had them: no file figures; the TIFF set by hand.
    await stack.database.pool.query("update scans set file_dpi_x = null, file_dpi_y = null, file_resolution_origin = null");
    await stack.database.pool.query(
      "update scans set dpi_x = 600, dpi_y = 600, dpi_source = 'set', resolution_origin = null where id = $1",
      [tif],
    );
    const sql = await fs.readFile(path.join(import.meta.dirname, "..", "drizzle", "0014_scan_file_resolution.sql"), "utf8");
    const updates = sql
      .split("--> statement-breakpoint")
      .map((s) => s.replace(/^\s*--.*$/gm, "").trim())
      .filter((s) => s.startsWith("UPDATE"));
    expect(updates).toHaveLength(2);
    for (const statement of updates) await stack.database.pool.query(statement);
    const { rows } = await stack.database.pool.query(
      "select id, file_dpi_x, file_dpi_y, file_resolution_origin from scans where id = any($1) order by original_name = 'says-72.tif' desc",
      [[tif, png]],
    );
    // The TIFF's first audit row says it was 72 DPI embedded, from its TIFF tags.
    expect(rows[0]).toMatchObject({ id: tif, file_dpi_x: 72, file_dpi_y: 72, file_resolution_origin: "tiff" });
    // The PNG's first audit row says "assumed": its file records none.
    expect(rows[1]).toMatchObject({ id: png, file_dpi_x: null, file_dpi_y: null, file_resolution_origin: null });
  });
});
