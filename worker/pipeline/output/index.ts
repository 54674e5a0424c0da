/**
 * Outputs: one file a preset makes from a fragment's master (or any image). The same code serves
 * the worker's batch jobs and `platen render --preset`. The source is only read; the output is
 * written under a temporary name beside its target and renamed into place when complete.
 */
import fs from "node:fs/promises";
import path from "node:path";
import type { PaperSize } from "../../../shared/paper";
import { presetProblem, presetSchema, type Preset } from "../../../shared/schemas/presets";
import type { FragmentShape } from "../../../shared/schemas/fragments";
import { CM_PER_INCH } from "../../../shared/units";
import { commitStaged, discardStaged, stage, writeStaged } from "../render/staging";
import { addTiffFields, type TiffField } from "../render/tiff-tags";
import { cleanRights, type Rights } from "../render/rights";
import { OutputError, isOutputError } from "./errors";
import { renderMaster } from "./master";
import { renderMockup } from "./mockup";
import { renderPrintPdf } from "./pdf";
import { renderPrintTiff } from "./print";
import { printLayout } from "./print-layout";
import { DEFAULT_MAX_PIXELS, loadPiece } from "./source";
import { renderWeb } from "./web";

export { OutputError, isOutputError, type OutputErrorCode } from "./errors";
export { webGeometry, type WebGeometry } from "./web";
export { printLayout, cropMarks, captionText, type PrintLayout } from "./print-layout";
export { mockupGeometry, type MockupGeometry } from "./mockup";

export interface OutputInput {
  /** Path of the fragment's master TIFF (or any image sharp reads); never modified. */
  master: string;
  /** Resolution of the master's pixels, DPI. */
  dpi: number;
  title?: string;
  creator?: string;
  copyright?: string;
  shape?: FragmentShape;
  /** Largest source accepted, pixels (default 1 gigapixel; the worker passes PLATEN_MAX_PIXELS). */
  maxPixels?: number;
}

/**
 * The title, creator and copyright an output of `preset` writes into its file, of the piece's
 * `title` and the studio's `rights` (cleaned as they are written): a master and a print file all
 * three (a print in its metadata, and the title also in its caption when it has one), a web copy
 * those its preset keeps (`keep`), a mock-up none. An output's dedupe key covers these and only
 * these, so a new title or new studio rights remake the outputs that carry them and reuse the
 * rest. Keep it in step with renderOutput below.
 * Example: (web preset keeping only the copyright, { title: "T", creator: "A", copyright: "B" }) → { copyright: "B" }.
 */
export function rightsCarried(preset: Preset, rights: Rights): Rights {
  const { title, creator, copyright } = cleanRights(rights);
  const keep =
    preset.kind === "master" || preset.kind === "print"
      ? { title: true, creator: true, copyright: true }
      : preset.kind === "web"
        ? { title: preset.keep.title, creator: preset.keep.creator, copyright: preset.keep.copyright }
        : { title: false, creator: false, copyright: false };
  return {
    ...(keep.title && title ? { title } : {}),
    ...(keep.creator && creator ? { creator } : {}),
    ...(keep.copyright && copyright ? { copyright } : {}),
  };
}

export interface OutputReport {
  path: string;
  kind: Preset["kind"];
  format: string;
  /** Pixel size of the file (PDF: of the embedded image). */
  pixelWidth: number;
  pixelHeight: number;
  /** Print: the piece's size on paper as printed (visible part), inches and cm. */
  printedIn?: { width: number; height: number };
  printedCm?: { width: number; height: number };
  /** Print: source pixels per printed inch; web: the DPI recorded in the copy. */
  effectiveDpi?: number;
  paper?: {
    name: string;
    orientation: "portrait" | "landscape";
    widthIn: number;
    heightIn: number;
    widthMm: number;
    heightMm: number;
    pagePx?: { width: number; height: number };
    pagePt?: { width: number; height: number };
  };
  warnings: string[];
  bytes: number;
}

/** File extensions each output format may carry. */
const EXTENSIONS: Record<string, readonly string[]> = {
  tiff: [".tif", ".tiff"],
  png: [".png"],
  jpeg: [".jpg", ".jpeg"],
  webp: [".webp"],
  avif: [".avif"],
  pdf: [".pdf"],
};

/** The format a preset writes. Example: print-letter → "tiff"; square → "jpeg". */
export function outputFormat(preset: Preset): string {
  return preset.kind === "print" ? preset.output : preset.format;
}

/** The extension a preset's output is named with. Example: print-a4 → ".tif". */
export function outputExtension(preset: Preset): string {
  return EXTENSIONS[outputFormat(preset)]![0]!;
}

