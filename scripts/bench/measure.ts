/**
 * One measurement per function, each run in a fresh child process (so its peak memory is its own):
 * `tsx scripts/bench/measure.ts <measurement> <scan> <runs> <out-dir>` prints one JSON line
 * { times: [ms…], cpuTimes, floorTimes, ratios, …, peakRssMb, detail }. The benchmark
 * (scripts/bench.ts) starts these and reports medians. A new measurement is one more entry in
 * MEASUREMENTS.
 *
 * Every run is paired with a run of its floor just before it, in the same process, so that a run
 * and its floor see the same load on a shared machine; the ratios are taken pair by pair. The
 * floor's own peak memory is below the measured function's (it does less), so the peak reported
 * is the measured function's.
 */
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { DEFAULT_MAX_PIXELS } from "../../shared/limits";
import { readScanInfo } from "../../worker/pipeline/metadata";
import { DEFAULT_ANALYSIS_DPI } from "../../worker/pipeline/split/analysis-copy";
import { splitScan, type SplitResult } from "../../worker/pipeline/split/index";
import { INTERPOLATOR } from "../../worker/pipeline/render/cut";
import { planUpright } from "../../worker/pipeline/render/geometry";
import { MASTER_TIFF } from "../../worker/pipeline/render/master";
import { WEB_JPEG, WEB_WEBP } from "../../worker/pipeline/render/web";

export interface Sample {
  /** Wall-clock time of each run, ms. */
  times: number[];
  /** CPU time of each run (every thread of the process: JavaScript and libvips), ms. */
  cpuTimes: number[];
  /** The floor run paired with each run: its wall and CPU times, ms. */
  floorTimes: number[];
  floorCpuTimes: number[];
  /** Each run over its own floor, by wall and by CPU time. */
  ratios: number[];
  cpuRatios: number[];
  peakRssMb: number;
  detail?: Record<string, number | string>;
}

const LIMITS = { defaultDpi: 300, maxPixels: DEFAULT_MAX_PIXELS };

/** Wall and CPU time of fn, ms (CPU: process.cpuUsage, user + system, every thread). */
async function timed(fn: () => Promise<void>): Promise<{ wall: number; cpu: number }> {
  const c = process.cpuUsage();
  const t = performance.now();
  await fn();
  const wall = performance.now() - t;
  const d = process.cpuUsage(c);
  return { wall, cpu: (d.user + d.system) / 1000 };
}

type Pairs = Omit<Sample, "peakRssMb" | "detail">;

/** `runs` pairs after one untimed warm-up pair: the floor, then the measured function, each timed (after `before`, untimed here). */
async function paired(runs: number, floor: () => Promise<void>, run: () => Promise<void>, before?: () => Promise<void>): Promise<Pairs> {
  const out: Pairs = {
    times: [],
    cpuTimes: [],
    floorTimes: [],
    floorCpuTimes: [],
    ratios: [],
    cpuRatios: [],
  };
  // One pair first, untimed: the worker is a long-running process, so its JavaScript is compiled
  // and its first allocations made long before a given scan arrives; a fresh process's first run
  // (up to twice as slow in the analysis) would measure the compiler instead.
  await before?.();
  await floor();
  await run();
  for (let r = 0; r < runs; r++) {
    await before?.();
    const f = await timed(floor);
    const t = await timed(run);
    out.floorTimes.push(f.wall);
    out.floorCpuTimes.push(f.cpu);
    out.times.push(t.wall);
    out.cpuTimes.push(t.cpu);
    out.ratios.push(t.wall / f.wall);
    out.cpuRatios.push(t.cpu / f.cpu);
  }
  return out;
}

/** The floor for the split: sharp decodes the scan once and makes the same reduced copy, nothing else. */
async function decodeAndReduce(file: string): Promise<void> {
  const info = await readScanInfo(file, LIMITS);
  const w = Math.round((info.width * DEFAULT_ANALYSIS_DPI) / info.dpi.x);
  const h = Math.round((info.height * DEFAULT_ANALYSIS_DPI) / info.dpi.y);
  await sharp(file, { limitInputPixels: LIMITS.maxPixels })
    .autoOrient()
    .resize(w, h, { fit: "fill", kernel: "linear" })
    .toColourspace("srgb")
    .raw({ depth: "uchar" })
    .toBuffer();
}

