/**
 * Recipe cost per megapixel for a typical five-step recipe (white balance from the background,
 * automatic levels, contrast, saturation with vibrance, sharpen), at 8 and 16 bits, as a ratio
 * to a bare sharp copy of the same image: decode the TIFF and encode it again, nothing else.
 * Both sides write the same TIFF: uncompressed (the strict floor: a copy that is almost all
 * memory traffic) and LZW with a predictor (what the master is written as). Target ≤ 3× at 8 bits.
 *
 * `benchRecipe()` returns the figures; run directly (`npx tsx scripts/bench/recipe.ts [--runs N]
 * [--megapixels M]`) it prints them as a table. Medians over the runs; the first run of each
 * kind is a warm-up and not counted.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import type { RecipeInput } from "../../shared/schemas/recipes";
import { compileRecipe, sharpFromRaw, toRaw } from "../../worker/pipeline/colour/index";

/** The typical recipe the figure is for. */
export const TYPICAL_RECIPE: RecipeInput = {
  name: "typical",
  steps: [
    { type: "whiteBalance", mode: "background" },
    { type: "levels", mode: "auto", clip: 0.005 },
    { type: "contrast", amount: 0.2 },
    { type: "saturation", saturation: 0.1, vibrance: 0.3 },
    { type: "sharpen", radiusMm: 0.1, amount: 0.8, threshold: 0.01 },
  ],
};

export interface RecipeBenchRow {
  bitDepth: 8 | 16;
  compression: "none" | "lzw";
  megapixels: number;
  /** Median milliseconds per megapixel. */
  floorMsPerMp: number;
  recipeMsPerMp: number;
  /** recipe / floor, wall-clock time. */
  ratio: number;
  /** recipe / floor in CPU time (all threads): steadier than wall time on a busy machine. */
  cpuRatio: number;
  /** The recipe alone on decoded pixels (no decode, no encode), ms per MP. */
  applyMsPerMp: number;
}

const TIFF = {
  none: { compression: "none" },
  lzw: { compression: "lzw", predictor: "horizontal" },
} as const;

/** A photo-like test image: smooth colour fields, an edge grid and grain, with a warm cast. */
async function testImage(file: string, width: number, height: number, depth: 8 | 16): Promise<void> {
  if (fs.existsSync(file)) return;
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const data = new Uint8Array(width * height * 3);
  let s = 1;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      s = (s * 1664525 + 1013904223) >>> 0;
      const grain = ((s >>> 24) - 128) / 16;
      const o = (y * width + x) * 3;
      const edge = ((x >> 7) + (y >> 7)) % 2 === 0 ? 20 : 0;
      data[o] = Math.max(0, Math.min(255, 140 + 80 * Math.sin(x / 211 + y / 503) + edge + grain + 8));
      data[o + 1] = Math.max(0, Math.min(255, 125 + 75 * Math.cos(x / 307 - y / 157) + edge + grain));
      data[o + 2] = Math.max(0, Math.min(255, 110 + 70 * Math.sin((x + y) / 401) + edge + grain - 10));
    }
  }
  let img = sharp(data, { raw: { width, height, channels: 3 } });
  if (depth === 16) img = img.toColourspace("rgb16");
  await img.tiff({ compression: "lzw", predictor: "horizontal" }).toFile(file + ".part");
  fs.renameSync(file + ".part", file);
}

function median(values: number[]): number {
  const v = [...values].sort((a, b) => a - b);
  const m = v.length >> 1;
  return v.length % 2 ? v[m]! : (v[m - 1]! + v[m]!) / 2;
}

/** Median wall and CPU milliseconds of `fn` over `runs`, after one warm-up run. */
async function time(fn: () => Promise<unknown>, runs: number): Promise<{ wall: number; cpu: number }> {
  await fn();
  const wall: number[] = [];
  const cpu: number[] = [];
  for (let r = 0; r < runs; r++) {
    const c = process.cpuUsage();
    const t = performance.now();
    await fn();
    wall.push(performance.now() - t);
    const used = process.cpuUsage(c);
    cpu.push((used.user + used.system) / 1000);
  }
  return { wall: median(wall), cpu: median(cpu) };
}

