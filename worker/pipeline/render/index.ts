/**
 * Render of one approved fragment: cut it from the full-resolution scan (decoding only the region
 * around it, once), turn it upright, and write an archival master and a web copy, each under a
 * temporary name renamed into place when complete. The scan is only read. renderFragments does
 * the same for several fragments of one scan from a single decode of it.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { geometrySchema, type FragmentGeometry, type FragmentShape } from "../../../shared/schemas/fragments";
import { isScanError } from "../errors";
import { inspectScanFile, type Inspected } from "../inspect";
import { colourPlan, type ColourPlan } from "./colour";
import { cutUpright, decodeScan, openDecodedCopy, type DecodedScan, type UprightCut } from "./cut";
import { correctCut, type RenderRecipe } from "./correct";
import type { AppliedStep } from "../colour";
import { isRenderError, renderErrors } from "./errors";
import { checkGeometry, planUpright, type Point } from "./geometry";
import { featherPixels, rasteriseMask } from "./mask";
import { writeMaster } from "./master";
import { cleanRights } from "./rights";
import { discardStaged, commitStaged, stage, type StagedFile } from "./staging";
import { WEB_LONG_EDGE, writeWebCopy, type WebFormat } from "./web";

export { RenderError, isRenderError, type RenderErrorCode } from "./errors";
export type { RenderRecipe } from "./correct";
export { CUTOUT_FEATHER_MM } from "./mask";
export { WEB_LONG_EDGE, type WebFormat } from "./web";

export interface RenderInput {
  /** Path of the full-resolution original (never modified). */
  source: string;
  /** Box, angle, rectangle and outline in the scan's pixels (shared/schemas/fragments.ts). */
  geometry: FragmentGeometry;
  /** The scan's resolution in DPI (embedded or assumed); x and y must agree (square pixels). */
  dpi: { x: number; y: number };
  /** Largest width × height of scan accepted, in pixels (PLATEN_MAX_PIXELS). */
  maxPixels: number;
  /** Rights fields written into both files. */
  metadata?: { title?: string; creator?: string; copyright?: string };
  /** Colour correction applied to the upright piece before both files are written. */
  recipe?: RenderRecipe;
}

export interface RenderTargets {
  /** Where the master TIFF goes; its folder is created if missing. */
  masterPath: string;
  /** Where the web copy goes; its folder is created if missing. */
  webPath: string;
  /** Default: the format webPath's extension names (.jpg, .jpeg, .webp), else jpeg for rectangles and webp for cut-outs (alpha). */
  webFormat?: WebFormat;
  /** Long edge of the web copy in pixels, never enlarged (default WEB_LONG_EDGE, 2048). */
  webLongEdge?: number;
}

export interface RenderResult {
  master: {
    path: string;
    /** Pixels. */
    width: number;
    height: number;
    /** Bits per channel, as the scan. */
    bitDepth: 8 | 16;
    channels: number;
    hasAlpha: boolean;
    /** DPI recorded (the scan's). */
    dpi: number;
    /** The scan's own ICC profile is embedded (false: tagged sRGB, or untagged grey). */
    iccKept: boolean;
    bytes: number;
  };
  web: { path: string; width: number; height: number; format: string; dpi: number; bytes: number };
  /** The recipe's enabled steps as applied, for people ("levels (rgb, auto …)"); empty without a recipe. */
  applied: AppliedStep[];
}

const WEB_FORMATS: readonly WebFormat[] = ["jpeg", "webp"];
/** A web path's extension names its format; a path without one of these leaves the choice to webFormat or the shape. */
const FORMAT_BY_EXTENSION: Record<string, WebFormat | undefined> = {
  ".jpg": "jpeg",
  ".jpeg": "jpeg",
  ".webp": "webp",
};

/**
 * The web copy's format when none is asked for: JPEG for a rectangle (no transparency to keep),
 * WebP for a cut-out (keeps its alpha). Example: defaultWebFormat("cutout") → "webp".
 */