type RenderModule = typeof import("../../worker/pipeline/render/index");

/** The render module, when it is there (it is written beside the split). */
async function renderModule(): Promise<RenderModule | null> {
  try {
    const mod = (await import("../../worker/pipeline/render/index")) as RenderModule;
    return typeof mod.renderFragment === "function" && typeof mod.renderFragments === "function" ? mod : null;
  } catch {
    return null;
  }
}

function renderTargets(outDir: string, i: number, shape: string) {
  return {
    masterPath: path.join(outDir, `m${i}.tif`),
    webPath: path.join(outDir, `w${i}${shape === "cutout" ? ".webp" : ".jpg"}`),
  };
}

function geometryOf(f: SplitResult["fragments"][number]) {
  return { box: f.box, angle: f.angle, rect: f.rect, outline: f.outline, shape: f.shape };
}

/**
 * Every fragment rendered (master and web copy) from the full-resolution scan, one renderFragment
 * call each (as one render job per fragment does: each decodes the scan down to its rows).
 */
async function renderEach(
  mod: RenderModule,
  file: string,
  outDir: string,
  fragments: SplitResult["fragments"],
  dpi: { x: number; y: number },
  _decoded?: string,
): Promise<void> {
  for (const [i, f] of fragments.entries()) {
    await mod.renderFragment(
      { source: file, geometry: geometryOf(f), dpi, maxPixels: LIMITS.maxPixels },
      renderTargets(outDir, i, f.shape),
    );
  }
}

/**
 * Every fragment rendered from one decode of the scan (renderFragments): from the split's decoded
 * copy when there is one, as the render job does.
 */
async function renderBatch(
  mod: RenderModule,
  file: string,
  outDir: string,
  fragments: SplitResult["fragments"],
  dpi: { x: number; y: number },
  decoded?: string,
): Promise<void> {
  await mod.renderFragments(
    { source: file, dpi, maxPixels: LIMITS.maxPixels, decoded },
    fragments.map((f, i) => ({
      geometry: geometryOf(f),
      targets: renderTargets(outDir, i, f.shape),
    })),
  );
}

/** The whole scan decoded into memory once, as sharp alone would, with the options to read it back. */
async function decodeRaw(file: string) {
  const { data, info } = await sharp(file, { limitInputPixels: LIMITS.maxPixels }).raw().toBuffer({ resolveWithObject: true });
  return { data, info, raw: { raw: { width: info.width, height: info.height, channels: info.channels } } };
}

/**
 * The bare floor: one decode of the scan, then each fragment's box encoded straight from the
 * decoded pixels (an LZW TIFF, a 4:2:0 JPEG of long edge 2048): no analysis, no turn, no mask.
 * Reported beside the target's floor, as the least any render could cost.
 */
async function bareFloor(file: string, outDir: string, fragments: SplitResult["fragments"]): Promise<void> {
  const { data, raw } = await decodeRaw(file);
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
}

/** A polygon as an SVG the size of the piece, for sharp to rasterise into a mask (librsvg). */
function polygonSvg(points: [number, number][], width: number, height: number): Buffer {
  const d = points.map(([x, y]) => `${x.toFixed(2)},${y.toFixed(2)}`).join(" ");
  return Buffer.from(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">` + `<polygon points="${d}" fill="#fff"/></svg>`,
  );
}

/**
 * The target's floor for the whole: sharp alone making the same files from one decode of the
 * scan, with no analysis. The fragments' geometry is given (found by the split beforehand, outside
 * the timing); for each one sharp cuts its region from the decoded pixels, turns it upright with
 * the same affine transform and interpolator as the render, crops the piece, masks a cut-out
 * (its outline rasterised by sharp from an SVG polygon), and encodes the master and the web copy
 * with the render's own encoder settings (MASTER_TIFF, WEB_JPEG, WEB_WEBP; long edge 2048), on
 * the render's own schedule (both files of a piece at once, the next piece cut meanwhile).
 * Left out, as they are the product's own work on top: the cut-out feather, colour management
 * and rights fields.
 */
