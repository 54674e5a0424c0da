import type { DetectedPiece } from "../../../shared/schemas/fragments";
import type { DpiSource } from "../../../shared/schemas/scans";
import { DEFAULT_DPI, DEFAULT_MAX_PIXELS } from "../../../shared/limits";
import { MM_PER_INCH } from "../../../shared/units";
import { readingOrder } from "../../../shared/geometry";
import { readScanHeader } from "../metadata";
import { ensureDecodedCopy } from "../render/cut";
import { loadAnalysisCopy, type AnalysisCopy } from "./analysis-copy";
import { estimateBackground, type BackgroundModel } from "./background";
import { rgbToLabPlanes } from "./colour";
import { labelComponents, type Labelling } from "./components";
import { findForeground, type Foreground } from "./foreground";
import { measurePiece, rejectReason, type Rejection } from "./pieces";
import type { Threshold } from "./threshold";

/**
 * The split: finds every piece on a scan. One decode into a reduced copy (about 75 DPI), then
 * pure functions over its pixels: background model → colour difference → threshold → mask →
 * components → one measured fragment per piece, reported in the source's pixels.
 */

export { loadAnalysisCopy, type AnalysisCopy } from "./analysis-copy";
export type { BackgroundModel } from "./background";
export type { Threshold } from "./threshold";

export interface SplitOptions {
  /** DPI to assume when the file records none (the studio default, or `--dpi`). Default 300. */
  dpi?: number;
  /** The resolution an operator set for this scan: used in place of what the file says. */
  setDpi?: { x: number; y: number };
  /** 0–1: higher finds fainter pieces (and more false ones). Default 0.5. */
  sensitivity?: number;
  /** Largest width × height accepted, pixels (PLATEN_MAX_PIXELS). Default 500 MP. */
  maxPixels?: number;
  /** Resolution of the analysis copy, DPI. Default 75 (DEFAULT_ANALYSIS_DPI). */
  analysisDpi?: number;
  /**
   * A file for the scan decoded at full resolution (a libvips .v file, width × height × bands ×
   * bytes of disk): when it already holds this scan's decoded copy it is analysed instead of the
   * scan; otherwise the scan is decoded into it once (written under a temporary name, renamed when
   * complete) and the analysis copy made from it, so that the render can cut the fragments from it
   * without decoding the scan again. Where it cannot be written (a full disk), the scan is split
   * as without it. Only for scans the split must decode in full anyway (TIFF, PNG): JPEG and WebP
   * are shrunk while decoded, and keep no copy.
   */
  decodedCopy?: string;
  /** The most the decoded copy may take, bytes: a larger scan keeps none. Default no limit. */
  decodedCopyMaxBytes?: number;
}

export interface SplitResult {
  file: string;
  /** Source size, pixels (upright, as the preview shows it). */
  width: number;
  height: number;
  dpi: { x: number; y: number; source: DpiSource };
  background: {
    rgb: [number, number, number];
    kind: "light" | "dark";
    lab: [number, number, number];
  };
  threshold: Threshold;
  /** Size of the copy the analysis ran on. */
  analysis: { width: number; height: number; dpi: number };
  /** Components set aside, by reason: dust and specks (small), hairs and threads (thin), faint. */
  rejected: Record<Rejection, number>;
  fragments: DetectedPiece[];
  /** With options.decodedCopy: whether the copy was there already or written now; absent when it could not be written. */
  decodedCopy?: "read" | "written";
}

export interface Analysis {
  background: BackgroundModel;
  foreground: Foreground;
  labelling: Labelling;
  rejected: Record<Rejection, number>;
  /** False when the border shows no consistent background: the scan is taken as one piece. */
  backgroundVisible: boolean;
  fragments: DetectedPiece[];
}

/** Below this share of the border agreeing on one colour, no background is visible at all. */
const MIN_BORDER_AGREEMENT = 0.3;

function checkOptions(
  opts: SplitOptions,
): Required<Omit<SplitOptions, "analysisDpi" | "decodedCopy" | "decodedCopyMaxBytes" | "setDpi">> & { analysisDpi?: number } {
  const sensitivity = opts.sensitivity ?? 0.5;
  if (!(Number.isFinite(sensitivity) && sensitivity >= 0 && sensitivity <= 1)) {
    throw new RangeError(`Expected a sensitivity from 0 to 1 but received ${opts.sensitivity}`);
  }
  const dpi = opts.dpi ?? DEFAULT_DPI;
  if (!(Number.isFinite(dpi) && dpi > 0)) throw new RangeError(`Expected a positive DPI but received ${opts.dpi}`);
  if (opts.setDpi && !(opts.setDpi.x > 0 && opts.setDpi.y > 0 && Number.isFinite(opts.setDpi.x) && Number.isFinite(opts.setDpi.y)))
    throw new RangeError(`Expected a positive set DPI but received ${opts.setDpi.x} × ${opts.setDpi.y}`);
  const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
  if (!(Number.isInteger(maxPixels) && maxPixels > 0)) {
    throw new RangeError(`Expected a positive integer maxPixels but received ${opts.maxPixels}`);
  }
  return { sensitivity, dpi, maxPixels, analysisDpi: opts.analysisDpi };
}

/**
 * Analyses a reduced copy: pure, no I/O. `sourceDpi` is the source scan's resolution.
 * Example: analyseCopy(copy, { sensitivity: 0.5, sourceDpi: { x: 300, y: 300 } }).fragments.length → 8.
 */