export function defaultWebFormat(shape: FragmentShape): WebFormat {
  return shape === "cutout" ? "webp" : "jpeg";
}
/** WebP cannot hold more than 16383 px on a side (its 14-bit width and height fields; from memory). */
const MAX_WEB_EDGE = 16383;
/** Largest relative difference between the x and y DPI treated as the same resolution. */
const DPI_TOLERANCE = 0.005;

function checkTargets(input: RenderInput, out: RenderTargets): { format: WebFormat; longEdge: number } {
  for (const [name, value] of [
    ["masterPath", out.masterPath],
    ["webPath", out.webPath],
  ] as const) {
    if (typeof value !== "string" || value.length === 0) {
      throw renderErrors.badOption(name, "a file path", value);
    }
    if (path.resolve(value) === path.resolve(input.source)) throw renderErrors.overwritesSource(value);
  }
  if (path.resolve(out.masterPath) === path.resolve(out.webPath)) throw renderErrors.samePaths(out.masterPath);
  const named = FORMAT_BY_EXTENSION[path.extname(out.webPath).toLowerCase()];
  const format = out.webFormat ?? named ?? defaultWebFormat(input.geometry?.shape ?? "rectangle");
  if (!WEB_FORMATS.includes(format)) throw renderErrors.badOption("webFormat", '"jpeg" or "webp"', format);
  if (named && named !== format) throw renderErrors.extensionMismatch(out.webPath, format);
  const longEdge = out.webLongEdge ?? WEB_LONG_EDGE;
  if (!(Number.isInteger(longEdge) && longEdge > 0 && longEdge <= MAX_WEB_EDGE)) {
    throw renderErrors.badOption("webLongEdge", `an integer from 1 to ${MAX_WEB_EDGE} (pixels)`, longEdge);
  }
  return { format, longEdge };
}

function checkDpi(dpi: RenderInput["dpi"]): void {
  const ok = (v: unknown) => typeof v === "number" && Number.isFinite(v) && v > 0;
  if (!dpi || !ok(dpi.x) || !ok(dpi.y)) throw renderErrors.badDpi(dpi);
  if (Math.abs(dpi.x - dpi.y) > DPI_TOLERANCE * Math.max(dpi.x, dpi.y)) {
    throw renderErrors.nonSquarePixels(dpi.x, dpi.y);
  }
}

function assertFits(geometry: FragmentGeometry, width: number, height: number): void {
  const problem = checkGeometry(geometry, width, height);
  if (!problem) return;
  switch (problem.kind) {
    case "box_outside":
      throw renderErrors.boxOutside(geometry.box, width, height);
    case "rect_too_small":
      throw renderErrors.rectTooSmall(geometry.rect.width, geometry.rect.height);
    case "rect_outside":
      throw renderErrors.rectOutside(problem.corner, width, height);
    case "box_outside_rect":
      throw renderErrors.boxOutsideRect(geometry.box, problem.rectBox);
  }
}

function parseGeometry(geometry: unknown): FragmentGeometry {
  const parsed = geometrySchema.safeParse(geometry);
  if (parsed.success) return parsed.data;
  const issue = parsed.error.issues[0]!;
  const where = issue.path.length > 0 ? issue.path.join(".") : "the geometry";
  throw renderErrors.invalidGeometry(where, issue.message);
}

/**
 * Renders one fragment: the master (TIFF, 16-bit where the scan is, alpha for cut-outs, the
 * scan's DPI and ICC profile, rights fields) and the web copy (long edge `webLongEdge`, 8-bit
 * sRGB, JPEG on white or WebP with alpha, effective DPI). Both are written under temporary names
 * and renamed only when both are complete; on any error the temporaries are removed and neither
 * target is touched (only if the very last rename, the web copy's, fails has the master already
 * been replaced, by its complete new version). Arguments are checked before any pixel is decoded.
 * Throws RenderError (bad_geometry, bad_request, failed) or ScanError (the scan cannot be read).
 * Example:
 *   await renderFragment(
 *     { source: "scan.tif", geometry, dpi: { x: 600, y: 600 }, maxPixels: 500e6 },
 *     { masterPath: "out/f1.tif", webPath: "out/f1.jpg" })
 *   → { master: { width: 2400, height: 1800, bitDepth: 16, dpi: 600, … }, web: { width: 2048, height: 1536, dpi: 512, … } }
 */
