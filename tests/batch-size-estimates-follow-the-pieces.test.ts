import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { measureEstimates } from "../scripts/bench/estimate";
import { busyness, estimateOutputBytes } from "../server/services/output-estimate";
import { presetSchema } from "../shared/schemas/presets";

let dir: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "platen-estimate-test-"));
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

// The estimate is ours (a review figure, not a promise): what it must do is land near what the
// worker really writes. Checked against files made by the worker's own code from invented pieces.
describe("the batch size estimate", () => {
  for (const kind of ["flat", "smooth", "grainy"] as const) {
    it(`is within 2.5× of every output made from a ${kind} piece, and within 1.5× of their sum`, async () => {
      const { rows } = await measureEstimates(kind, 1200, 900, dir);
      for (const r of rows) {
        const ratio = r.estimate / r.actual;
        expect(ratio, `${r.preset}: estimate ${r.estimate} B, made ${r.actual} B`).toBeGreaterThan(1 / 2.5);
        expect(ratio, `${r.preset}: estimate ${r.estimate} B, made ${r.actual} B`).toBeLessThan(2.5);
      }
      const sum = (k: "actual" | "estimate") => rows.reduce((n, r) => n + r[k], 0);
      expect(sum("estimate") / sum("actual")).toBeGreaterThan(1 / 1.5);
      expect(sum("estimate") / sum("actual")).toBeLessThan(1.5);
    }, 60_000);
  }

  it("follows the preset's pixels: a web copy at twice the long edge is about four times the bytes", () => {
    const m = { width: 4000, height: 3000, dpi: 600, bytes: 4000 * 3000 * 3 * 0.7, bitDepth: 8, hasAlpha: false };
    const web = (longEdge: number) => presetSchema.parse({ kind: "web", name: "w", size: { mode: "longEdge", longEdge } });
    const ratio = estimateOutputBytes(m, web(2000)) / estimateOutputBytes(m, web(1000));
    expect(ratio).toBeGreaterThan(3.9);
    expect(ratio).toBeLessThan(4.1);
    // An uncompressed master is its raw pixels: 4000 × 3000 × 3 bytes.
    expect(estimateOutputBytes(m, presetSchema.parse({ kind: "master", name: "m", compression: "none", bitDepth: 8 }))).toBe(36_000_000);
    // A master not made yet has no size of its own: a typical piece's ratio (0.7) of its raw bytes.
    expect(estimateOutputBytes({ ...m, bytes: 0 }, presetSchema.parse({ kind: "master", name: "m", bitDepth: 8 }))).toBe(25_200_000);
  });

  it("reads busyness from how well the master compressed, within its bounds", () => {
    expect(busyness({ width: 100, height: 100, dpi: 300, bytes: 15_000, bitDepth: 8, hasAlpha: false })).toBeCloseTo(0.5);
    expect(busyness({ width: 100, height: 100, dpi: 300, bytes: 1, bitDepth: 8, hasAlpha: false })).toBe(0.002);
    expect(busyness({ width: 100, height: 100, dpi: 300, bytes: 1e9, bitDepth: 8, hasAlpha: false })).toBe(1.25);
    // No master yet: a typical piece.
    expect(busyness({ width: 100, height: 100, dpi: 300, bytes: 0, bitDepth: 8, hasAlpha: false })).toBe(0.7);
  });
});
