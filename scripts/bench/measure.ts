/**
 * One measurement per function, each run in a fresh child process (so its peak memory is its own):
 * `tsx scripts/bench/measure.ts <measurement> <scan> <runs> <out-dir>` prints one JSON line
 * { times: [ms…], peakRssMb, detail }. The benchmark (scripts/bench.ts) starts these and reports
 * medians. A new measurement is one more entry in MEASUREMENTS.
 */
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { DEFAULT_MAX_PIXELS } from "../../shared/limits";
import { readScanInfo } from "../../worker/pipeline/metadata";
import { DEFAULT_ANALYSIS_DPI } from "../../worker/pipeline/split/analysis-copy";
import { splitScan, type SplitResult } from "../../worker/pipeline/split/index";

export interface Sample {
  times: number[];
  peakRssMb: number;
  detail?: Record<string, number | string>;
}

const LIMITS = { defaultDpi: 300, maxPixels: DEFAULT_MAX_PIXELS };

async function timed(fn: () => Promise<void>): Promise<number> {
  const t = performance.now();
  await fn();
  return performance.now() - t;
}

/** The floor for the split: sharp decodes the scan once and makes the same reduced copy, nothing else. */
async function decodeAndReduce(file: string): Promise<number> {
  const info = await readScanInfo(file, LIMITS);
  const w = Math.round((info.width * DEFAULT_ANALYSIS_DPI) / info.dpi.x);
  const h = Math.round((info.height * DEFAULT_ANALYSIS_DPI) / info.dpi.y);
  return timed(async () => {
    await sharp(file, { limitInputPixels: LIMITS.maxPixels })
      .autoOrient()
      .resize(w, h, { fit: "fill", kernel: "linear" })
      .toColourspace("srgb")
      .raw({ depth: "uchar" })
      .toBuffer();
  });
}

async function split(file: string): Promise<number> {
  return timed(async () => {
    await splitScan(file, LIMITS);
  });
}

type RenderModule = typeof import("../../worker/pipeline/render/index");

/** The render module, when it is there (it is written beside the split). */
async function renderModule(): Promise<RenderModule | null> {
  try {
    const mod = (await import("../../worker/pipeline/render/index")) as RenderModule;
    return typeof mod.renderFragment === "function" ? mod : null;
  } catch {
    return null;
  }
}

/** Every fragment rendered (master and web copy) from the full-resolution scan; one time per fragment. */
async function renderEach(
  file: string,
  outDir: string,
  fragments: SplitResult["fragments"],
  dpi: { x: number; y: number },
): Promise<number[]> {
  const mod = await renderModule();
  if (!mod) return [];
  const times: number[] = [];
  for (const [i, f] of fragments.entries()) {
    times.push(
      await timed(async () => {
        await mod.renderFragment(
          {
            source: file,
            geometry: {
              box: f.box,
              angle: f.angle,
              rect: f.rect,
              outline: f.outline,
              shape: f.shape,
            },
            dpi,
            maxPixels: LIMITS.maxPixels,
          },
          {
            masterPath: path.join(outDir, `m${i}.tif`),
            webPath: path.join(outDir, `w${i}${f.shape === "cutout" ? ".webp" : ".jpg"}`),
          },
        );
      }),
    );
  }
  return times;
}

/**
 * The floor for the whole: one decode of the scan, then the same outputs encoded straight from the
 * decoded pixels (each fragment's box as a TIFF master, a JPEG web copy of long edge 2048) with
 * no analysis, no rotation and no masks.
 */
async function outputsFloor(
  file: string,
  outDir: string,
  fragments: SplitResult["fragments"],
): Promise<number> {
  return timed(async () => {
    const { data, info } = await sharp(file, { limitInputPixels: LIMITS.maxPixels })
      .raw()
      .toBuffer({ resolveWithObject: true });
    const raw = { raw: { width: info.width, height: info.height, channels: info.channels } };
    for (const [i, f] of fragments.entries()) {
      const region = { left: f.box.x, top: f.box.y, width: f.box.width, height: f.box.height };
      await sharp(data, raw)
        .extract(region)
        .tiff({ compression: "lzw" })
        .toFile(path.join(outDir, `fm${i}.tif`));
      await sharp(data, raw)
        .extract(region)
        .resize(2048, 2048, { fit: "inside", withoutEnlargement: true })
        .jpeg({ quality: 88 })
        .toFile(path.join(outDir, `fw${i}.jpg`));
    }
  });
}

type Measurement = (
  file: string,
  runs: number,
  outDir: string,
) => Promise<{ times: number[]; detail?: Sample["detail"] }>;

export const MEASUREMENTS: Record<string, Measurement> = {
  floor: async (file, runs) => {
    const times: number[] = [];
    for (let r = 0; r < runs; r++) times.push(await decodeAndReduce(file));
    return { times };
  },
  split: async (file, runs) => {
    const times: number[] = [];
    for (let r = 0; r < runs; r++) times.push(await split(file));
    const result = await splitScan(file, LIMITS);
    return {
      times,
      detail: {
        fragments: result.fragments.length,
        analysisPx: `${result.analysis.width}x${result.analysis.height}`,
      },
    };
  },
  /** Split, then every fragment rendered: times are the whole; detail holds the per-fragment median. */
  whole: async (
    file,
    runs,
    outDir,
  ): Promise<{ times: number[]; detail: Record<string, number | string> }> => {
    if (!(await renderModule()))
      return { times: [], detail: { skipped: "worker/pipeline/render has no renderFragment yet" } };
    const times: number[] = [];
    const perFragment: number[] = [];
    for (let r = 0; r < runs; r++) {
      const t = performance.now();
      const result = await splitScan(file, LIMITS);
      perFragment.push(...(await renderEach(file, outDir, result.fragments, result.dpi)));
      times.push(performance.now() - t);
    }
    return { times, detail: { renderPerFragmentMs: median(perFragment) } };
  },
  outputsFloor: async (file, runs, outDir) => {
    const { fragments } = await splitScan(file, LIMITS);
    const times: number[] = [];
    for (let r = 0; r < runs; r++) times.push(await outputsFloor(file, outDir, fragments));
    return { times };
  },
};

export function median(values: number[]): number {
  if (values.length === 0) return NaN;
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

// Child process entry: run one measurement and print its sample.
if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  const [name, file, runs, outDir] = process.argv.slice(2);
  const measure = MEASUREMENTS[name ?? ""];
  if (!measure || !file || !outDir) {
    process.stderr.write(
      `usage: measure.ts <${Object.keys(MEASUREMENTS).join("|")}> <scan> <runs> <out-dir>\n`,
    );
    process.exit(2);
  }
  await fs.mkdir(outDir, { recursive: true });
  const sample = await measure(file, Number(runs) || 3, outDir);
  const peakRssMb = process.resourceUsage().maxRSS / 1024;
  process.stdout.write(JSON.stringify({ ...sample, peakRssMb }) + "\n");
}
