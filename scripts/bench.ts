/**
 * `npm run bench`: speed and memory of the split (and of the render, when it is there) against
 * floors measured in the same run, on generated scans: a letter-size page at 300 DPI and an A4
 * page at 600 DPI, 8 pieces each, as LZW TIFF (what scanner software archives) and JPEG.
 *
 * Each measurement runs in its own child process (scripts/bench/measure.ts), so the peak memory
 * reported is that measurement's alone. Every run is paired with a run of its floor just before
 * it in the same process, after one untimed warm-up pair, and the ratios are medians of the pairs'
 * ratios (a run and its floor see the same load); times are medians over the runs.
 * - floor: sharp decodes the scan once and makes the reduced analysis copy, nothing else;
 * - split: the whole split as the worker runs it (header; a TIFF decoded once into its decoded
 *   copy, the reduced copy made from that; a JPEG shrunk while decoded; analysis);
 * - whole: split plus every fragment's master and web copy, rendered from the split's decoded copy
 *   (renderFragments; a JPEG decoded once more); wholeEach: the same with one renderFragment call per fragment (one render
 *   job each, every one decoding the scan down to its fragment's rows); outputs floor: sharp alone
 *   making the same files from one decode, with no analysis (each piece cut, turned upright with
 *   the render's transform, masked, and encoded with the render's settings); bare floor: one
 *   decode and each box encoded as it lies (no turn, no mask), the least any render could cost.
 * Besides wall time, every measurement reports CPU time (all threads); the ratios are given for
 * both (on a virtual machine whose host is busy, CPU time counts stolen time too).
 * Targets at A4 600 DPI: split ≤ 1.5 × floor, whole ≤ 1.5 × outputsFloor, peak memory ≤ 1.5 GB.
 * Results: a table on stdout and .bench/results.json. Options: --runs N (default 5), --quick
 * (letter only, 3 runs).
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { eightPieces } from "../tests/helpers/split-scenes";
import { renderScene, writeScene } from "../tests/helpers/synthetic-scans";
import { median, type Sample } from "./bench/measure";
import { benchRecipe, formatRecipeBench } from "./bench/recipe";
import { benchBatch, formatBatchBench } from "./bench/batch";

const ROOT = path.resolve(import.meta.dirname, "..");
const OUT = path.join(ROOT, ".bench");
const SCANS = path.join(OUT, "scans");

interface ScanCase {
  name: string;
  widthMm: number;
  heightMm: number;
  dpi: number;
  format: "tiff" | "jpeg";
}

const args = process.argv.slice(2);
const quick = args.includes("--quick");
const runsArg = args.indexOf("--runs");
const RUNS = runsArg >= 0 ? Math.max(1, Number(args[runsArg + 1]) || 5) : quick ? 3 : 5;

const CASES: ScanCase[] = [
  { name: "letter 300 DPI TIFF", widthMm: 215.9, heightMm: 279.4, dpi: 300, format: "tiff" },
  { name: "letter 300 DPI JPEG", widthMm: 215.9, heightMm: 279.4, dpi: 300, format: "jpeg" },
  ...(quick
    ? []
    : ([
        { name: "A4 600 DPI TIFF", widthMm: 210, heightMm: 297, dpi: 600, format: "tiff" },
        { name: "A4 600 DPI JPEG", widthMm: 210, heightMm: 297, dpi: 600, format: "jpeg" },
      ] as ScanCase[])),
];

/** Draws the case's scan once; later runs reuse the file. */
async function scanFile(c: ScanCase): Promise<string> {
  const file = path.join(SCANS, `${c.widthMm}x${c.heightMm}mm-${c.dpi}dpi.${c.format === "tiff" ? "tif" : "jpg"}`);
  if (fs.existsSync(file)) return file;
  fs.mkdirSync(SCANS, { recursive: true });
  process.stdout.write(`drawing ${c.name} …\n`);
  const scene = renderScene(eightPieces(c.widthMm, c.heightMm, c.dpi));
  await writeScene(scene, file + ".part", c.format);
  fs.renameSync(file + ".part", file);
  return file;
}

/** Runs one measurement in a child process; null (with the reason printed) when it fails. */
function measure(name: string, file: string, runs: number): Sample | null {
  const child = spawnSync(
    process.execPath,
    ["--import", "tsx", path.join(ROOT, "scripts", "bench", "measure.ts"), name, file, String(runs), path.join(OUT, "out", name)],
    { cwd: ROOT, encoding: "utf8", maxBuffer: 16 * 1024 * 1024 },
  );
  if (child.status !== 0) {
    const why = (child.stderr || child.stdout || "").trim().split("\n").slice(-3).join(" | ");
    process.stdout.write(`  ${name} failed: ${why}\n`);
    return null;
  }
  return JSON.parse(child.stdout.trim().split("\n").pop()!) as Sample;
}

interface Row {
  scan: string;
  file: string;
  megapixels: number;
  floorMs: number;
  splitMs: number;
  splitOverFloor: number;
  splitPeakMb: number;
  renderPerFragmentMs: number | null;
  wholeMs: number | null;
  outputsFloorMs: number | null;
  wholeOverFloor: number | null;
  bareFloorMs: number | null;
  wholeOverBareFloor: number | null;
  wholePeakMb: number | null;
  wholeEachMs: number | null;
  wholeEachOverFloor: number | null;
  wholeEachPeakMb: number | null;
  /** The same ratios by CPU time. */
  splitOverFloorCpu: number;
  wholeOverFloorCpu: number | null;
  wholeEachOverFloorCpu: number | null;
  fragments: number | string | null;
}

