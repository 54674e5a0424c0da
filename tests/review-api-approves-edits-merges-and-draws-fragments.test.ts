import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import supertest from "supertest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";

let stack: Stack;
let operator: supertest.Agent;
let viewer: supertest.Agent;
let scanId: string;

/** A 300 DPI white-lid scan with three well-separated rectangular pieces (invented test data). */
async function threePieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1500" height="1000">
    <rect width="100%" height="100%" fill="#f8f8f5"/>
    <rect x="100" y="120" width="400" height="300" fill="#b33a2e"/>
    <rect x="700" y="150" width="300" height="420" fill="#2d6a4f" transform="rotate(-6 850 360)"/>
    <rect x="200" y="680" width="450" height="250" fill="#283d6b"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

const list = async (agent: supertest.Agent) => (await agent.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

async function rendered(id: string, revision?: number) {
  return waitFor(
    `fragment ${id} to be rendered`,
    async () => {
      const f = (await operator.get(`/api/fragments/${id}`)).body.fragment as Fragment;
      if (f.renderState === "failed") throw new Error(`render failed: ${f.renderError}`);
      return f.renderState === "done" && (revision === undefined || f.revision === revision) && f.outputs.length === 2 ? f : null;
    },
    45_000,
  );
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  const file = path.join(stack.inbox, "three-pieces.tif");
  await fs.writeFile(file, await threePieceScan());
  const up = await operator.post("/api/scans/upload").attach("files", file);
  scanId = up.body.results[0].scanId;
  await waitFor(
    "the scan to be analysed and split",
    async () => {
      const s = (await operator.get(`/api/scans/${scanId}`)).body.scan;
      return s.status === "ready" ? s : null;
    },
    45_000,
  );
});
afterAll(async () => {
  await stack?.stop();
});

