import sharp, { type Sharp } from "sharp";
import type { Storage } from "../storage/storage";
import { AppError } from "../errors";
import { boxOfPoints, rectCorners, rotatePoint } from "../../shared/geometry";
import type { Box, Rect } from "../../shared/schemas/fragments";
import type { Point } from "../../shared/geometry";

/** Long edge of a fragment thumbnail in the review strip, in pixels. */
export const FRAGMENT_THUMB_EDGE = 240;

/**
 * Its key: per fragment and revision, and per way of making it ("m": a cut-out's picture is masked
 * to its outline; pictures made before that are left-overs for the library tidy).
 */
export const fragmentThumbKey = (id: string, revision: number) => `thumbs/fragments/${id}-r${revision}-m.jpg`;

/**
 * A small upright picture of a fragment, cut from the scan's preview (not the original), cached
 * per revision so an edit shows at once and an unchanged fragment costs nothing. A cut-out shows
 * only itself, on white, as its master does: its rectangle's corners hold the bed and the edges of
 * its neighbours, which are no part of it (and may not be approved). Returns its key.
 */
export async function fragmentThumb(
  library: Storage,
  f: {
    id: string;
    revision: number;
    box: Box;
    rect: Rect;
    angle: number;
    shape?: "rectangle" | "cutout";
    outline?: Point[];
  },
  scan: { previewKey: string | null; width: number | null },
): Promise<string> {
  const key = fragmentThumbKey(f.id, f.revision);
  if (await library.exists(key)) return key;
  // Not a server fault: the picture cannot exist until the scan has its preview (or if it failed).
  if (!scan.previewKey || !scan.width) throw new AppError(404, "not_found", "This fragment has no picture yet: its scan has no preview.");
  const cut = await library.withLocalFile(scan.previewKey, (previewPath) => cutFromPreview(previewPath, f, scan.width!));
  const upright = f.shape === "cutout" && f.outline && f.outline.length >= 3 ? await maskToOutline(cut, f.rect, f.angle, f.outline) : cut;
  await library.writeAtomic(key, async (tmp) => {
    await upright
      .resize(FRAGMENT_THUMB_EDGE, FRAGMENT_THUMB_EDGE, { fit: "inside", withoutEnlargement: true })
      .flatten({ background: "#ffffff" })
      .jpeg({ quality: 80 })
      .toFile(tmp);
  });
  return key;
}

/**
 * Keeps only the inside of `outline` (scan pixels) in an upright cut of `rect`: each point is
 * turned about the rectangle's centre as the cut turned the scan (cropUpright), placed in the
 * cut's frame and scaled to its size; outside is made transparent (flattened to white later).
 */
async function maskToOutline(cut: Sharp, rect: Rect, angle: number, outline: Point[]): Promise<Sharp> {
  const { data, info } = await cut.ensureAlpha().raw().toBuffer({ resolveWithObject: true });
  const sx = info.width / rect.width;
  const sy = info.height / rect.height;
  const points = outline
    .map((p) => {
      const [x, y] = rotatePoint(p, [rect.cx, rect.cy], angle);
      return `${((x - rect.cx + rect.width / 2) * sx).toFixed(2)},${((y - rect.cy + rect.height / 2) * sy).toFixed(2)}`;
    })
    .join(" ");
  const mask = Buffer.from(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${info.width}" height="${info.height}"><polygon points="${points}" fill="#fff"/></svg>`,
  );
  const masked = await sharp(data, {
    raw: { width: info.width, height: info.height, channels: info.channels },
  })
    .composite([{ input: mask, blend: "dest-in" }])
    .png()
    .toBuffer();
  return sharp(masked);
}

async function cutFromPreview(previewPath: string, f: { rect: Rect; angle: number }, scanWidth: number) {
  const meta = await sharp(previewPath).metadata();
  const s = (meta.width ?? 1) / scanWidth;
  // The region around the whole turned rectangle (a cut-out's box can be smaller), in preview pixels.
  const around = boxOfPoints(rectCorners(f.rect, f.angle), Infinity, Infinity);
  const pad = 2;
  const left = Math.max(0, Math.floor(around.x * s) - pad);
  const top = Math.max(0, Math.floor(around.y * s) - pad);
  const width = Math.max(1, Math.min((meta.width ?? 1) - left, Math.ceil(around.width * s) + 2 * pad));
  const height = Math.max(1, Math.min((meta.height ?? 1) - top, Math.ceil(around.height * s) + 2 * pad));
  const region = await sharp(previewPath).extract({ left, top, width, height }).toBuffer();
  return cropUpright(region, { x: left, y: top }, s, f.rect, f.angle);
}

/**
 * The upright piece from a region of the scan: `region` holds scan pixels at scale `s` (region
 * pixels per scan pixel) whose top-left corner is at `origin` in scaled pixels. The region is
 * turned by `angle` about its centre (sharp enlarges the canvas), and the fragment's rect is cut
 * out around where its centre went. Example: a preview region of a 7.5° piece → its upright crop.
 */
export async function cropUpright(region: Buffer, origin: { x: number; y: number }, s: number, rect: Rect, angle: number) {
  const meta = await sharp(region).metadata();
  const width = meta.width ?? 1;
  const height = meta.height ?? 1;
  const { data, info } = await sharp(region).rotate(angle, { background: "#ffffff" }).raw().toBuffer({ resolveWithObject: true });
  const c = rotatePoint([rect.cx * s - origin.x, rect.cy * s - origin.y], [width / 2, height / 2], angle);
  const cx = c[0] - width / 2 + info.width / 2;
  const cy = c[1] - height / 2 + info.height / 2;
  const w = Math.max(1, Math.min(info.width, Math.round(rect.width * s)));
  const h = Math.max(1, Math.min(info.height, Math.round(rect.height * s)));
  const left = Math.min(Math.max(0, Math.round(cx - w / 2)), info.width - w);
  const top = Math.min(Math.max(0, Math.round(cy - h / 2)), info.height - h);
  return sharp(data, {
    raw: { width: info.width, height: info.height, channels: info.channels },
  }).extract({ left, top, width: w, height: h });
}
