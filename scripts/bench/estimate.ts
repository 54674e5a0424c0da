/**
 * The batch size estimate against the real thing: each built-in preset (and a mock-up, a PDF print,
 * a WebP copy and a master) made by the worker's own code from flat, smooth and grainy pieces of
 * two sizes, with the estimate beside each size and their ratio. How server/services/output-estimate.ts
 * was calibrated; run it after changing an encoder's settings: `npx tsx scripts/bench/estimate.ts`.
 */
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { outputExtension, renderOutput } from "../../worker/pipeline/output";
import { BUILT_IN_PRESETS, presetSchema, type Preset } from "../../shared/schemas/presets";
import { estimateOutputBytes } from "../../server/services/output-estimate";
import { texturedPiece } from "../../tests/helpers/textured-pieces";

export const ESTIMATE_PRESETS: Record<string, Preset> = {
  ...Object.fromEntries(Object.entries(BUILT_IN_PRESETS).map(([k, v]) => [k, presetSchema.parse(v)])),
  mockup: presetSchema.parse({ kind: "mockup", name: "mock-up" }),
  "print-a4-pdf": presetSchema.parse({ ...BUILT_IN_PRESETS["print-a4"], output: "pdf" }),
  "web-webp": presetSchema.parse({ ...BUILT_IN_PRESETS.web, format: "webp" }),
  master: presetSchema.parse({ kind: "master", name: "master" }),
};

/** Actual and estimated bytes of each preset's output from one piece. */
export async function measureEstimates(kind: "flat" | "smooth" | "grainy", width: number, height: number, dir: string) {
  const file = path.join(dir, `${kind}-${width}x${height}.tif`);
  await texturedPiece(kind, width, height, file);
  const facts = { width, height, dpi: 300, bytes: (await fs.stat(file)).size, bitDepth: 8, hasAlpha: false };
  const rows: { preset: string; actual: number; estimate: number }[] = [];
  for (const [name, preset] of Object.entries(ESTIMATE_PRESETS)) {
    const out = path.join(dir, `out-${kind}-${name}.${outputExtension(preset)}`);
    const made = await renderOutput({ master: file, dpi: 300, title: "Estimate" }, preset, { path: out });
    rows.push({ preset: name, actual: made.bytes, estimate: estimateOutputBytes(facts, preset) });
    await fs.rm(out, { force: true });
  }
  return { master: facts, rows };
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "platen-estimate-"));
  try {
    for (const kind of ["flat", "smooth", "grainy"] as const)
      for (const [w, h] of [
        [1200, 900],
        [2400, 3000],
      ] as const) {
        const { master, rows } = await measureEstimates(kind, w, h, dir);
        console.log(`${kind} ${w} × ${h} px, master ${(master.bytes / 1e3).toFixed(0)} kB`);
        for (const r of rows)
          console.log(
            `  ${r.preset.padEnd(14)} ${(r.actual / 1e3).toFixed(0).padStart(7)} kB  estimate ${(r.estimate / 1e3).toFixed(0).padStart(7)} kB  ×${(r.estimate / r.actual).toFixed(2)}`,
          );
      }
  } finally {
    await fs.rm(dir, { recursive: true, force: true });
  }
}
