import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { config, loadConfig } from "../../server/config";
import { DEFAULT_RECIPE_NAME, type Recipe } from "../../shared/schemas/recipes";
import { MM_PER_INCH } from "../../shared/units";
import { decodeError, inspectScanFile } from "../pipeline/inspect";
import { readScanInfo } from "../pipeline/metadata";
import { savedRecipes } from "./saved-recipes";
import {
  builtInRecipes,
  compileRecipe,
  findRecipe,
  measureScanBackground,
  sharpFromRaw,
  toRaw,
  type FoundRecipe,
  type RawImage,
  type RecipeResult,
  type RecipeSource,
  type ScanBackground,
} from "../pipeline/colour/index";
import { commitStaged, discardStaged, stage, syncStaged } from "../pipeline/render/staging";
import { BUILT_IN_PRESETS, presetProblem, presetSchema, type Preset } from "../../shared/schemas/presets";
import { renderOutput, type OutputReport } from "../pipeline/output/index";
import { UsageError, commandHelp, parseFileArgs, type CliIo, type Command } from "./command";

/** Output formats by extension; TIFF and PNG keep 16 bits, JPEG and WebP are 8-bit. */
const FORMATS = {
  ".tif": "tiff",
  ".tiff": "tiff",
  ".png": "png",
  ".jpg": "jpeg",
  ".jpeg": "jpeg",
  ".webp": "webp",
} as const;
type OutFormat = (typeof FORMATS)[keyof typeof FORMATS];

interface RenderArgs {
  file: string;
  recipe: string;
  /** The recipe was named on the command line (with --preset, no recipe means the file as it is). */
  recipeGiven?: boolean;
  preset?: string;
  json?: boolean;
  out: string;
  format: OutFormat;
  dpi?: number;
  help: boolean;
}

/** The options, in one table so later ones (an output preset, JSON output) slot in beside them. */
const OPTIONS = {
  recipe: { type: "string" },
  out: { type: "string", short: "o" },
  dpi: { type: "string" },
  preset: { type: "string" },
  json: { type: "boolean", default: false },
  help: { type: "boolean", short: "h", default: false },
} as const;

function parse(args: string[]): RenderArgs {
  const { file, values, help } = parseFileArgs(args, OPTIONS, { a: "an image or scan file", one: "image file" });
  if (help) return { file: "", recipe: "", out: "", format: "tiff", help: true };
  if (!values.out) throw new UsageError("expected --out <path> for the corrected image");
  if (values.preset !== undefined) {
    if (path.resolve(values.out) === path.resolve(file)) {
      throw new UsageError("expected --out to be a new file: the original is never overwritten");
    }
    const withPreset: RenderArgs = {
      file: file,
      recipe: values.recipe ?? DEFAULT_RECIPE_NAME,
      recipeGiven: values.recipe !== undefined,
      preset: values.preset,
      json: values.json,
      out: values.out,
      format: "tiff",
      help: false,
    };
    if (values.dpi !== undefined) withPreset.dpi = parseDpi(values.dpi);
    return withPreset;
  }
  const format = FORMATS[path.extname(values.out).toLowerCase() as keyof typeof FORMATS];
  if (!format) {
    throw new UsageError(`expected --out to end in ${Object.keys(FORMATS).join(", ")} but received "${values.out}"`);
  }
  if (path.resolve(values.out) === path.resolve(file)) {
    throw new UsageError("expected --out to be a new file: the original is never overwritten");
  }
  const out: RenderArgs = { file: file, recipe: values.recipe ?? DEFAULT_RECIPE_NAME, out: values.out, format, help: false };
  if (values.dpi !== undefined) out.dpi = parseDpi(values.dpi);
  out.json = values.json;
  return out;
}

function parseDpi(text: string): number {
  const dpi = Number(text);
  if (!(Number.isFinite(dpi) && dpi > 0 && dpi <= 100_000)) {
    throw new UsageError(`expected --dpi to be a positive number of dots per inch but received "${text}"`);
  }
  return dpi;
}

