/**
 * `platen split <file> --json` prints exactly the shape scripts rely on (issue 3), the same
 * fragments the pipeline finds; `--dpi` sets an assumed resolution; without --json a table; bad
 * input is one line on stderr with a non-zero exit and no stack trace; `platen info` still works.
 */
import { execFile } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { splitScan } from "../worker/pipeline/split/index";
import { makeTempDir } from "./helpers/scan-bytes";
import { twoPiecesApart } from "./helpers/split-scenes";
import { renderScene, writeScene } from "./helpers/synthetic-scans";

const ROOT = path.resolve(import.meta.dirname, "..");
const CLI = path.join(ROOT, "scripts", "platen.mjs");
const ENV = { PLATEN_DEFAULT_DPI: "240", PLATEN_MAX_PIXELS: "50000000" };
const tmp = makeTempDir("platen-cli-split-");
afterAll(() => tmp.cleanup());

function platen(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    execFile(process.execPath, [CLI, ...args], { cwd: ROOT, env: { ...process.env, ...ENV }, timeout: 60_000 }, (err, stdout, stderr) => {
      resolve({ code: err ? (typeof err.code === "number" ? err.code : -1) : 0, stdout, stderr });
    });
  });
}

function expectOneLine(stderr: string) {
  expect(stderr.endsWith("\n")).toBe(true);
  expect(stderr.trimEnd().split("\n")).toHaveLength(1);
  expect(stderr).not.toMatch(/^\s+at /m);
}

let withDpi: string;
let withoutDpi: string;
beforeAll(async () => {
  const scene = renderScene(twoPiecesApart(4));
  withDpi = path.join(tmp.dir, "two prints.png");
  await writeScene(scene, withDpi, "png");
  withoutDpi = path.join(tmp.dir, "no-dpi.png");
  await writeScene(scene, withoutDpi, "png", false);
}, 60_000);

describe("platen split", () => {
  it("prints exactly the documented JSON shape, matching what the pipeline finds", async () => {
    const run = await platen(["split", withDpi, "--json"]);
    expect(run.stderr).toBe("");
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    expect(Object.keys(out).sort()).toEqual(["background", "dpi", "file", "fragments", "height", "width"]);
    expect(out.file).toBe(withDpi);
    expect(Object.keys(out.dpi).sort()).toEqual(["source", "x", "y"]);
    expect(out.dpi.source).toBe("embedded");
    expect(Object.keys(out.background)).toEqual(["rgb"]);
    expect(out.background.rgb).toHaveLength(3);
    expect(out.fragments).toHaveLength(2);
    for (const f of out.fragments) {
      expect(Object.keys(f).sort()).toEqual(["angle", "areaPx", "box", "shape", "sizeIn"]);
      expect(Object.keys(f.box).sort()).toEqual(["height", "width", "x", "y"]);
      for (const v of Object.values(f.box)) expect(Number.isInteger(v)).toBe(true);
      expect(Object.keys(f.sizeIn).sort()).toEqual(["height", "width"]);
      expect(f.angle).toBeGreaterThan(-45);
      expect(f.angle).toBeLessThanOrEqual(45);
      expect(["rectangle", "cutout"]).toContain(f.shape);
    }
    const direct = await splitScan(withDpi);
    expect(out.width).toBe(direct.width);
    expect(out.fragments.map((f: { box: unknown }) => f.box)).toEqual(direct.fragments.map((f) => f.box));
    expect(out.fragments.map((f: { angle: number }) => f.angle)).toEqual(direct.fragments.map((f) => f.angle));
  });

  it("uses --dpi for a file without a resolution, and the studio default without it", async () => {
    const told = JSON.parse((await platen(["split", withoutDpi, "--json", "--dpi", "300"])).stdout);
    expect(told.dpi).toEqual({ x: 300, y: 300, source: "assumed" });
    const studio = JSON.parse((await platen(["split", withoutDpi, "--json"])).stdout);
    expect(studio.dpi).toEqual({ x: 240, y: 240, source: "assumed" });
    // 40 mm wide pieces drawn at 300 DPI
    expect(told.fragments[0].sizeIn.width).toBeCloseTo(40 / 25.4, 1);
    expect(studio.fragments[0].sizeIn.width).toBeCloseTo((40 / 25.4) * (300 / 240), 1);
  });

  it("prints a readable table without --json", async () => {
    const run = await platen(["split", withDpi, "--sensitivity", "0.6"]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/^resolution\s+300 DPI, embedded$/m);
    expect(run.stdout).toMatch(/^2 pieces:$/m);
    expect(run.stdout).toMatch(/^#\s+box \(x, y, w × h px\)\s+angle\s+shape/m);
    expect(run.stdout).toMatch(/^1\s+\d+, \d+, \d+ × \d+\s+\+4°\s+rectangle/m);
  });

  it("fails on bad input with one line on stderr and no stack trace", async () => {
    const text = path.join(tmp.dir, "list.tif");
    fs.writeFileSync(text, "not a scan\n");
    const bad = await platen(["split", text, "--json"]);
    expect(bad.code).toBe(1);
    expect(bad.stdout).toBe("");
    expectOneLine(bad.stderr);
    expect(bad.stderr).toMatch(/^platen split: The file holds plain text, not an image/);

    const missing = await platen(["split", path.join(tmp.dir, "gone.png")]);
    expect(missing.code).toBe(1);
    expectOneLine(missing.stderr);

    const wrong = await platen(["split", withDpi, "--sensitivity", "high"]);
    expect(wrong.code).toBe(2);
    expectOneLine(wrong.stderr);
    expect(wrong.stderr).toContain('expected --sensitivity to be a number from 0 to 1 but received "high"');

    const zero = await platen(["split", withDpi, "--dpi", "0"]);
    expect(zero.code).toBe(2);
    expectOneLine(zero.stderr);
  });

  it("leaves platen info working beside it", async () => {
    const run = await platen(["info", withDpi, "--json"]);
    expect(run.code).toBe(0);
    expect(JSON.parse(run.stdout).dpi.source).toBe("embedded");
    const help = await platen(["--help"]);
    expect(help.stdout).toMatch(/info <file>/);
    expect(help.stdout).toMatch(/split <file> \[--json\] \[--dpi N\] \[--sensitivity S\]/);
  });
});
