/**
 * Synthetic scans for the colour tests: a neutral lid with colour patches of known sRGB values,
 * photographed through a known colour cast (per-channel gains in linear light, normalised so a
 * neutral keeps its luminance: a change of colour, not of exposure), with seeded noise.
 */
import sharp from "sharp";
import { linearToSrgb, srgbToLinear } from "../../worker/pipeline/colour/space";

/** Patch colours: the sRGB values commonly published for a 24-patch colour chart's first rows (from memory). */
export const PATCHES: readonly { name: string; rgb: [number, number, number] }[] = [
  { name: "dark skin", rgb: [115, 82, 68] },
  { name: "light skin", rgb: [194, 150, 130] },
  { name: "blue sky", rgb: [98, 122, 157] },
  { name: "foliage", rgb: [87, 108, 67] },
  { name: "blue flower", rgb: [133, 128, 177] },
  { name: "bluish green", rgb: [103, 189, 170] },
  { name: "orange", rgb: [214, 126, 44] },
  { name: "purplish blue", rgb: [80, 91, 166] },
  { name: "moderate red", rgb: [193, 90, 99] },
  { name: "yellow green", rgb: [157, 188, 64] },
  { name: "neutral 5", rgb: [122, 122, 121] },
  { name: "neutral 8", rgb: [200, 200, 200] },
];

/** A warm cast (a yellowing lamp): linear gains, normalised to keep the luminance of a neutral. */
export function castGains(raw: [number, number, number] = [1.1, 1.0, 0.8]): [number, number, number] {
  const y = 0.2126 * raw[0] + 0.7152 * raw[1] + 0.0722 * raw[2];
  return raw.map((g) => g / y) as [number, number, number];
}

export interface CastScene {
  width: number;
  height: number;
  dpi: number;
  /** The lid's true colour (before the cast). */
  lid: [number, number, number];
  gains: [number, number, number];
  /** Where each patch's centre square lies, in pixels: use it to read the patch back. */
  patches: { name: string; rgb: [number, number, number]; x: number; y: number; size: number }[];
  /** 8-bit sRGB, interleaved. */
  data: Uint8Array;
}

/**
 * A 120 × 90 mm bed at `dpi` with a 4 × 3 grid of 15 mm patches and ≥ 15 mm of lid all round,
 * the cast applied in linear light, then Gaussian noise of `noise` codes (seeded).
 */
export function castScene(
  opts: { dpi?: number; gains?: [number, number, number]; lid?: [number, number, number]; noise?: number; seed?: number } = {},
): CastScene {
  const dpi = opts.dpi ?? 200;
  const px = (mm: number) => Math.round((mm * dpi) / 25.4);
  const width = px(120);
  const height = px(90);
  const lid = opts.lid ?? [236, 236, 236];
  const gains = opts.gains ?? castGains();
  const noise = opts.noise ?? 1.5;
  let s = opts.seed ?? 5;
  const rnd = () => (s = (s * 1664525 + 1013904223) >>> 0) / 4294967296;
  const gauss = () => Math.sqrt(-2 * Math.log(rnd() + 1e-12)) * Math.cos(2 * Math.PI * rnd());
  const size = px(15);
  const gap = px(5);
  const x0 = px(20);
  const y0 = px(17.5);
  const patches = PATCHES.map((p, i) => ({ ...p, x: x0 + (i % 4) * (size + gap), y: y0 + Math.floor(i / 4) * (size + gap), size }));
  const cast = (rgb: readonly number[]) => rgb.map((v, c) => linearToSrgb(Math.min(1, srgbToLinear(v / 255) * gains[c]!)) * 255);
  const lidCast = cast(lid);
  const patchCast = patches.map((p) => cast(p.rgb));
  const data = new Uint8Array(width * height * 3);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let colour = lidCast;
      for (let k = 0; k < patches.length; k++) {
        const p = patches[k]!;
        if (x >= p.x && x < p.x + p.size && y >= p.y && y < p.y + p.size) colour = patchCast[k]!;
      }
      const o = (y * width + x) * 3;
      for (let c = 0; c < 3; c++) data[o + c] = Math.max(0, Math.min(255, Math.round(colour[c]! + noise * gauss())));
    }
  }
  return { width, height, dpi, lid, gains, patches, data };
}

/** Writes a scene as a TIFF with its resolution. */
export async function writeSceneTiff(scene: CastScene, file: string): Promise<void> {
  await sharp(scene.data, { raw: { width: scene.width, height: scene.height, channels: 3 } })
    .tiff({ compression: "deflate", xres: scene.dpi / 25.4, yres: scene.dpi / 25.4, resolutionUnit: "inch" })
    .toFile(file);
}

/** Mean 8-bit colour of a square (the inner half of it, away from edges and blur). */
export function meanOf(
  data: Uint8Array | Uint16Array,
  width: number,
  channels: number,
  x: number,
  y: number,
  size: number,
  max = 255,
): [number, number, number] {
  const sum = [0, 0, 0];
  let n = 0;
  const q = Math.floor(size / 4);
  for (let yy = y + q; yy < y + size - q; yy++) {
    for (let xx = x + q; xx < x + size - q; xx++) {
      const o = (yy * width + xx) * channels;
      for (let c = 0; c < 3; c++) sum[c]! += data[o + c]!;
      n++;
    }
  }
  return sum.map((v) => ((v / n) * 255) / max) as [number, number, number];
}