function check(input: OutputInput, presetIn: unknown, out: { path: string }): Preset {
  const parsed = presetSchema.safeParse(presetIn);
  if (!parsed.success) throw new OutputError("bad_preset", `Invalid preset: ${presetProblem(parsed.error)}`);
  const preset = parsed.data;
  if (typeof input?.master !== "string" || input.master.length === 0)
    throw new OutputError("bad_input", "Expected the path of the master image");
  if (!(typeof input.dpi === "number" && Number.isFinite(input.dpi) && input.dpi > 0 && input.dpi <= 100_000)) {
    throw new OutputError("bad_input", `Expected the master's resolution as a positive number of DPI but received ${String(input.dpi)}`);
  }
  if (typeof out?.path !== "string" || out.path.length === 0) throw new OutputError("bad_input", "Expected the path of the output file");
  if (path.resolve(out.path) === path.resolve(input.master)) {
    throw new OutputError("bad_input", `Expected an output path other than the master ${input.master}: masters are never overwritten`);
  }
  const format = outputFormat(preset);
  const ext = path.extname(out.path).toLowerCase();
  if (!EXTENSIONS[format]!.includes(ext)) {
    throw new OutputError(
      "bad_input",
      `Expected ${out.path} to end in ${EXTENSIONS[format]!.join(" or ")} for the preset's ${format} output but it ends in "${ext || "nothing"}"`,
    );
  }
  return preset;
}

const round2 = (v: number) => Math.round(v * 100) / 100;

function paperReport(name: string, page: PaperSize, orientation: "portrait" | "landscape") {
  return {
    name,
    orientation,
    widthIn: round2(page.widthIn),
    heightIn: round2(page.heightIn),
    widthMm: round2(page.widthMm),
    heightMm: round2(page.heightMm),
  };
}

/**
 * Makes one output of a preset from a master. The preset is validated (zod, shared/schemas/
 * presets.ts) and the arguments checked before any pixel is decoded. Throws OutputError
 * (bad_input, bad_preset, failed); the target is untouched on any error.
 * Example:
 *   await renderOutput({ master: "f1.tif", dpi: 600, title: "Blue gull" }, BUILT_IN_PRESETS["print-letter"], { path: "f1-letter.tif" })
 *   → { pixelWidth: 2550, pixelHeight: 3300, printedIn: { width: 8, height: 10 }, effectiveDpi: 300, warnings: [], … }
 */
export async function renderOutput(input: OutputInput, presetIn: Preset | unknown, out: { path: string }): Promise<OutputReport> {
  const preset = check(input, presetIn, out);
  const maxPixels = input.maxPixels ?? DEFAULT_MAX_PIXELS;
  // Cleaned once, as rightsCarried cleans them for the dedupe key: the file carries what its key says.
  const rights = cleanRights({ title: input.title, creator: input.creator, copyright: input.copyright });
  let data: Uint8Array;
  let report: Omit<OutputReport, "bytes" | "path">;
  let tiffFields: TiffField[] = [];
  const base = { kind: preset.kind, format: outputFormat(preset) };

  if (preset.kind === "master") {
    const m = await renderMaster(input.master, input.dpi, preset, maxPixels, rights).catch((err: unknown) => {
      throw new OutputError("bad_input", `Cannot read ${input.master} as an image: ${err instanceof Error ? err.message : String(err)}`, {
        cause: err,
      });
    });
    data = m.data;
    tiffFields = m.tiffFields;
    report = { ...base, pixelWidth: m.width, pixelHeight: m.height, effectiveDpi: input.dpi, warnings: [] };
  } else {
    const piece = await loadPiece(input.master, input.dpi, maxPixels);
    if (preset.kind === "web") {
      const w = await renderWeb(piece, preset, rights);
      data = w.data;
      report = { ...base, pixelWidth: w.width, pixelHeight: w.height, effectiveDpi: w.dpi, warnings: w.warnings };
    } else if (preset.kind === "mockup") {
      const m = await renderMockup(piece, preset);
      data = m.data;
      report = { ...base, pixelWidth: m.width, pixelHeight: m.height, warnings: [] };
    } else {
      let layout;
      try {
        layout = printLayout({ widthPx: piece.width, heightPx: piece.height, dpi: piece.dpi }, preset);
      } catch (err) {
        throw new OutputError("bad_preset", err instanceof Error ? err.message : String(err));
      }
      const v = layout.place.visible;
      const common = {
        printedIn: { width: round2(v.width), height: round2(v.height) },
        printedCm: { width: round2(v.width * CM_PER_INCH), height: round2(v.height * CM_PER_INCH) },
        effectiveDpi: round2(layout.place.effectiveDpi),
      };
      const paper = paperReport(preset.paper.size, layout.page, layout.orientation);
      if (preset.output === "pdf") {
        const p = await renderPrintPdf(piece, layout, preset, rights);
        data = p.data;
        report = {
          ...base,
          ...common,
          pixelWidth: p.width,
          pixelHeight: p.height,
          paper: { ...paper, pagePt: p.pagePt },
          warnings: [...layout.warnings, ...p.warnings],
        };
      } else {
        const t = await renderPrintTiff(piece, layout, preset, rights);
        data = t.data;
        report = {
          ...base,
          ...common,
          pixelWidth: layout.pagePx.width,
          pixelHeight: layout.pagePx.height,
          paper: { ...paper, pagePx: layout.pagePx },
          warnings: [...layout.warnings, ...t.warnings],
        };
      }
    }
  }

  const staged = await stage(out.path);
  try {
    await writeStaged(staged, data);
    if (tiffFields.length > 0) await addTiffFields(staged.temp, tiffFields);
    const { size } = await fs.stat(staged.temp);
    await commitStaged([staged]);
    return { path: out.path, ...report, bytes: size };
  } catch (err) {
    await discardStaged([staged]);
    if (isOutputError(err)) throw err;
    throw new OutputError("failed", `Could not write ${out.path}: ${err instanceof Error ? err.message : String(err)}`, { cause: err });
  }
}
