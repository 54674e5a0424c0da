import crypto from "node:crypto";
import fs from "node:fs/promises";
import sharp from "sharp";

/** Small generated images for tests; nothing binary is committed. */
export async function paperScan(
  opts: { width?: number; height?: number; format?: "tiff" | "jpeg" | "png"; dpi?: number; seed?: number } = {},
) {
  const { width = 600, height = 400, format = "tiff", dpi = 300, seed = 1 } = opts;
  const hue = (seed * 67) % 360;
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">
    <rect width="100%" height="100%" fill="#f7f6f2"/>
    <rect x="${width * 0.15}" y="${height * 0.2}" width="${width * 0.4}" height="${height * 0.5}" fill="hsl(${hue},60%,45%)" transform="rotate(3 ${width / 2} ${height / 2})"/>
  </svg>`;
  let img = sharp(Buffer.from(svg)).flatten({ background: "#ffffff" }).withMetadata({ density: dpi });
  if (format === "tiff") img = img.tiff({ xres: dpi / 25.4, yres: dpi / 25.4, resolutionUnit: "inch" });
  else if (format === "jpeg") img = img.jpeg({ quality: 90 });
  else img = img.png();
  return img.toBuffer();
}

export const sha256 = (buf: Buffer) => crypto.createHash("sha256").update(buf).digest("hex");

/** Writes `data` to `file` in chunks with pauses, the way a slow scanner does. */
export async function writeSlowly(file: string, data: Buffer, chunks = 6, pauseMs = 150) {
  const fh = await fs.open(file, "w");
  try {
    const size = Math.ceil(data.length / chunks);
    for (let i = 0; i < data.length; i += size) {
      await fh.write(data.subarray(i, i + size));
      await fh.sync();
      await new Promise((r) => setTimeout(r, pauseMs));
    }
  } finally {
    await fh.close();
  }
}

/** A 300 DPI bed with `n` coloured pieces in a row; each seed differs, so none is taken as a duplicate. */
export async function pieceBed(seed: number, n: number) {
  const rects = Array.from({ length: n }, (_, i) => {
    const x = 80 + i * 360;
    const hue = (seed * 53 + i * 97) % 360;
    return `<rect x="${x}" y="${90 + seed * 7}" width="${260 + seed * 3}" height="${330 - i * 20}" fill="hsl(${hue},55%,42%)"/>`;
  }).join("");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${n * 360 + 120}" height="560"><rect width="100%" height="100%" fill="#f6f5f1"/>${rects}</svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

/** Two pieces, 2.0 × 1.5 in and 1.0 × 1.33 in, on a pale bed: an LZW TIFF at 300 DPI (invented test data). */
export async function twoPieceBed(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1300" height="800">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="600" height="450" fill="#2e86c1"/>
    <rect x="850" y="120" width="300" height="400" fill="#c0392b"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}