describe("reviewing the fragments of a scan", () => {
  it("the split proposes one fragment per piece; viewers see none of them yet", async () => {
    const fragments = await list(operator);
    expect(fragments).toHaveLength(3);
    expect(fragments.every((f) => f.status === "proposed")).toBe(true);
    expect(fragments.map((f) => f.position)).toEqual([1, 2, 3]);
    expect(await list(viewer)).toEqual([]);
    const scan = (await operator.get(`/api/scans/${scanId}`)).body.scan;
    expect(scan.fragments).toEqual({ proposed: 3, total: 3 });
    const queue = (await operator.get("/api/queue")).body;
    expect(queue.review.proposed).toBe(3);
    expect(queue.review.scans).toEqual([{ scanId, originalName: "three-pieces.tif", proposed: 3 }]);
  });

  it("approving renders an upright master with the scan's resolution and a web copy, which viewers can download", async () => {
    const [first] = await list(operator);
    const res = await operator.patch(`/api/fragments/${first!.id}`).send({ status: "approved" });
    expect(res.status).toBe(200);
    const f = await rendered(first!.id);
    const master = f.outputs.find((o) => o.kind === "master")!;
    expect(master.format).toBe("tiff");
    expect(master.dpi).toBeCloseTo(300, 3);
    // The first piece is 400 × 300 px, upright (within a few px of the drawn rectangle).
    expect(Math.abs(master.width - 400)).toBeLessThanOrEqual(4);
    expect(Math.abs(master.height - 300)).toBeLessThanOrEqual(4);

    expect((await list(viewer)).map((x) => x.id)).toEqual([first!.id]);
    const download = await viewer
      .get(`/api/fragments/${first!.id}/outputs/master`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on("data", (c: Buffer) => chunks.push(c));
        r.on("end", () => cb(null, Buffer.concat(chunks)));
      });
    expect(download.status).toBe(200);
    expect(download.headers["content-disposition"]).toContain("three-pieces-01-master.tif");
    // TIFF 6.0 Section 8: XResolution (282) with ResolutionUnit (296) = 2, inches.
    const tags = await exifr.parse(download.body as Buffer, { tiff: true, pick: ["XResolution", "ResolutionUnit"] });
    expect(tags.XResolution).toBeCloseTo(300, 3);
    expect(tags.ResolutionUnit).toBe("inches");
    expect((await viewer.get(`/api/fragments/${first!.id}/outputs/web`)).status).toBe(200);
    expect((await viewer.get(`/api/fragments/${first!.id}/thumb`)).headers["content-type"]).toBe("image/jpeg");
  });

  it("an edit to an approved fragment is reflected in the next render", async () => {
    const [first] = await list(operator);
    const rect = { ...first!.rect, width: first!.rect.width - 100 };
    const res = await operator.patch(`/api/fragments/${first!.id}`).send({ rect });
    expect(res.status).toBe(200);
    expect(res.body.fragment.revision).toBe(first!.revision + 1);
    expect(res.body.fragment.edited).toBe(true);
    const f = await rendered(first!.id, first!.revision + 1);
    expect(Math.abs(f.outputs.find((o) => o.kind === "master")!.width - rect.width)).toBeLessThanOrEqual(2);
  });

  it("reset goes back to the split's proposal", async () => {
    const [first] = await list(operator);
    const res = await operator.post(`/api/fragments/${first!.id}/reset`);
    expect(res.body.fragment.status).toBe("proposed");
    expect(res.body.fragment.edited).toBe(false);
    expect(res.body.fragment.rect.width).toBeCloseTo(first!.rect.width + 100, 5);
  });

  it("validates edits and refuses viewers", async () => {
    const [first] = await list(operator);
    let res = await operator.patch(`/api/fragments/${first!.id}`).send({ angle: 60 });
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({ code: "bad_request", message: "angle: Expected an angle of at most 45°", field: "angle" });
    res = await operator.patch(`/api/fragments/${first!.id}`).send({ rect: { cx: 1400, cy: 900, width: 600, height: 600 } });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toBe("The fragment's rectangle reaches outside the scan (1500 × 1000 px).");
    res = await operator.patch(`/api/fragments/${first!.id}`).send({});
    expect(res.status).toBe(400);
    res = await viewer.patch(`/api/fragments/${first!.id}`).send({ status: "approved" });
    expect(res.status).toBe(403);
    res = await operator.post("/api/fragments/merge").send({ ids: [first!.id] });
    expect(res.body.error.message).toBe("ids: Expected at least two fragments to merge");
  });

  it("merges two fragments into one and takes the merge back", async () => {
    const before = await list(operator);
    const res = await operator.post("/api/fragments/merge").send({ ids: [before[0]!.id, before[1]!.id] });
    expect(res.status).toBe(201);
    const merged = res.body.fragment as Fragment;
    expect(merged.origin).toBe("merged");
    expect(merged.mergedFrom.sort()).toEqual([before[0]!.id, before[1]!.id].sort());
    // The merged box holds both boxes.
    for (const f of before.slice(0, 2)) {
      expect(merged.box.x).toBeLessThanOrEqual(f.box.x);
      expect(merged.box.x + merged.box.width).toBeGreaterThanOrEqual(f.box.x + f.box.width);
    }
    expect(await list(operator)).toHaveLength(2);
    const back = await operator.post(`/api/fragments/${merged.id}/unmerge`);
    expect(back.status).toBe(200);
    expect((back.body.fragments as Fragment[]).map((f) => f.id).sort()).toEqual(before.map((f) => f.id).sort());
  });

  it("draws a fragment the split missed", async () => {
    const res = await operator
      .post(`/api/scans/${scanId}/fragments`)
      .send({ rect: { cx: 1300, cy: 850, width: 200, height: 120 }, angle: 0 });
    expect(res.status).toBe(201);
    expect(res.body.fragment).toMatchObject({
      origin: "drawn",
      status: "proposed",
      shape: "rectangle",
      box: { x: 1200, y: 790, width: 200, height: 120 },
    });
    expect(await list(operator)).toHaveLength(4);
  });

  it("approving the rest leaves nothing to review, and a new split keeps what was approved", async () => {
    const res = await operator.post(`/api/scans/${scanId}/approve-remaining`);
    expect((res.body.fragments as Fragment[]).every((f) => f.status === "approved")).toBe(true);
    expect((await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.proposed).toBe(0);
    expect((await operator.get("/api/queue")).body.review.proposed).toBe(0);

    const again = await operator.post(`/api/scans/${scanId}/resplit`).send({ sensitivity: 0.8 });
    expect(again.status).toBe(200);
    await waitFor(
      "the new split",
      async () => {
        const s = (await operator.get(`/api/scans/${scanId}`)).body.scan;
        return s.status === "ready" ? s : null;
      },
      30_000,
    );
    const after = await list(operator);
    expect(after.filter((f) => f.status === "approved")).toHaveLength(4);
    expect(after.filter((f) => f.status === "proposed")).toHaveLength(0);
  });
});