export async function renderFragment(input: RenderInput, out: RenderTargets): Promise<RenderResult> {
  const checked = checkInput(input, out);
  const inspected = await inspectScanFile(input.source, input.maxPixels);
  return renderChecked(input, out, checked, inspected, undefined);
}

/** The scan a group of fragments is cut from. */
export type ScanInput = Pick<RenderInput, "source" | "dpi" | "maxPixels"> & {
  /**
   * A decoded copy of this scan kept earlier (the split's, see keepDecodedCopy): when it is this
   * scan's, decoded as the render would, the fragments are cut from it and the scan is not decoded
   * at all; otherwise it is ignored. Only read, never removed.
   */
  decoded?: string;
  /**
   * Where a decode of the scan for several fragments goes (a folder the caller owns and removes,
   * such as a job's scratch folder, so a process killed mid-render leaves nothing elsewhere).
   * Default: the system's temp directory.
   */
  scratchDir?: string;
};

/** One fragment of a scan for renderFragments: its geometry, rights, recipe and targets. */
export interface BatchItem {
  geometry: FragmentGeometry;
  metadata?: RenderInput["metadata"];
  recipe?: RenderRecipe;
  targets: RenderTargets;
}

/**
 * Renders several fragments of one scan from a single decode of it: the scan is decoded once into
 * a temporary uncompressed copy (see decodeScan, removed at the end), and every fragment is cut
 * from that copy instead of decoding the scan again up to its rows (a single fragment is cut
 * straight from the scan, as renderFragment does: that is already one decode, of fewer rows). The
 * outputs, checks and errors are those of renderFragment, item by item, in order. Every item's
 * arguments are checked before any pixel is decoded; a failing item throws its error, and the
 * items before it are complete (renamed into place), the ones after it untouched.
 * Example: await renderFragments({ source: "scan.tif", dpi: { x: 600, y: 600 }, maxPixels: 500e6 },
 *   fragments.map((f, i) => ({ geometry: f, targets: { masterPath: `m${i}.tif`, webPath: `w${i}.jpg` } })))
 *   → [{ master: { width: 1538, … }, web: { … } }, …].
 */
export async function renderFragments(scan: ScanInput, items: BatchItem[]): Promise<RenderResult[]> {
  const results: RenderResult[] = [];
  await renderFromOneDecode(scan, items, {
    strict: true,
    done: (_i, outcome) => {
      if (!outcome.ok) throw outcome.error;
      results.push(outcome.result);
    },
  });
  return results;
}

/** What became of one item of renderEach: its result (both files in place), or its error. */
export type ItemOutcome = { ok: true; result: RenderResult } | { ok: false; error: unknown };

export interface EachOptions {
  /** Asked just before item `index` is cut; false leaves it out (no files, no outcome). */
  wanted?: (index: number) => boolean | Promise<boolean>;
  /** Receives each item's outcome as soon as it is known; the next item starts when it resolves. */
  done: (index: number, outcome: ItemOutcome) => void | Promise<void>;
}

/**
 * renderFragments for work where one item's failure must not stop the others: a bad item (its
 * arguments, its geometry, its cut or its files) goes to `each.done` as that item's error and the
 * next item is rendered. Only what concerns the whole scan throws: it cannot be read or decoded
 * (ScanError), or the scan's resolution or size limit is wrong (RenderError bad_request).
 * Example: await renderEach(scan, items, { done: (i, o) => (o.ok ? store(i, o.result) : report(i, o.error)) }).
 */
export async function renderEach(scan: ScanInput, items: BatchItem[], each: EachOptions): Promise<void> {
  await renderFromOneDecode(scan, items, { ...each, strict: false });
}

