import path from "node:path";
import { config, loadConfig } from "../../server/config";
import type { ResolutionOrigin } from "../../shared/schemas/scans";
import { formatBytes, formatMegapixels, formatNumber, formatSize } from "../../shared/units";
import { readScanInfo, verifyDecodes, type ScanInfo } from "../pipeline/metadata";
import { commandHelp, parseFileArgs, type CliIo, type Command } from "./command";

const ORIGIN_LABEL: Record<ResolutionOrigin, string> = {
  tiff: "TIFF resolution tags",
  exif: "EXIF resolution tags",
  jfif: "JFIF header",
  "png-phys": "PNG pHYs chunk",
};

function dpiText(info: ScanInfo): string {
  const { x, y, source, origin } = info.dpi;
  const value = x === y ? `${formatNumber(x)} DPI` : `${formatNumber(x)} × ${formatNumber(y)} DPI (x × y)`;
  if (source === "assumed") return `${value}, assumed: the file records none (studio default, PLATEN_DEFAULT_DPI)`;
  if (source === "set") return `${value}, set by hand (in place of the file's)`;
  return `${value}, embedded (${origin ? ORIGIN_LABEL[origin] : "file"})`;
}

function pixelsText(info: ScanInfo): string {
  const count = info.width * info.height;
  const mp = count >= 100_000 ? ` (${formatMegapixels(count)})` : "";
  return `${info.width} × ${info.height} px${mp}`;
}

/**
 * The scan's header as aligned "label  value" lines, the human form of `platen info`.
 * Example line: "resolution     300 DPI, embedded (TIFF resolution tags)".
 */
export function formatScanInfo(file: string, info: ScanInfo): string {
  const p = info.physical;
  const rows: [string, string][] = [
    ["file", path.resolve(file)],
    ["format", info.format.toUpperCase()],
    ["pixels", pixelsText(info)],
    ["bit depth", `${info.bitDepth} ${info.bitDepth === 1 ? "bit" : "bits"} per channel`],
    ["channels", `${info.channels}${info.hasAlpha ? " (with alpha)" : ""}`],
    ["colour space", info.colourSpace],
    ["ICC profile", info.hasIccProfile ? (info.iccDescription ?? "embedded, without a description") : "none"],
    ["resolution", dpiText(info)],
    ["physical size", `${formatSize(p.widthIn, p.heightIn, "in")} (${formatSize(p.widthCm, p.heightCm, "cm")})`],
    ["file size", `${formatBytes(info.sizeBytes)} (${info.sizeBytes} bytes)`],
    ["decodes", "yes, every pixel read without error"],
  ];
  const width = Math.max(...rows.map(([label]) => label.length));
  return rows.map(([label, value]) => `${label.padEnd(width)}  ${value}`).join("\n") + "\n";
}

function parse(args: string[]): { file: string; json: boolean; help: boolean } {
  const { file, values, help } = parseFileArgs(
    args,
    { json: { type: "boolean", default: false }, help: { type: "boolean", short: "h", default: false } },
    { a: "a scan file", one: "scan file" },
  );
  if (help) return { file: "", json: false, help: true };
  return { file, json: values.json, help: false };
}

/** `platen info <file> [--json]`: what the worker reads from a scan's header, after a decode check. */
export const infoCommand: Command = {
  name: "info",
  usage: "info <file> [--json]",
  summary: "Show a scan's pixel size, depth, colour, ICC profile, resolution and physical size.",
  help: [
    "",
    "Reads the file's header the way the worker does, then decodes every pixel once to check that",
    "the file is whole. Nothing is written; the file is only read.",
    "",
    "Options:",
    "  --json      print the reading as one JSON object",
    "  -h, --help  show this help",
    "",
    "Exit codes: 0 readable, 1 the file cannot be used (the reason is on stderr), 2 wrong command line.",
  ],
  async run(args: string[], io: CliIo): Promise<number> {
    const opts = parse(args);
    if (opts.help) {
      io.stdout(commandHelp(infoCommand));
      return 0;
    }
    const cfg = io.env === process.env ? config() : loadConfig(io.env);
    const limits = { defaultDpi: cfg.defaultDpi, maxPixels: cfg.maxPixels };
    const info = await readScanInfo(opts.file, limits);
    await verifyDecodes(opts.file, limits.maxPixels);
    io.stdout(opts.json ? JSON.stringify(info, null, 2) + "\n" : formatScanInfo(opts.file, info));
    return 0;
  },
};