export function analyseCopy(copy: AnalysisCopy, opts: { sensitivity: number; sourceDpi: { x: number; y: number } }): Analysis {
  const { width, height } = copy;
  const pxPerMm = Math.sqrt(copy.dpi.x * copy.dpi.y) / MM_PER_INCH;
  const lab = rgbToLabPlanes(copy.data, width * height, 3);
  const { model, residual, diff } = estimateBackground(lab, width, height, pxPerMm);
  const foreground = findForeground(residual, {
    diff,
    width,
    height,
    pxPerMm,
    sensitivity: opts.sensitivity,
    background: model,
  });
  const labelling = labelComponents(foreground.mask, width, height);
  const rejected: Record<Rejection, number> = { small: 0, thin: 0, faint: 0 };
  const backgroundVisible = model.borderAgreement >= MIN_BORDER_AGREEMENT;
  const fragments: DetectedPiece[] = [];
  const ctx = {
    labels: labelling.labels,
    diff: foreground.diff,
    strong: foreground.strong,
    inside: foreground.inside,
    width,
    height,
    pxPerMm,
    scaleX: copy.scaleX,
    scaleY: copy.scaleY,
    sourceWidth: copy.sourceWidth,
    sourceHeight: copy.sourceHeight,
    sourceDpi: opts.sourceDpi,
    thresholdDeltaE: foreground.threshold.deltaE,
  };
  if (backgroundVisible) {
    for (const comp of labelling.components) {
      const reason = rejectReason(comp, ctx);
      if (reason) rejected[reason]++;
      else fragments.push(measurePiece(comp, ctx));
    }
  } else {
    fragments.push(wholeScan(copy.sourceWidth, copy.sourceHeight, opts.sourceDpi));
  }
  // Reading order: rows from the top, each left to right (shared/geometry.ts).
  return { background: model, foreground, labelling, rejected, backgroundVisible, fragments: readingOrder(fragments, (f) => f.box) };
}

/** The whole scan as one rectangle fragment, for a piece that covers the bed to every edge. */
function wholeScan(width: number, height: number, dpi: { x: number; y: number }): DetectedPiece {
  const wIn = width / dpi.x;
  const hIn = height / dpi.y;
  return {
    box: { x: 0, y: 0, width, height },
    angle: 0,
    rect: { cx: width / 2, cy: height / 2, width, height },
    outline: [
      [0, 0],
      [width, 0],
      [width, height],
      [0, height],
    ],
    shape: "rectangle",
    areaPx: width * height,
    confidence: 0.3,
    sizeIn: { width: Math.round(wIn * 1000) / 1000, height: Math.round(hIn * 1000) / 1000 },
    sizeMm: {
      width: Math.round(wIn * MM_PER_INCH * 100) / 100,
      height: Math.round(hIn * MM_PER_INCH * 100) / 100,
    },
  };
}

/**
 * Splits a scan file into fragments. Reads the header (resolution, size, limits), decodes once
 * into the analysis copy, analyses it. Never writes to the file. Throws ScanError for a file that
 * cannot be used, RangeError for a bad option.
 * Example: await splitScan("inbox/intake-04.tif") → { width: 2550, height: 3300,
 *   dpi: { x: 300, y: 300, source: "embedded" }, background: { rgb: [246, 246, 244], kind: "light" },
 *   fragments: [ { box: { x: 212, y: 180, width: 640, height: 902 }, angle: 7.5, shape: "rectangle", … }, … ] }.
 */
export async function splitScan(file: string, options: SplitOptions = {}): Promise<SplitResult> {
  const opts = checkOptions(options);
  const header = await readScanHeader(file, { defaultDpi: opts.dpi, maxPixels: opts.maxPixels });
  const { inspected } = header;
  const info = options.setDpi
    ? { ...header.info, dpi: { ...header.info.dpi, x: options.setDpi.x, y: options.setDpi.y, source: "set" as const } }
    : header.info;
  let analysed = file;
  let decodedCopy: SplitResult["decodedCopy"];
  if (options.decodedCopy) {
    decodedCopy = (await ensureDecodedCopy(file, inspected, opts.maxPixels, options.decodedCopy, options.decodedCopyMaxBytes)) ?? undefined;
    if (decodedCopy) analysed = options.decodedCopy;
  }
  const copyOpts = {
    sourceDpi: { x: info.dpi.x, y: info.dpi.y },
    sourceWidth: info.width,
    sourceHeight: info.height,
    maxPixels: opts.maxPixels,
    targetDpi: opts.analysisDpi,
  };
  let copy: AnalysisCopy;
  try {
    copy = await loadAnalysisCopy(analysed, copyOpts);
  } catch (err) {
    if (analysed === file) throw err;
    // The decoded copy went (trimmed, or dropped by a render) or is damaged: the scan itself.
    decodedCopy = undefined;
    copy = await loadAnalysisCopy(file, copyOpts);
  }
  const analysis = analyseCopy(copy, { sensitivity: opts.sensitivity, sourceDpi: info.dpi });
  const { background } = analysis;
  return {
    file,
    width: info.width,
    height: info.height,
    dpi: { x: info.dpi.x, y: info.dpi.y, source: info.dpi.source },
    background: {
      rgb: background.rgb,
      kind: background.kind,
      lab: background.lab.map((v) => Math.round(v * 100) / 100) as [number, number, number],
    },
    threshold: analysis.foreground.threshold,
    analysis: {
      width: copy.width,
      height: copy.height,
      dpi: Math.round(Math.sqrt(copy.dpi.x * copy.dpi.y) * 100) / 100,
    },
    rejected: analysis.rejected,
    fragments: analysis.fragments,
    ...(decodedCopy ? { decodedCopy } : {}),
  };
}
