import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { it } from "vitest";
import { renderOutput } from "../worker/pipeline/output/index";
import { makeTempDir } from "./helpers/scan-bytes";
const tmp = makeTempDir("platen-probe-");
it("probe", async () => {
  const src = path.join(tmp.dir, "src.jpg");
  await sharp({ create: { width: 3000, height: 2000, channels: 3, background: { r: 200, g: 40, b: 30 } } })
    .withExif({ IFD0: { Make: "Scanco", Model: "Flat 9000" }, IFD3: { GPSLatitudeRef: "N", GPSLatitude: "51/1 30/1 0/1", GPSLongitudeRef: "W", GPSLongitude: "0/1 7/1 0/1" } })
    .withMetadata({ density: 600 }).jpeg().toFile(src);
  console.log("src", await exifr.parse(src, { tiff: true, gps: true, exif: true } as never));
  for (const format of ["jpeg", "webp", "png", "avif"] as const) {
    const out = path.join(tmp.dir, `o.${format === "jpeg" ? "jpg" : format}`);
    const r = await renderOutput({ master: src, dpi: 600, title: "Blue gull", creator: "Ana Ruiz", copyright: "© 2026 Ana Ruiz" }, { kind: "web", name: "web", size: { mode: "longEdge", longEdge: 2048 }, format }, { path: out });
    const m = await sharp(out).metadata();
    let ex; try { ex = await exifr.parse(out, { tiff: true, xmp: true, gps: true, exif: true, ifd0: true, jfif: true, ihdr: true } as never); } catch (e) { ex = String(e); }
    console.log(format, r.effectiveDpi, { density: m.density, exif: m.exif?.length, xmp: m.xmp?.toString() }, ex);
  }
});
