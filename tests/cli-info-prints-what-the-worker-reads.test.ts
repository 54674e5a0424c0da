/**
 * `platen info` reports exactly what the worker reads, with the same limits from the same
 * configuration, and every failure is one line on stderr with an exit code and no stack trace.
 */
import { execFile } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readScanInfo } from "../worker/pipeline/metadata";
import { makeTempDir, withPhys } from "./helpers/scan-bytes";

const ROOT = path.resolve(import.meta.dirname, "..");
const CLI = path.join(ROOT, "scripts", "platen.mjs");
const tmp = makeTempDir("platen-cli-");
afterAll(() => tmp.cleanup());

/** The studio settings the CLI is run with; the worker's reading uses the same numbers. */
const ENV = { PLATEN_DEFAULT_DPI: "240", PLATEN_MAX_PIXELS: "50000000" };
const limits = { defaultDpi: 240, maxPixels: 50_000_000 };

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

function platen(args: string[], env: Record<string, string> = {}): Promise<Run> {
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [CLI, ...args],
      { cwd: ROOT, env: { ...process.env, ...ENV, ...env }, timeout: 30_000 },
      (err, stdout, stderr) => {
        const code = err ? (typeof err.code === "number" ? err.code : -1) : 0;
        resolve({ code, stdout, stderr });
      },
    );
  });
}

