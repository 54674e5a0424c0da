/**
 * `platen render <file> --recipe <recipe.json | name> --out <path>`: the same compiler as the
 * worker, on a whole scan (white balance from the bed around the pieces, found the way the
 * split finds it), the built-in studio default by name, recipe files, and one line on stderr
 * with a non-zero exit for anything wrong. ΔE00 as checked against Sharma, Wu and Dalal (2005).
 */
import { execFile } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { deltaE2000 } from "../worker/pipeline/colour/index";
import { srgbToLab } from "../worker/pipeline/colour/space";
import { castScene, meanOf, writeSceneTiff, type CastScene } from "./helpers/colour-scans";
import { makeTempDir, sha256File } from "./helpers/scan-bytes";

const ROOT = path.resolve(import.meta.dirname, "..");
const CLI = path.join(ROOT, "scripts", "platen.mjs");
const tmp = makeTempDir("platen-cli-render-");
afterAll(() => tmp.cleanup());

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

function platen(args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [CLI, ...args],
      { cwd: ROOT, env: { ...process.env, PLATEN_DEFAULT_DPI: "200", PLATEN_MAX_PIXELS: "50000000" }, timeout: 60_000 },
      (err, stdout, stderr) => resolve({ code: err ? (typeof err.code === "number" ? err.code : -1) : 0, stdout, stderr }),
    );
  });
}

function expectOneLine(stderr: string) {
  expect(stderr.endsWith("\n")).toBe(true);
  expect(stderr.trimEnd().split("\n")).toHaveLength(1);
  expect(stderr).not.toMatch(/^\s+at /m);
}

let scene: CastScene;
let scan: string;
const out = (name: string) => path.join(tmp.dir, "out", name);
const labOf = (rgb: readonly number[]) => srgbToLab(rgb.map((v) => v / 255));

async function readRgb(file: string) {
  const { data, info } = await sharp(file).toColourspace("srgb").raw().toBuffer({ resolveWithObject: true });
  return { data: new Uint8Array(data.buffer, data.byteOffset, data.length), width: info.width, channels: info.channels };
}

beforeAll(async () => {
  scene = castScene({ dpi: 200, seed: 2 });
  scan = path.join(tmp.dir, "scan.tif");
  await writeSceneTiff(scene, scan);
});