/**
 * Measures the typical recipe against the bare copy. Example:
 *   await benchRecipe({ runs: 5, megapixels: 12 }) → [{ bitDepth: 8, compression: "none", floorMsPerMp: 6.1, recipeMsPerMp: …, ratio: … }, …]
 */
export async function benchRecipe(opts: { runs?: number; megapixels?: number; dir?: string } = {}): Promise<RecipeBenchRow[]> {
  const runs = opts.runs ?? 5;
  const mp = opts.megapixels ?? 12;
  const width = Math.round(Math.sqrt((mp * 1e6 * 4) / 3));
  const height = Math.round((width * 3) / 4);
  const dir = opts.dir ?? path.resolve(import.meta.dirname, "..", "..", ".bench", "recipe");
  const rows: RecipeBenchRow[] = [];
  for (const depth of [8, 16] as const) {
    const file = path.join(dir, `photo-${width}x${height}-${depth}bit.tif`);
    await testImage(file, width, height, depth);
    const input = await fs.promises.readFile(file);
    const compiled = compileRecipe(TYPICAL_RECIPE, { dpi: 300, bitDepth: depth, background: [246, 240, 228] });
    const decoded = await toRaw(sharp(input), depth);
    const stats = await compiled.measure(decoded);
    const apply = await time(() => compiled.apply(decoded, { stats }), runs);
    for (const compression of ["none", "lzw"] as const) {
      const space = depth === 16 ? "rgb16" : "srgb";
      const floor = await time(() => sharp(input).toColourspace(space).tiff(TIFF[compression]).toBuffer(), runs);
      // the whole recipe, measurement included, as a render does it
      const recipe = await time(async () => {
        const { image } = await compiled.apply(sharp(input));
        await sharpFromRaw(image).tiff(TIFF[compression]).toBuffer();
      }, runs);
      const megapixels = (width * height) / 1e6;
      rows.push({
        bitDepth: depth,
        compression,
        megapixels: Math.round(megapixels * 10) / 10,
        floorMsPerMp: Math.round((floor.wall / megapixels) * 10) / 10,
        recipeMsPerMp: Math.round((recipe.wall / megapixels) * 10) / 10,
        ratio: Math.round((recipe.wall / floor.wall) * 100) / 100,
        cpuRatio: Math.round((recipe.cpu / floor.cpu) * 100) / 100,
        applyMsPerMp: Math.round((apply.wall / megapixels) * 10) / 10,
      });
    }
  }
  return rows;
}

/** The rows as a table for people. */
export function formatRecipeBench(rows: RecipeBenchRow[]): string {
  const head = "depth  TIFF   MP     floor ms/MP  recipe ms/MP  ratio   cpu ratio  (recipe alone ms/MP)";
  const lines = rows.map(
    (r) =>
      `${String(r.bitDepth).padEnd(5)}  ${r.compression.padEnd(5)}  ${String(r.megapixels).padEnd(5)}  ${String(r.floorMsPerMp).padEnd(11)}  ${String(r.recipeMsPerMp).padEnd(12)}  ${`${r.ratio}×`.padEnd(6)}  ${`${r.cpuRatio}×`.padEnd(9)}  ${r.applyMsPerMp}`,
  );
  return [
    "recipe cost (white balance, auto levels, contrast, saturation + vibrance, sharpen) vs a bare sharp copy",
    head,
    ...lines,
    "target: ratio ≤ 3× at 8 bits",
    "",
  ].join("\n");
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  const args = process.argv.slice(2);
  const num = (flag: string) => {
    const i = args.indexOf(flag);
    return i >= 0 ? Number(args[i + 1]) : undefined;
  };
  const rows = await benchRecipe({ runs: num("--runs"), megapixels: num("--megapixels") });
  process.stdout.write(formatRecipeBench(rows));
}