/** Exactly one line, ending in a newline, with no stack frame in it. */
function expectOneLine(stderr: string) {
  expect(stderr.endsWith("\n")).toBe(true);
  expect(stderr.trimEnd().split("\n")).toHaveLength(1);
  expect(stderr).not.toMatch(/^\s+at /m);
  expect(stderr).not.toMatch(/\(file:\/\/|node:internal/);
}

let letterTiff: string;
let plainPng: string;
beforeAll(async () => {
  letterTiff = path.join(tmp.dir, "letter.tif");
  await sharp({ create: { width: 2550, height: 3300, channels: 3, background: "#f4efe6" } })
    .tiff({ compression: "deflate", xres: 300 / 25.4, yres: 300 / 25.4 })
    .toFile(letterTiff);
  plainPng = path.join(tmp.dir, "plain.png");
  const png = await sharp({
    create: {
      width: 480,
      height: 240,
      channels: 4,
      background: { r: 10, g: 20, b: 30, alpha: 0.5 },
    },
  })
    .png()
    .toBuffer();
  fs.writeFileSync(plainPng, withPhys(png, null));
});

describe("platen info --json", () => {
  it("prints the same ScanInfo as readScanInfo for an embedded-resolution TIFF", async () => {
    const run = await platen(["info", letterTiff, "--json"]);
    expect(run.stderr).toBe("");
    expect(run.code).toBe(0);
    expect(JSON.parse(run.stdout)).toEqual(await readScanInfo(letterTiff, limits));
    expect(JSON.parse(run.stdout).dpi).toEqual({
      x: 300,
      y: 300,
      source: "embedded",
      origin: "tiff",
    });
  });

  it("assumes the DPI from PLATEN_DEFAULT_DPI, as the worker does", async () => {
    const run = await platen(["info", "--json", plainPng]);
    expect(run.code).toBe(0);
    const printed = JSON.parse(run.stdout);
    expect(printed).toEqual(await readScanInfo(plainPng, limits));
    expect(printed.dpi).toEqual({ x: 240, y: 240, source: "assumed", origin: null });
    const other = await platen(["info", "--json", plainPng], { PLATEN_DEFAULT_DPI: "96" });
    expect(JSON.parse(other.stdout).dpi).toEqual({ x: 96, y: 96, source: "assumed", origin: null });
  });
});

describe("platen info (for people)", () => {
  it("prints aligned lines with size, depth, colour, ICC, DPI and physical size", async () => {
    const run = await platen(["info", letterTiff]);
    expect(run.code).toBe(0);
    const lines = run.stdout.trimEnd().split("\n");
    const valueColumn = lines[0]!.search(/\S+$/);
    for (const line of lines) expect(line.slice(0, valueColumn).trimEnd().length).toBeLessThan(valueColumn);
    const byLabel = Object.fromEntries(lines.map((l) => [l.slice(0, valueColumn).trim(), l.slice(valueColumn)]));
    expect(byLabel).toMatchObject({
      file: letterTiff,
      format: "TIFF",
      pixels: "2550 × 3300 px (8.4 MP)",
      "bit depth": "8 bits per channel",
      channels: "3",
      "colour space": "srgb",
      "ICC profile": "none",
      resolution: "300 DPI, embedded (TIFF resolution tags)",
      // US Letter (ANSI/ASME Y14.1): 8.5 × 11 in = 21.59 × 27.94 cm.
      "physical size": "8.5 × 11 in (21.59 × 27.94 cm)",
    });
  });

  it("says when the DPI is assumed", async () => {
    const run = await platen(["info", plainPng]);
    expect(run.stdout).toMatch(/^resolution +240 DPI, assumed: the file records none \(studio default, PLATEN_DEFAULT_DPI\)$/m);
    expect(run.stdout).toMatch(/^channels +4 \(with alpha\)$/m);
  });

  it("lists its commands with --help", async () => {
    const run = await platen(["--help"]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/^ {2}info <file> \[--json\] +Show a scan's/m);
  });
});

describe("bad input: exit 1, one line on stderr, nothing on stdout", () => {
  it.each([
    [
      "an empty file",
      "empty.tif",
      "",
      "The file is empty (0 bytes): the scanner or the copy did not finish. Scan again or copy the file again.",
    ],
    [
      "a text file",
      "notes.tif",
      "fourteen pieces, blue folder\n",
      "The file holds plain text, not an image: Platen reads scans in TIFF, JPEG, PNG or WebP. Choose the scan itself or save it again in one of those formats.",
    ],
  ])("%s", async (_label, name, content, message) => {
    const file = path.join(tmp.dir, name);
    fs.writeFileSync(file, content);
    const run = await platen(["info", file]);
    expect(run.code).toBe(1);
    expect(run.stdout).toBe("");
    expectOneLine(run.stderr);
    expect(run.stderr).toBe(`platen info: ${message}\n`);
  });

  it("a truncated JPEG (the header reads, the decode fails)", async () => {
    const jpeg = await sharp({
      create: {
        width: 600,
        height: 400,
        channels: 3,
        background: "#808080",
        noise: { type: "gaussian", mean: 128, sigma: 40 },
      },
    })
      .jpeg()
      .toBuffer();
    const file = path.join(tmp.dir, "cut.jpg");
    fs.writeFileSync(file, jpeg.subarray(0, Math.floor(jpeg.length * 0.6)));
    const run = await platen(["info", file, "--json"]);
    expect(run.code).toBe(1);
    expect(run.stdout).toBe("");
    expectOneLine(run.stderr);
    expect(run.stderr).toMatch(/^platen info: The JPEG image data ends early or is damaged/);
  });

  it("a missing file", async () => {
    const file = path.join(tmp.dir, "not-there.tif");
    const run = await platen(["info", file]);
    expect(run.code).toBe(1);
    expectOneLine(run.stderr);
    expect(run.stderr).toContain(file);
  });

  it("a scan over PLATEN_MAX_PIXELS", async () => {
    const run = await platen(["info", letterTiff], { PLATEN_MAX_PIXELS: "1000000" });
    expect(run.code).toBe(1);
    expectOneLine(run.stderr);
    expect(run.stderr).toBe(
      "platen info: The scan is 2550 × 3300 px (8.4 MP), over this studio's limit of 1.0 MP (PLATEN_MAX_PIXELS). Scan at a lower resolution or raise the limit.\n",
    );
  });

  it("a bad setting in the environment", async () => {
    const run = await platen(["info", letterTiff], { PLATEN_DEFAULT_DPI: "lots" });
    expect(run.code).toBe(1);
    expectOneLine(run.stderr);
    expect(run.stderr).toContain("PLATEN_DEFAULT_DPI");
  });
});

describe("wrong command lines: exit 2, one line on stderr", () => {
  it.each([
    [[], "platen: expected a command. Run platen --help to see the commands."],
    [["scan-all"], 'platen: unknown command "scan-all" (the commands are: info, split, render). Run platen --help to see them.'],
    [["info"], "platen info: expected the path of a scan file. Usage: platen info <file> [--json]"],
    [["info", "a.tif", "b.tif"], "platen info: expected one scan file but received 2 (a.tif, b.tif). Usage: platen info <file> [--json]"],
    [["info", "--colour", "a.tif"], "platen info: unknown option --colour. Usage: platen info <file> [--json]"],
  ])("platen %j", async (args, message) => {
    const run = await platen(args);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe("");
    expectOneLine(run.stderr);
    expect(run.stderr).toBe(`${message}\n`);
  });
});