async function sameOutputsFloor(
  file: string,
  outDir: string,
  fragments: SplitResult["fragments"],
  dpi: { x: number; y: number },
): Promise<void> {
  const { data, info, raw } = await decodeRaw(file);
  /** One piece cut from the decoded pixels and turned upright, with its outline there. */
  const cut = async (f: SplitResult["fragments"][number]) => {
    const plan = planUpright(f, info.width, info.height);
    const canvas = await sharp(data, raw)
      .extract(plan.region)
      .affine(plan.matrix, {
        idx: plan.idx,
        idy: plan.idy,
        interpolator: INTERPOLATOR,
        background: { r: 255, g: 255, b: 255 },
      })
      .raw()
      .toBuffer({ resolveWithObject: true });
    const c = canvas.info;
    const turned = await sharp(canvas.data, {
      raw: { width: c.width, height: c.height, channels: c.channels },
    })
      .extract(plan.crop)
      .raw()
      .toBuffer({ resolveWithObject: true });
    const outline = f.shape === "cutout" ? f.outline.map((p) => plan.toUpright(p as [number, number])) : null;
    return { turned, outline };
  };
  const writeMasterOf = async (i: number, piece: Awaited<ReturnType<typeof cut>>) => {
    const { data: px, info: t } = piece.turned;
    let master = sharp(px, { raw: { width: t.width, height: t.height, channels: t.channels } });
    if (piece.outline) {
      const mask = await sharp(polygonSvg(piece.outline, t.width, t.height))
        .extractChannel(3)
        .raw()
        .toBuffer();
      master = master.joinChannel(mask, { raw: { width: t.width, height: t.height, channels: 1 } });
    }
    await master
      .tiff({ ...MASTER_TIFF, xres: dpi.x / 25.4, yres: dpi.y / 25.4, resolutionUnit: "inch" })
      .toFile(path.join(outDir, `sm${i}.tif`));
  };
  const writeWebOf = async (i: number, piece: Awaited<ReturnType<typeof cut>>) => {
    const { data: px, info: t } = piece.turned;
    const web = sharp(px, { raw: { width: t.width, height: t.height, channels: t.channels } }).resize(2048, 2048, {
      fit: "inside",
      withoutEnlargement: true,
    });
    if (!piece.outline) return void (await web.jpeg(WEB_JPEG).toFile(path.join(outDir, `sw${i}.jpg`)));
    const fitted = await web.raw().toBuffer({ resolveWithObject: true });
    const w = fitted.info;
    const s = w.width / t.width;
    const mask = await sharp(
      polygonSvg(
        piece.outline.map(([x, y]) => [x * s, y * s]),
        w.width,
        w.height,
      ),
    )
      .extractChannel(3)
      .raw()
      .toBuffer();
    await sharp(fitted.data, { raw: { width: w.width, height: w.height, channels: w.channels } })
      .joinChannel(mask, { raw: { width: w.width, height: w.height, channels: 1 } })
      .webp(WEB_WEBP)
      .toFile(path.join(outDir, `sw${i}.webp`));
  };
  // The render's own schedule, so that the ratio compares work and not concurrency: the master
  // and the web copy encoded at once, and the next piece cut while this one's files are written.
  let next = fragments.length > 0 ? cut(fragments[0]!) : null;
  for (let i = 0; i < fragments.length; i++) {
    const piece = await next!;
    next = i + 1 < fragments.length ? cut(fragments[i + 1]!) : null;
    await Promise.all([writeMasterOf(i, piece), writeWebOf(i, piece)]);
  }
}

