/**
 * A resolution an operator sets, and the studio's rights, in the cases the first tests of them
 * leave out: figures the form accepts (two decimals, square pixels only), the file's own figure
 * confirmed (nothing to make again), a copyright change that mock-ups do not carry (they are
 * reused), and pieces merged away while the resolution changed (they come back rendered
 * at the new figure, not with their old masters). Master resolutions are read back with exifr
 * (npm), TIFF 6.0 XResolution (282).
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
import { setResolutionBody } from "../shared/schemas/scans";
import { splitScan } from "../worker/pipeline/split";
import { formatSplit } from "../worker/cli/split";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let scanId: string;
let bedFile: string;

/** Two pieces drawn at 600 DPI but saved as if 72 (a program that knew no resolution). */
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

/** Master rows of the scan's pieces, with the piece's own revision beside. */
async function masters() {
  const { rows } = await stack.database.pool.query<{
    key: string;
    dpi: number;
    revision: number;
    fragment_revision: number;
    fragment_id: string;
  }>(
    `select o.key, o.dpi, o.revision, f.revision as fragment_revision, o.fragment_id from outputs o
       join fragments f on f.id = o.fragment_id
      where f.scan_id = $1 and o.kind = 'master' and f.merged_into is null order by f.position`,
    [scanId],
  );
  return rows;
}

let presets: PresetSummary[];
const body = () => ({
  selection: { filter: { scanId } },
  presetIds: [presets.find((p) => p.name === "web")!.id, presets.find((p) => p.name === "wall")!.id],
});
const estimate = async () => (await operator.post("/api/batches/estimate").send(body())).body as { outputs: number; reused: number };
async function runBatch() {
  const res = await operator.post("/api/batches").send(body());
  expect(res.status).toBe(201);
  return waitFor(
    "the batch",
    async () => {
      const r = (await operator.get(`/api/batches/${res.body.batch.id}`)).body;
      return r.batch.finishedAt ? r : null;
    },
    60_000,
  );
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  bedFile = path.join(stack.inbox, "..", "wrong-dpi-pair.tif");
  const bytes = await wrongDpiBed();
  await fs.writeFile(bedFile, bytes);
  ({ scanId } = await uploadScan(operator, { name: path.basename(bedFile), bytes, pieces: 2 }));
  // A mock-up carries no metadata at all (print files carry the rights, as masters do).
  const wall = await operator
    .post("/api/presets")
    .send({ name: "wall", settings: { kind: "mockup", name: "wall", width: 400, height: 400 } });
  expect(wall.status).toBe(201);
  presets = (await operator.get("/api/presets")).body.presets as PresetSummary[];
});
afterAll(async () => {
  await stack?.stop();
});

describe("figures a person may set", () => {
  it("takes any figure of at most two decimals, though most are not exact in binary", () => {
    // 64.1 × 100 = 6409.999999999999 in IEEE 754 doubles; 300.1 and 1199.99 likewise are not exact.
    for (const x of [64.1, 300.1, 1199.99, 2400.07, 600]) expect(setResolutionBody.safeParse({ x }).success, String(x)).toBe(true);
    expect(setResolutionBody.safeParse({ x: 600.123 }).success).toBe(false);
  });

  it("refuses two different figures across and down, which no piece could be rendered from, and changes nothing", async () => {
    const res = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 600, y: 1200 });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatchObject({ field: "y", message: expect.stringMatching(/same resolution across and down/) });
    // Within the render's tolerance (0.5 %) the two count as one.
    expect(setResolutionBody.safeParse({ x: 600, y: 601 }).success).toBe(true);
    expect((await operator.get(`/api/scans/${scanId}`)).body.scan.dpi).toMatchObject({ x: 72, y: 72, source: "embedded" });
  });
});

