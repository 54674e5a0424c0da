import sharp, { type Sharp } from "sharp";

/**
 * Invented test pieces of three kinds for size estimates: "flat" (one colour), "smooth" (slow
 * colour waves with light grain, like a printed page) and "grainy" (strong grain, like rough paper
 * or a halftone scanned coarsely). An LZW TIFF at 300 DPI, as a master is written.
 */
export async function texturedPiece(kind: "flat" | "smooth" | "grainy", width: number, height: number, file: string): Promise<void> {
  let img: Sharp;
  if (kind === "flat") img = sharp({ create: { width, height, channels: 3, background: "#8a5a44" } });
  else {
    const raw = Buffer.alloc(width * height * 3);
    let seed = 12345;
    const rnd = () => (seed = (seed * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff;
    const amp = kind === "grainy" ? 60 : 12;
    for (let y = 0; y < height; y++)
      for (let x = 0; x < width; x++) {
        const i = (y * width + x) * 3;
        const base = [120 + 60 * Math.sin(x / 40), 90 + 50 * Math.cos(y / 55), 70 + 40 * Math.sin((x + y) / 70)];
        for (let c = 0; c < 3; c++) raw[i + c] = Math.max(0, Math.min(255, Math.round(base[c]! + (rnd() - 0.5) * amp)));
      }
    img = sharp(raw, { raw: { width, height, channels: 3 } });
  }
  await img.tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" }).toFile(file);
}