/**
 * A preset by built-in name (web, square, print-letter, print-a4) or from a JSON file.
 * Example: await loadPreset("square") → the 1080 × 1080 px contain-on-white web preset.
 */
export async function loadPreset(ref: string): Promise<Preset> {
  const builtIn = BUILT_IN_PRESETS[ref];
  if (builtIn) return builtIn;
  if (!/\.json$/i.test(ref)) {
    throw new Error(
      `No built-in preset is called "${ref}" (they are: ${Object.keys(BUILT_IN_PRESETS).join(", ")}), and it is not a .json file`,
    );
  }
  let text: string;
  try {
    text = await fs.readFile(ref, "utf8");
  } catch (err) {
    throw new Error(`Cannot read the preset file ${ref}`, { cause: err });
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new Error(`The preset file ${ref} is not valid JSON: ${err instanceof Error ? err.message : String(err)}`, { cause: err });
  }
  const parsed = presetSchema.safeParse(json);
  if (!parsed.success) throw new Error(`The preset file ${ref} is not a valid preset: ${presetProblem(parsed.error)}`);
  return parsed.data;
}

/**
 * One output of a preset, made by the worker's code (worker/pipeline/output). With a recipe,
 * the corrected image goes to a private temporary TIFF first and the preset works from it.
 */
export async function renderWithPreset(
  opts: { file: string; preset: string; out: string; recipe?: string; dpi?: number },
  limits: { defaultDpi: number; maxPixels: number },
  sources: readonly RecipeSource[] = [builtInRecipes],
): Promise<OutputReport & { recipe?: string }> {
  const preset = await loadPreset(opts.preset);
  const info = await readScanInfo(opts.file, { defaultDpi: opts.dpi ?? limits.defaultDpi, maxPixels: limits.maxPixels });
  const dpi = Math.sqrt(info.dpi.x * info.dpi.y);
  const title = path.basename(opts.file, path.extname(opts.file));
  if (!opts.recipe) return renderOutput({ master: opts.file, dpi, title, maxPixels: limits.maxPixels }, preset, { path: opts.out });
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "platen-render-"));
  try {
    const corrected = path.join(dir, "corrected.tif");
    const r = await renderWithRecipe(
      { file: opts.file, recipe: opts.recipe, out: corrected, format: "tiff", dpi: opts.dpi },
      limits,
      sources,
    );
    const report = await renderOutput({ master: corrected, dpi: r.dpi, title, maxPixels: limits.maxPixels }, preset, { path: opts.out });
    return { ...report, recipe: r.recipe.name };
  } finally {
    await fs.rm(dir, { recursive: true, force: true });
  }
}

/** An output report as lines for people. Example: "wrote        /tmp/f1.tif (2550 × 3300 px, tiff)". */
export function formatOutput(r: OutputReport): string {
  const lines = [`wrote        ${path.resolve(r.path)} (${r.pixelWidth} × ${r.pixelHeight} px, ${r.format}, ${r.kind} preset)`];
  if (r.paper)
    lines.push(
      `paper        ${r.paper.name} ${r.paper.orientation}, ${r.paper.widthIn} × ${r.paper.heightIn} in (${r.paper.widthMm} × ${r.paper.heightMm} mm)`,
    );
  if (r.printedIn)
    lines.push(`printed      ${r.printedIn.width} × ${r.printedIn.height} in (${r.printedCm!.width} × ${r.printedCm!.height} cm)`);
  if (r.effectiveDpi !== undefined) lines.push(`resolution   ${r.effectiveDpi} DPI${r.kind === "print" ? " as printed" : ""}`);
  for (const w of r.warnings) lines.push(`warning      ${w}`);
  return lines.join("\n") + "\n";
}

function needsBackground(recipe: Recipe): boolean {
  return recipe.steps.some((s) => s.enabled && s.type === "whiteBalance" && s.mode === "background");
}