describe("after the masters and copies are made", () => {
  let revisions: Map<string, number>;

  beforeAll(async () => {
    expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
    const list = await waitFor(
      "the masters",
      async () => {
        const l = await fragmentsOf(scanId);
        return l.every((f) => f.status === "approved" && f.renderState === "done") ? l : null;
      },
      60_000,
    );
    revisions = new Map(list.map((f) => [f.id, f.revision]));
    const first = await runBatch();
    expect(first.batch.counts).toMatchObject({ done: 4, failed: 0 });
  });

  it("confirming the file's own figure marks it set, and renders nothing again: the copies stay reusable", async () => {
    expect(await estimate()).toMatchObject({ outputs: 4, reused: 4 });
    const res = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 72 });
    expect(res.status).toBe(200);
    expect(res.body.scan.dpi).toMatchObject({ x: 72, y: 72, source: "set" });
    const list = await fragmentsOf(scanId);
    for (const f of list) {
      expect(f.revision).toBe(revisions.get(f.id));
      expect(f.renderState).toBe("done");
    }
    expect(await estimate()).toMatchObject({ outputs: 4, reused: 4 });
    const { rows } = await stack.database.pool.query("select summary from audit_events where action = 'scan.resolution'");
    expect(rows).toHaveLength(1);
    expect(rows[0].summary).toMatch(/to 72 DPI \(was 72 DPI, embedded\)$/);
  });

  it("a copyright line remakes the web copies, which carry it, and reuses the mock-ups, which do not", async () => {
    expect((await admin.patch("/api/studio/settings").send({ copyright: "© 2026 Ada Reyes" })).status).toBe(200);
    // Two web copies to make again; the two mock-ups carry no rights.
    expect(await estimate()).toMatchObject({ outputs: 4, reused: 2 });
    const before = (await stack.database.pool.query("select count(*)::int as n from outputs where kind = 'preset'")).rows[0].n;
    const second = await runBatch();
    expect(second.batch.counts).toMatchObject({ done: 4, failed: 0 });
    const after = (await stack.database.pool.query("select count(*)::int as n from outputs where kind = 'preset'")).rows[0].n;
    expect(after - before).toBe(2);
  });

  it("pieces merged away while the resolution changes come back rendered at the new figure, not with their old masters", async () => {
    const ids = [...revisions.keys()];
    // From a settled scan: every master made, of its piece's revision.
    await waitFor(
      "settled masters",
      async () => {
        const m = await masters();
        const list = await fragmentsOf(scanId);
        return list.every((f) => f.renderState === "done") && m.length === 2 && m.every((r) => r.revision === r.fragment_revision)
          ? true
          : null;
      },
      30_000,
    );
    const atMerge = new Map((await fragmentsOf(scanId)).map((f) => [f.id, f.revision]));
    const merged = await operator.post("/api/fragments/merge").send({ ids });
    expect(merged.status).toBe(201);
    const res = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 600 });
    expect(res.status).toBe(200);
    const { rows: away } = await stack.database.pool.query<{ id: string; revision: number }>(
      "select id, revision from fragments where merged_into is not null",
    );
    expect(away).toHaveLength(2);
    for (const r of away) expect(r.revision).toBeGreaterThan(atMerge.get(r.id)!);

    const back = await operator.post(`/api/fragments/${merged.body.fragment.id}/unmerge`).send({});
    expect(back.status).toBe(200);
    const rows = await waitFor(
      "the returned pieces' masters at 600 DPI",
      async () => {
        const m = await masters();
        const list = await fragmentsOf(scanId);
        const done = list.length === 2 && list.every((f) => f.renderState === "done");
        return done && m.length === 2 && m.every((r) => r.revision === r.fragment_revision && r.dpi === 600) ? m : null;
      },
      30_000,
    );
    for (const m of rows) {
      const tags = await exifr.parse(stack.libraryPath(m.key), { tiff: true, pick: ["XResolution"] });
      expect(tags.XResolution).toBe(600);
    }
    // The batch copies follow the new revision: none of the earlier ones is reused.
    expect(await estimate()).toMatchObject({ outputs: 4, reused: 0 });
  });
});

describe("the command line", () => {
  it("names a set resolution as set, not as the file's", async () => {
    const text = formatSplit(await splitScan(bedFile, { setDpi: { x: 600, y: 600 } }));
    expect(text).toMatch(/resolution +600 DPI, set by hand/);
    expect(text).not.toMatch(/embedded/);
  });
});