async function renderFromOneDecode(scan: ScanInput, items: BatchItem[], each: EachOptions & { strict: boolean }): Promise<void> {
  const inputs = items.map((item): RenderInput => ({
    source: scan.source,
    dpi: scan.dpi,
    maxPixels: scan.maxPixels,
    geometry: item.geometry,
    metadata: item.metadata,
    recipe: item.recipe,
  }));
  // The scan's own arguments concern every item: checked first, thrown.
  checkDpi(scan.dpi);
  if (!(Number.isInteger(scan.maxPixels) && scan.maxPixels > 0)) {
    throw renderErrors.badOption("maxPixels", "a positive integer (pixels)", scan.maxPixels);
  }
  const checked: (CheckedInput | { error: unknown })[] = inputs.map((input, i) => {
    if (each.strict) return checkInput(input, items[i]!.targets);
    try {
      return checkInput(input, items[i]!.targets);
    } catch (error) {
      return { error };
    }
  });
  if (items.length === 0) return;
  const inspected = await inspectScanFile(scan.source, scan.maxPixels);
  const { width, height } = uprightSizeOf(inspected);
  if (each.strict) for (const c of checked) assertFits((c as CheckedInput).geometry, width, height);
  const colour = colourPlan(inspected.meta);
  const kept = scan.decoded ? await openDecodedCopy(scan.decoded, colour, inspected) : null;
  const decoded =
    kept ?? (items.length > 1 ? await decodeScan(scan.source, colour, inspected, scan.maxPixels, scan.scratchDir) : undefined);
  // From the decoded copy the work is a pipeline of two stages: while one fragment's files are
  // written (encoders, mostly one thread each) and handed to `done`, the next one is cut and
  // corrected (the affine turn and the recipe, threaded), so both cores stay busy. At most two
  // cuts are held at once. Cut from the scan itself (a group of one), there is no next.
  type Prepared = { kind: "ready"; cut: PreparedCut } | { kind: "failed"; error: unknown } | { kind: "skipped" };
  const prepareAt = async (i: number): Promise<Prepared> => {
    const c = checked[i]!;
    if ("error" in c) return { kind: "failed", error: c.error };
    try {
      if (each.wanted && !(await each.wanted(i))) return { kind: "skipped" };
      return { kind: "ready", cut: await prepareCut(inputs[i]!, c, inspected, decoded) };
    } catch (error) {
      return { kind: "failed", error };
    }
  };
  let next: Promise<Prepared> | null = prepareAt(0);
  try {
    for (let i = 0; i < inputs.length; i++) {
      const prepared: Prepared = await next!;
      next = i + 1 < inputs.length ? prepareAt(i + 1) : null;
      if (prepared.kind === "skipped") continue;
      let outcome: ItemOutcome;
      if (prepared.kind === "failed") outcome = { ok: false, error: prepared.error };
      else {
        try {
          const c = checked[i] as CheckedInput;
          outcome = { ok: true, result: await writeBoth(inputs[i]!, items[i]!.targets, c, prepared.cut) };
        } catch (error) {
          outcome = { ok: false, error };
        }
      }
      await each.done(i, outcome);
    }
  } finally {
    // A cut still in progress reads the decoded copy: let it finish before the copy goes.
    await next;
    await decoded?.dispose();
  }
}

interface CheckedInput {
  format: WebFormat;
  longEdge: number;
  geometry: FragmentGeometry;
  rights: ReturnType<typeof cleanRights>;
}

/** Every argument check that needs no pixels. Throws RenderError. */
function checkInput(input: RenderInput, out: RenderTargets): CheckedInput {
  const { format, longEdge } = checkTargets(input, out);
  checkDpi(input.dpi);
  const geometry = parseGeometry(input.geometry);
  if (!(Number.isInteger(input.maxPixels) && input.maxPixels > 0)) {
    throw renderErrors.badOption("maxPixels", "a positive integer (pixels)", input.maxPixels);
  }
  return { format, longEdge, geometry, rights: cleanRights(input.metadata) };
}

function uprightSizeOf(inspected: Inspected): { width: number; height: number } {
  return {
    width: inspected.meta.autoOrient?.width ?? inspected.meta.width,
    height: inspected.meta.autoOrient?.height ?? inspected.meta.height,
  };
}