/** What a render did: the shape the text report is printed from (and a JSON report will be). */
export interface RenderReport {
  file: string;
  out: string;
  recipe: { name: string; from: string; file?: string };
  width: number;
  height: number;
  bitDepth: 8 | 16;
  channels: number;
  dpi: number;
  background: ScanBackground | null;
  steps: RecipeResult["applied"];
  grey: boolean;
}

async function encode(image: RawImage, format: OutFormat, dpi: number, temp: string): Promise<void> {
  // withDensity, not withMetadata: the latter also converts 16-bit pixels to sRGB as if they were P3
  let s = sharpFromRaw(image).withDensity(dpi);
  if (format === "tiff") {
    s = s.tiff({ compression: "lzw", predictor: "horizontal", xres: dpi / MM_PER_INCH, yres: dpi / MM_PER_INCH, resolutionUnit: "inch" });
  } else if (format === "png") s = s.png({ compressionLevel: 6 });
  else if (format === "jpeg") s = s.flatten({ background: "#ffffff" }).jpeg({ quality: 92, chromaSubsampling: "4:4:4" });
  else s = s.webp({ quality: 90 });
  await s.toFile(temp);
}

/**
 * Applies a recipe to an image file and writes the result. The white balance from the
 * background measures the scanner bed around the pieces the way the split does. Pure of
 * printing: returns the report.
 */
export async function renderWithRecipe(
  opts: { file: string; recipe: string; out: string; format: OutFormat; dpi?: number },
  limits: { defaultDpi: number; maxPixels: number },
  sources: readonly RecipeSource[] = [builtInRecipes],
): Promise<RenderReport> {
  const found: FoundRecipe = await findRecipe(opts.recipe, sources);
  const info = await readScanInfo(opts.file, { defaultDpi: opts.dpi ?? limits.defaultDpi, maxPixels: limits.maxPixels });
  const dpi = Math.sqrt(info.dpi.x * info.dpi.y);
  let background: ScanBackground | null = null;
  if (needsBackground(found.recipe)) {
    background = await measureScanBackground(opts.file, {
      dpi: info.dpi,
      maxPixels: limits.maxPixels,
      width: info.width,
      height: info.height,
    });
    if (!background.visible) {
      throw new Error(
        `No scanner background shows around the edges of ${opts.file}, and the recipe "${found.recipe.name}" balances white from it; use a recipe with a picked point or explicit gains`,
      );
    }
  }
  const bitDepth = info.bitDepth === 16 && (opts.format === "tiff" || opts.format === "png") ? 16 : 8;
  const compiled = compileRecipe(found.recipe, { dpi, bitDepth, background: background?.rgb });
  let raw: RawImage;
  try {
    raw = await toRaw(sharp(opts.file, { failOn: "error", limitInputPixels: limits.maxPixels }).autoOrient(), bitDepth);
  } catch (err) {
    throw decodeError(err, opts.file, await inspectScanFile(opts.file, limits.maxPixels), limits.maxPixels);
  }
  const result = await compiled.apply(raw);
  const staged = await stage(opts.out);
  try {
    await encode(result.image, opts.format, dpi, staged.temp);
    await syncStaged(staged);
    await commitStaged([staged]);
  } catch (err) {
    await discardStaged([staged]);
    throw new Error(`Could not write ${opts.out}: ${err instanceof Error ? err.message : String(err)}`, { cause: err });
  }
  return {
    file: opts.file,
    out: opts.out,
    recipe: { name: found.recipe.name, from: found.from, ...(found.file ? { file: found.file } : {}) },
    width: result.image.width,
    height: result.image.height,
    bitDepth,
    channels: result.image.channels,
    dpi,
    background,
    steps: result.applied,
    grey: result.grey,
  };
}

