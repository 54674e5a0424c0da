import path from "node:path";
import { config, loadConfig } from "../../server/config";
import { formatNumber } from "../../shared/units";
import { splitScan, type SplitResult } from "../pipeline/split/index";
import { UsageError, commandHelp, parseFileArgs, type CliIo, type Command } from "./command";

interface SplitArgs {
  file: string;
  json: boolean;
  help: boolean;
  dpi?: number;
  sensitivity?: number;
}

function parse(args: string[]): SplitArgs {
  const { file, values, help } = parseFileArgs(
    args,
    {
      json: { type: "boolean", default: false },
      dpi: { type: "string" },
      sensitivity: { type: "string" },
      help: { type: "boolean", short: "h", default: false },
    },
    { a: "a scan file", one: "scan file" },
  );
  if (help) return { file: "", json: false, help: true };
  const out: SplitArgs = { file, json: values.json, help: false };
  if (values.dpi !== undefined) {
    const dpi = Number(values.dpi);
    if (!(Number.isFinite(dpi) && dpi > 0 && dpi <= 100_000)) {
      throw new UsageError(`expected --dpi to be a positive number of dots per inch but received "${values.dpi}"`);
    }
    out.dpi = dpi;
  }
  if (values.sensitivity !== undefined) {
    const s = Number(values.sensitivity);
    if (!(values.sensitivity.trim() !== "" && Number.isFinite(s) && s >= 0 && s <= 1)) {
      throw new UsageError(`expected --sensitivity to be a number from 0 to 1 but received "${values.sensitivity}"`);
    }
    out.sensitivity = s;
  }
  return out;
}

/** The stable JSON shape scripts and benchmarks read (issue 3); nothing more, nothing less. */
export function splitJson(result: SplitResult): object {
  return {
    file: result.file,
    width: result.width,
    height: result.height,
    dpi: { x: result.dpi.x, y: result.dpi.y, source: result.dpi.source },
    background: { rgb: result.background.rgb },
    fragments: result.fragments.map((f) => ({
      box: { x: f.box.x, y: f.box.y, width: f.box.width, height: f.box.height },
      angle: f.angle,
      shape: f.shape,
      areaPx: f.areaPx,
      sizeIn: { width: f.sizeIn.width, height: f.sizeIn.height },
    })),
  };
}

/**
 * The split as a readable table. Example:
 *   #  box (x, y, w × h px)        angle   shape      size (in)     size (mm)       sure
 *   1  212, 180, 640 × 902         +7.5°   rectangle  2 × 3         50.8 × 76.2     0.95
 */
export function formatSplit(result: SplitResult): string {
  const dpi = result.dpi;
  const dpiText =
    (dpi.x === dpi.y ? `${formatNumber(dpi.x)} DPI` : `${formatNumber(dpi.x)} × ${formatNumber(dpi.y)} DPI`) +
    (dpi.source === "assumed"
      ? ", assumed (the file records none)"
      : dpi.source === "set"
        ? ", set by hand (in place of the file's)"
        : ", embedded");
  const [r, g, b] = result.background.rgb;
  const lines = [
    `file         ${path.resolve(result.file)}`,
    `pixels       ${result.width} × ${result.height} px`,
    `resolution   ${dpiText}`,
    `background   ${result.background.kind === "light" ? "light (a lid)" : "dark (a backing board)"}, sRGB ${r} ${g} ${b}`,
    `threshold    ΔE ${formatNumber(result.threshold.deltaE, 1)} (sensitivity ${formatNumber(result.threshold.sensitivity)})`,
    `set aside    ${result.rejected.small} specks, ${result.rejected.thin} hairs or threads, ${result.rejected.faint} too faint`,
    "",
  ];
  if (result.fragments.length === 0) {
    lines.push("No pieces found: the bed looks empty at this sensitivity.");
    return lines.join("\n") + "\n";
  }
  const rows = result.fragments.map((f, i) => [
    String(i + 1),
    `${f.box.x}, ${f.box.y}, ${f.box.width} × ${f.box.height}`,
    `${f.angle > 0 ? "+" : ""}${formatNumber(f.angle, 1)}°`,
    f.shape,
    `${formatNumber(f.sizeIn.width)} × ${formatNumber(f.sizeIn.height)}`,
    `${formatNumber(f.sizeMm.width, 1)} × ${formatNumber(f.sizeMm.height, 1)}`,
    formatNumber(f.confidence),
  ]);
  const head = ["#", "box (x, y, w × h px)", "angle", "shape", "size (in)", "size (mm)", "sure"];
  const widths = head.map((h, c) => Math.max(h.length, ...rows.map((row) => row[c]!.length)));
  const fmt = (row: string[]) =>
    row
      .map((cell, c) => cell.padEnd(widths[c]!))
      .join("  ")
      .trimEnd();
  lines.push(`${result.fragments.length} ${result.fragments.length === 1 ? "piece" : "pieces"}:`, fmt(head), ...rows.map(fmt));
  return lines.join("\n") + "\n";
}

/** `platen split <file> [--json] [--dpi N] [--sensitivity S]`: finds every piece on a scan. */
export const splitCommand: Command = {
  name: "split",
  usage: "split <file> [--json] [--dpi N] [--sensitivity S]",
  summary: "Find every piece on a scan: its box, angle, shape and size.",
  help: [
    "",
    "Works on a reduced copy of the scan (about 100 DPI), the way the worker does, and reports each",
    "piece in the scan's own pixels. Nothing is written; the file is only read.",
    "",
    "Options:",
    "  --json             print the pieces as one JSON object",
    "  --dpi N            the resolution to assume when the file records none (default: the",
    "                     studio's, PLATEN_DEFAULT_DPI); an embedded resolution is always used",
    "  --sensitivity S    0 to 1, default 0.5: higher finds fainter pieces and more false ones",
    "  -h, --help         show this help",
    "",
    "Exit codes: 0 split, 1 the file cannot be used (the reason is on stderr), 2 wrong command line.",
  ],
  async run(args: string[], io: CliIo): Promise<number> {
    const opts = parse(args);
    if (opts.help) {
      io.stdout(commandHelp(splitCommand));
      return 0;
    }
    const cfg = io.env === process.env ? config() : loadConfig(io.env);
    const result = await splitScan(opts.file, {
      dpi: opts.dpi ?? cfg.defaultDpi,
      sensitivity: opts.sensitivity,
      maxPixels: cfg.maxPixels,
    });
    io.stdout(opts.json ? JSON.stringify(splitJson(result), null, 2) + "\n" : formatSplit(result));
    return 0;
  },
};