/** The render after the checks: cut (from the scan, or from its `decoded` copy), correct, write both files. */
async function renderChecked(
  input: RenderInput,
  out: RenderTargets,
  checked: CheckedInput,
  inspected: Inspected,
  decoded: DecodedScan | undefined,
): Promise<RenderResult> {
  return writeBoth(input, out, checked, await prepareCut(input, checked, inspected, decoded));
}

/** One fragment cut upright and corrected, with its outline and alpha: all the files need. */
interface PreparedCut {
  cut: UprightCut;
  colour: ColourPlan;
  applied: AppliedStep[];
  outline: Point[] | null;
  alpha: Uint8Array | Uint16Array | null;
}

/** Cuts the fragment upright (from the scan or its `decoded` copy), corrects it, rasterises its mask. */
async function prepareCut(
  input: RenderInput,
  checked: CheckedInput,
  inspected: Inspected,
  decoded: DecodedScan | undefined,
): Promise<PreparedCut> {
  const { geometry } = checked;
  const { width, height } = uprightSizeOf(inspected);
  assertFits(geometry, width, height);

  const plan = planUpright(geometry, width, height);
  const planned = colourPlan(inspected.meta);
  const rawCut = await cutUpright(input.source, plan, planned, inspected, input.maxPixels, decoded);
  const { cut, colour, applied } = input.recipe
    ? await correctCut(rawCut, planned, input.recipe, input.dpi.x)
    : { cut: rawCut, colour: planned, applied: [] };
  const outline: Point[] | null = geometry.shape === "cutout" ? geometry.outline.map((p) => plan.toUpright(p as Point)) : null;
  const alpha = outline
    ? rasteriseMask(outline, cut.crop.width, cut.crop.height, {
        featherPx: featherPixels(input.dpi.x),
        depth: colour.bitDepth,
      })
    : null;
  return { cut, colour, applied, outline, alpha };
}

/** Writes the master and the web copy of a prepared cut, each staged and renamed into place. */
async function writeBoth(input: RenderInput, out: RenderTargets, checked: CheckedInput, prepared: PreparedCut): Promise<RenderResult> {
  const { format, longEdge, rights } = checked;
  const { cut, colour, applied, outline, alpha } = prepared;
  const staged: StagedFile[] = [];
  let current = out.masterPath;
  try {
    const masterFile = await stage(out.masterPath);
    staged.push(masterFile);
    current = out.webPath;
    const webFile = await stage(out.webPath);
    staged.push(webFile);
    // Both copies are encoded at once from the same cut: each encoder runs mostly on one thread
    // (LZW, JPEG, WebP), so together they keep two cores busy. Both are settled before anything
    // is committed or discarded, and the first to fail names its file.
    const [masterDone, webDone] = await Promise.allSettled([
      writeMaster(cut, colour, masterFile, { dpi: input.dpi, rights, alpha }),
      writeWebCopy(cut, colour, webFile, { format, longEdge, dpi: input.dpi.x, rights, outline }),
    ]);
    if (masterDone.status === "rejected") {
      current = out.masterPath;
      throw masterDone.reason;
    }
    if (webDone.status === "rejected") throw webDone.reason;
    const master = masterDone.value;
    const web = webDone.value;
    current = out.masterPath;
    const [masterBytes, webBytes] = await Promise.all(staged.map(async (f) => (await fs.stat(f.temp)).size));
    for (const file of staged) {
      current = file.target;
      await commitStaged([file]);
    }
    return {
      master: {
        path: out.masterPath,
        ...master,
        bitDepth: colour.bitDepth,
        dpi: input.dpi.x,
        iccKept: colour.iccKept,
        bytes: masterBytes!,
      },
      web: { path: out.webPath, ...web, bytes: webBytes! },
      applied,
    };
  } catch (err) {
    await discardStaged(staged);
    if (isRenderError(err) || isScanError(err)) throw err;
    throw renderErrors.writeFailed(current, err);
  }
}