const fmt = (v: number | null, digits = 0) => (v === null || Number.isNaN(v) ? "–" : v.toFixed(digits));

/** Median of a sample's values, or null when the measurement failed or was skipped. */
const med = (s: Sample | null, pick: (s: Sample) => number[]): number | null => (s && pick(s).length > 0 ? median(pick(s)) : null);

async function main() {
  const rows: Row[] = [];
  for (const c of CASES) {
    const file = await scanFile(c);
    process.stdout.write(`measuring ${c.name} (${RUNS} runs) …\n`);
    const split = measure("split", file, RUNS);
    const wholeRuns = Math.max(1, Math.ceil(RUNS / 2));
    const whole = measure("whole", file, wholeRuns);
    const each = whole && whole.times.length > 0 ? measure("wholeEach", file, wholeRuns) : null;
    const px = Math.round((c.widthMm / 25.4) * c.dpi) * Math.round((c.heightMm / 25.4) * c.dpi);
    const ran = (s: Sample | null) => (s && s.times.length > 0 ? s : null);
    rows.push({
      scan: c.name,
      file: path.relative(ROOT, file),
      megapixels: Math.round(px / 1e5) / 10,
      floorMs: med(split, (s) => s.floorTimes) ?? NaN,
      splitMs: med(split, (s) => s.times) ?? NaN,
      splitOverFloor: med(split, (s) => s.ratios) ?? NaN,
      splitPeakMb: split?.peakRssMb ?? NaN,
      renderPerFragmentMs: (whole?.detail?.renderPerFragmentMs as number | undefined) ?? null,
      wholeMs: med(whole, (s) => s.times),
      outputsFloorMs: med(whole, (s) => s.floorTimes),
      wholeOverFloor: med(whole, (s) => s.ratios),
      bareFloorMs: (whole?.detail?.bareFloorMs as number | undefined) ?? null,
      wholeOverBareFloor: (whole?.detail?.wholeOverBareFloor as number | undefined) ?? null,
      wholePeakMb: ran(whole)?.peakRssMb ?? null,
      wholeEachMs: med(each, (s) => s.times),
      wholeEachOverFloor: med(each, (s) => s.ratios),
      wholeEachPeakMb: ran(each)?.peakRssMb ?? null,
      splitOverFloorCpu: med(split, (s) => s.cpuRatios) ?? NaN,
      wholeOverFloorCpu: med(whole, (s) => s.cpuRatios),
      wholeEachOverFloorCpu: med(each, (s) => s.cpuRatios),
      fragments: split?.detail?.fragments ?? null,
    });
  }
  const head = [
    "scan",
    "MP",
    "pieces",
    "floor ms",
    "split ms",
    "split/floor",
    "split peak MB",
    "render/frag ms",
    "whole ms",
    "outputs floor ms",
    "whole/floor",
    "bare floor ms",
    "whole/bare",
    "whole peak MB",
    "each/floor",
    "each peak MB",
    "cpu: split",
    "whole",
    "each",
  ];
  const table = rows.map((r) => [
    r.scan,
    fmt(r.megapixels, 1),
    String(r.fragments ?? "–"),
    fmt(r.floorMs),
    fmt(r.splitMs),
    fmt(r.splitOverFloor, 2),
    fmt(r.splitPeakMb),
    fmt(r.renderPerFragmentMs),
    fmt(r.wholeMs),
    fmt(r.outputsFloorMs),
    fmt(r.wholeOverFloor, 2),
    fmt(r.bareFloorMs),
    fmt(r.wholeOverBareFloor, 2),
    fmt(r.wholePeakMb),
    fmt(r.wholeEachOverFloor, 2),
    fmt(r.wholeEachPeakMb),
    fmt(r.splitOverFloorCpu, 2),
    fmt(r.wholeOverFloorCpu, 2),
    fmt(r.wholeEachOverFloorCpu, 2),
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...table.map((t) => t[i]!.length)));
  const line = (cells: string[]) => cells.map((cell, i) => (i === 0 ? cell.padEnd(widths[i]!) : cell.padStart(widths[i]!))).join("  ");
  process.stdout.write(["", line(head), ...table.map(line), ""].join("\n") + "\n");
  process.stdout.write(
    "Targets at A4 600 DPI: split/floor ≤ 1.5, whole/floor ≤ 1.5, peak memory ≤ 1536 MB.\n" +
      "whole: one decode for all fragments (renderFragments); each: one renderFragment per fragment;\n" +
      "outputs floor: sharp alone making the same files with no analysis; bare: boxes encoded as they lie;\n" +
      "cpu: the same ratios by CPU time (all threads), steadier on a shared machine.\n",
  );
  // Recipe cost per megapixel against a bare sharp copy (8 and 16 bits).
  const recipe = await benchRecipe({ runs: RUNS });
  process.stdout.write("\n" + formatRecipeBench(recipe));
  // Batch throughput with one and two worker processes, and the queue's cost per job.
  const batch = await benchBatch();
  process.stdout.write("\n" + formatBatchBench(batch));
  fs.mkdirSync(OUT, { recursive: true });
  const result = {
    at: new Date().toISOString(),
    node: process.version,
    runs: RUNS,
    rows,
    recipe,
    batch,
  };
  fs.writeFileSync(path.join(OUT, "results.json"), JSON.stringify(result, null, 2) + "\n");
  process.stdout.write(`Written to ${path.relative(ROOT, path.join(OUT, "results.json"))}\n`);
}

await main();