describe("platen render applies a recipe to a scan", () => {
  it("with a recipe file, balances white from the bed around the pieces and leaves the original as it was", async () => {
    const recipe = path.join(tmp.dir, "wb.json");
    fs.writeFileSync(recipe, JSON.stringify({ name: "wb", steps: [{ type: "whiteBalance", mode: "background" }] }));
    const before = sha256File(scan);
    const run = await platen(["render", scan, "--recipe", recipe, "--out", out("wb.tif")]);
    expect(run.stderr).toBe("");
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/^wrote {8}.*wb\.tif \(945 × 709 px, 8-bit RGB, 200 DPI\)$/m);
    expect(run.stdout).toMatch(/^background {3}sRGB [\d. ]+ \(light, measured around the pieces\)$/m);
    expect(run.stdout).toMatch(/^step 1 {7}white balance: gains /m);
    expect(sha256File(scan)).toBe(before);

    const img = await readRgb(out("wb.tif"));
    const px = (mm: number) => Math.round((mm * 200) / 25.4);
    const lid = labOf(meanOf(img.data, img.width, img.channels, px(3), px(3), px(10)));
    expect(deltaE2000(lid, [lid[0], 0, 0])).toBeLessThan(1);
    for (const p of scene.patches) {
      expect(deltaE2000(labOf(meanOf(img.data, img.width, img.channels, p.x, p.y, p.size)), labOf(p.rgb)), p.name).toBeLessThan(2);
    }
    const meta = await sharp(out("wb.tif")).metadata();
    expect(meta.density).toBeCloseTo(200, 1);
  });

  it("runs the built-in studio default by name, and by default", async () => {
    for (const args of [["--recipe", "default"], []]) {
      const run = await platen(["render", scan, ...args, "--out", out(`default-${args.length}.png`)]);
      expect(run.code).toBe(0);
      expect(run.stdout).toMatch(/^recipe {7}default \(built-in\)$/m);
      expect(run.stdout).toMatch(/^step 2 {7}levels \(rgb, auto, ≤ 0\.5 % clipped at each end\)/m);
      const img = await readRgb(out(`default-${args.length}.png`));
      const lid = labOf(meanOf(img.data, img.width, img.channels, 10, 10, 60));
      expect(deltaE2000(lid, [lid[0], 0, 0])).toBeLessThan(1);
    }
  });

  it("keeps 16 bits in a 16-bit TIFF", async () => {
    const file16 = path.join(tmp.dir, "scan16.tif");
    await sharp(scan)
      .toColourspace("rgb16")
      .tiff({ compression: "deflate", xres: 200 / 25.4, yres: 200 / 25.4 })
      .toFile(file16);
    const run = await platen(["render", file16, "--recipe", "default", "--out", out("16.tif")]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/16-bit RGB/);
    expect((await sharp(out("16.tif")).metadata()).depth).toBe("ushort");
    // a recipe with nothing to do gives back exactly the scan's 16-bit values, and its DPI
    const none = path.join(tmp.dir, "none.json");
    fs.writeFileSync(none, JSON.stringify({ steps: [] }));
    const same = await platen(["render", file16, "--recipe", none, "--out", out("16-same.tif")]);
    expect(same.code).toBe(0);
    expect(same.stdout).toMatch(/^recipe {7}none \(file .*none\.json\)$/m);
    const read = (f: string) => sharp(f).keepIccProfile().toColourspace("rgb16").raw({ depth: "ushort" }).toBuffer();
    expect((await read(out("16-same.tif"))).equals(await read(file16))).toBe(true);
    expect((await sharp(out("16-same.tif")).metadata()).density).toBeCloseTo(200, 1);
  });

  it.each([
    [
      ["render", "SCAN", "--recipe", "warm", "--out", "OUT"],
      1,
      'platen render: No recipe is called "warm" (known: default); a recipe file\'s path ends in .json',
    ],
    [["render", "SCAN", "--recipe", "missing.json", "--out", "OUT"], 1, 'platen render: There is no recipe file "missing.json"'],
    [
      ["render", "SCAN", "--out", "OUT.bmp"],
      2,
      "platen render: expected --out to end in .tif, .tiff, .png, .jpg, .jpeg, .webp but received",
    ],
    [["render", "SCAN"], 2, "platen render: expected --out <path> for the corrected image. Usage: platen render"],
    [["render", "--out", "OUT"], 2, "platen render: expected the path of an image or scan file. Usage:"],
    [["render", "SCAN", "--out", "SCAN"], 2, "platen render: expected --out to be a new file: the original is never overwritten"],
    [["render", "SCAN", "--out", "OUT", "--gamma", "2"], 2, "platen render: unknown option --gamma"],
  ])("refuses %j with exit %i and one line", async (args, code, message) => {
    const run = await platen(args.map((a) => a.replace("SCAN", scan).replace("OUT", out("x.tif"))));
    expect(run.code).toBe(code);
    expectOneLine(run.stderr);
    expect(run.stderr.startsWith(message.replace("SCAN", scan))).toBe(true);
    expect(fs.existsSync(out("x.tif"))).toBe(false);
  });

  it("names the step and setting of a bad recipe file", async () => {
    const bad = path.join(tmp.dir, "bad.json");
    fs.writeFileSync(bad, JSON.stringify({ name: "bad", steps: [{ type: "contrast" }, { type: "levels", gamma: 12 }] }));
    const run = await platen(["render", scan, "--recipe", bad, "--out", out("bad.tif")]);
    expect(run.code).toBe(1);
    expectOneLine(run.stderr);
    expect(run.stderr).toBe(
      `platen render: The recipe file "${bad}" is not a valid recipe: step 2 (levels): Expected gamma between 0.1 and 10 but received 12\n`,
    );
    fs.writeFileSync(bad, "{ not json");
    const broken = await platen(["render", scan, "--recipe", bad, "--out", out("bad.tif")]);
    expect(broken.code).toBe(1);
    expect(broken.stderr).toMatch(/^platen render: The recipe file ".*bad\.json" is not valid JSON: /);
  });

  it("says so when a piece fills the whole bed and the recipe needs the bed's colour", async () => {
    const full = path.join(tmp.dir, "no-bed.png");
    const data = new Uint8Array(400 * 300 * 3);
    for (let i = 0; i < data.length; i += 3) data.set([(i / 3) % 400 < 200 ? 180 : 60, 90, ((i / 3) % 97) + 40], i);
    await sharp(data, { raw: { width: 400, height: 300, channels: 3 } })
      .png()
      .toFile(full);
    const run = await platen(["render", full, "--recipe", "default", "--out", out("nobed.tif")]);
    expect(run.code).toBe(1);
    expectOneLine(run.stderr);
    expect(run.stderr).toMatch(
      /No scanner background shows around the edges of .*no-bed\.png, and the recipe "default" balances white from it/,
    );
  });

  it("reports a broken image file in one line", async () => {
    const broken = path.join(tmp.dir, "broken.tif");
    fs.writeFileSync(broken, fs.readFileSync(scan).subarray(0, 4000));
    const run = await platen(["render", broken, "--recipe", "default", "--out", out("broken.tif")]);
    expect(run.code).toBe(1);
    expectOneLine(run.stderr);
    expect(fs.existsSync(out("broken.tif"))).toBe(false);
  });
});