/** The report as lines for people. Example: "wrote        /tmp/f1.tif (2400 × 1800 px, 16-bit RGB, 600 DPI)". */
export function formatRender(r: RenderReport): string {
  const kind = r.channels <= 2 ? "grey" : "RGB";
  const lines = [
    `wrote        ${path.resolve(r.out)} (${r.width} × ${r.height} px, ${r.bitDepth}-bit ${kind}${r.channels % 2 === 0 ? " with alpha" : ""}, ${Math.round(r.dpi * 100) / 100} DPI)`,
    `recipe       ${r.recipe.name} (${r.recipe.file ? `file ${r.recipe.file}` : r.recipe.from})`,
  ];
  if (r.background) {
    lines.push(
      `background   sRGB ${r.background.rgb.map((v) => v.toFixed(1)).join(" ")} (${r.background.kind}, measured around the pieces)`,
    );
  }
  if (r.steps.length === 0) lines.push("steps        none enabled: the image is unchanged");
  for (const s of r.steps) lines.push(`step ${String(s.step).padEnd(7)} ${s.summary}`);
  return lines.join("\n") + "\n";
}

/** `platen render <file> --recipe <recipe.json | name> --out <path>`: applies a colour recipe. */
export const renderCommand: Command = {
  name: "render",
  usage: "render <file> [--recipe R] [--preset <preset.json | name>] --out <path> [--dpi N] [--json]",
  summary: "Apply a colour recipe, or make one output of a preset, and write the result.",
  help: [
    "",
    "Uses the same recipe compiler as the worker and the preview. --recipe takes a recipe file",
    `(JSON, { "name": …, "steps": […] }) or the name of a saved or built-in recipe; the studio default is`,
    `"${DEFAULT_RECIPE_NAME}": white balance from the scanner background, then automatic levels.`,
    "Run on a whole scan, white balance from the background finds the bed around the pieces",
    "the way the split does. The original is only read.",
    "",
    "Options:",
    `  --recipe R         a recipe file or name (default: ${DEFAULT_RECIPE_NAME})`,
    "  -o, --out PATH     where to write: .tif, .tiff or .png keep 16 bits; .jpg, .jpeg, .webp are 8-bit",
    `  --preset P         a preset file (JSON) or a built-in name (${Object.keys(BUILT_IN_PRESETS).join(", ")}):`,
    "                     makes that output (web copy, print file, mock-up, master); --out must carry",
    "                     the preset's extension; without --recipe the file is used as it is",
    "  --json             print the report as JSON (pixel size, printed size, effective DPI, warnings)",
    "  --dpi N            the resolution to assume when the file records none (default: the",
    "                     studio's, PLATEN_DEFAULT_DPI); sizes in a recipe (mm, LPI) use it",
    "  -h, --help         show this help",
    "",
    "Exit codes: 0 written, 1 the file or recipe cannot be used (the reason is on stderr), 2 wrong command line.",
  ],
  async run(args: string[], io: CliIo): Promise<number> {
    const opts = parse(args);
    if (opts.help) {
      io.stdout(commandHelp(renderCommand));
      return 0;
    }
    const cfg = io.env === process.env ? config() : loadConfig(io.env);
    const limits = { defaultDpi: cfg.defaultDpi, maxPixels: cfg.maxPixels };
    // Saved recipes (the studio's database, when it answers) come before the built-in ones, so an
    // edited "default" is the studio's newest version.
    const saved = savedRecipes(cfg.databaseUrl);
    const sources = [saved, builtInRecipes];
    try {
      if (opts.preset !== undefined) {
        const report = await renderWithPreset(
          {
            file: opts.file,
            preset: opts.preset,
            out: opts.out,
            ...(opts.recipeGiven ? { recipe: opts.recipe } : {}),
            ...(opts.dpi !== undefined ? { dpi: opts.dpi } : {}),
          },
          limits,
          sources,
        );
        io.stdout(opts.json ? `${JSON.stringify(report, null, 2)}\n` : formatOutput(report));
        return 0;
      }
      return await finishRecipe(await renderWithRecipe(opts, limits, sources), opts, io);
    } finally {
      await saved.close();
    }
  },
};

async function finishRecipe(report: RenderReport, opts: ReturnType<typeof parse>, io: CliIo): Promise<number> {
  io.stdout(opts.json ? `${JSON.stringify(report, null, 2)}\n` : formatRender(report));
  return 0;
}