/**
 * Split, then the fragments rendered by `render`, each run paired with the outputs floor. With
 * `keepDecoded`, as the worker does it: the split keeps the scan decoded (TIFF, PNG), the render
 * cuts from that copy, and the copy is removed after the render.
 */
async function whole(
  file: string,
  runs: number,
  outDir: string,
  render: typeof renderEach,
  keepDecoded: boolean,
): Promise<Omit<Sample, "peakRssMb">> {
  const copy = keepDecoded ? path.join(outDir, "decoded.v") : undefined;
  const mod = await renderModule();
  if (!mod) {
    const none = {
      times: [],
      cpuTimes: [],
      floorTimes: [],
      floorCpuTimes: [],
      ratios: [],
      cpuRatios: [],
    };
    return { ...none, detail: { skipped: "worker/pipeline/render has no renderFragments" } };
  }
  const { fragments, dpi } = await splitScan(file, LIMITS);
  const perFragment: number[] = [];
  const bare: { wall: number; cpu: number }[] = [];
  const pairs = await paired(
    runs,
    () => sameOutputsFloor(file, outDir, fragments, dpi),
    async () => {
      const result = await splitScan(file, { ...LIMITS, decodedCopy: copy });
      const t = performance.now();
      await render(mod, file, outDir, result.fragments, result.dpi, result.decodedCopy ? copy : undefined);
      if (copy) await fs.rm(copy, { force: true });
      perFragment.push((performance.now() - t) / Math.max(1, result.fragments.length));
    },
    // The bare floor is timed too, outside the pair, for the table's extra column.
    async () => {
      if (copy) await fs.rm(copy, { force: true });
      bare.push(await timed(() => bareFloor(file, outDir, fragments)));
    },
  );
  // The warm-up pair ran `before` and the render too: only the timed runs' entries count.
  const timedBare = bare.slice(-runs);
  return {
    ...pairs,
    detail: {
      renderPerFragmentMs: median(perFragment.slice(-runs)),
      bareFloorMs: median(timedBare.map((b) => b.wall)),
      wholeOverBareFloor: median(pairs.times.map((t, i) => t / timedBare[i]!.wall)),
    },
  };
}

type Measurement = (file: string, runs: number, outDir: string) => Promise<Omit<Sample, "peakRssMb">>;

export const MEASUREMENTS: Record<string, Measurement> = {
  /** The whole split (header, decode into the reduced copy, analysis), paired with the floor. */
  split: async (file, runs, outDir) => {
    // As the worker splits a new scan: keeping it decoded for its render (TIFF, PNG), the copy
    // written afresh each run.
    const copy = path.join(outDir, "decoded.v");
    const pairs = await paired(
      runs,
      () => decodeAndReduce(file),
      async () => {
        await splitScan(file, { ...LIMITS, decodedCopy: copy });
      },
      () => fs.rm(copy, { force: true }),
    );
    await fs.rm(copy, { force: true });
    const result = await splitScan(file, { ...LIMITS, decodedCopy: copy });
    await fs.rm(copy, { force: true });
    return {
      ...pairs,
      detail: {
        fragments: result.fragments.length,
        analysisPx: `${result.analysis.width}x${result.analysis.height}`,
        decodedCopy: result.decodedCopy ?? "none",
      },
    };
  },
  /** Split, then every fragment rendered from one decode (renderFragments). */
  whole: (file, runs, outDir) => whole(file, runs, outDir, renderBatch, true),
  /** Split, then one renderFragment call per fragment (one render job each, as the worker queues them). */
  wholeEach: (file, runs, outDir) => whole(file, runs, outDir, renderEach, false),
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
    process.stderr.write(`usage: measure.ts <${Object.keys(MEASUREMENTS).join("|")}> <scan> <runs> <out-dir>\n`);
    process.exit(2);
  }
  await fs.mkdir(outDir, { recursive: true });
  const sample = await measure(file, Number(runs) || 3, outDir);
  const peakRssMb = process.resourceUsage().maxRSS / 1024;
  process.stdout.write(JSON.stringify({ ...sample, peakRssMb }) + "\n");
}
