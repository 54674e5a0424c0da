import pLimit from "p-limit";
import sharp from "sharp";
import { and, eq } from "drizzle-orm";
import type { Db } from "../db";
import { batchItems, fragments, outputs, presetVersions, presets, scans } from "../db/schema";
import { outputFileName } from "../presenters/fragment";
import { AppError, notFound } from "../errors";
import type { Storage } from "../storage/storage";
import type { Role } from "../../shared/roles";
import { madeFromVisibleTo } from "./fragments";

/** Long edge of a batch output's picture on the batch page, in pixels. */
export const OUTPUT_THUMB_EDGE = 320;
/** The long edges a picture of an output comes in: the table's, and the larger look at one. */
export const OUTPUT_PICTURE_EDGES = [OUTPUT_THUMB_EDGE, 1024] as const;
export type OutputPictureEdge = (typeof OUTPUT_PICTURE_EDGES)[number];

/**
 * Its key: per output row and the time its file was last written, so a file made again (same
 * key, new bytes) gets a new picture; pictures of files no row names any more are left-overs for
 * the library tidy.
 */
export const outputThumbKey = (id: string, updatedAt: Date, edge: OutputPictureEdge = OUTPUT_THUMB_EDGE) =>
  `thumbs/outputs/${id}-${updatedAt.getTime()}${edge === OUTPUT_THUMB_EDGE ? "" : `-e${edge}`}.jpg`;

/**
 * The worker makes each new web copy's small picture as it stores the master
 * (`premakeOutputPicture`), so the approved work rarely has the web server make one. The rest
 * (batch outputs', the larger look, files made before, a picture removed) are made in the web
 * server on the first ask, from whole print files and masters: at most two at once,
 * so a batch page of a hundred outputs opened for the first time does not take every core; one
 * picture asked for several times at once is made once; and past a queue of MAX_WAITING the
 * server says it is busy instead of piling up work nobody may still be waiting for.
 */
const making = pLimit(2);
const inFlight = new Map<string, Promise<void>>();
export const MAX_WAITING = 64;
/** Pictures being made and waiting to be, now. */
export const picturesInHand = () => making.activeCount + making.pendingCount;

/** The output behind one item of a batch, as the signed-in role may see it (404 otherwise). */
export async function batchItemOutput(db: Db, batchId: string, itemId: string, role: Role) {
  const [row] = await db
    .select({
      id: outputs.id,
      key: outputs.key,
      kind: outputs.kind,
      format: outputs.format,
      updatedAt: outputs.updatedAt,
      scanName: scans.originalName,
      position: fragments.position,
      presetName: presets.name,
    })
    .from(batchItems)
    .innerJoin(outputs, eq(outputs.id, batchItems.outputId))
    .innerJoin(fragments, eq(fragments.id, batchItems.fragmentId))
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .leftJoin(presetVersions, eq(presetVersions.id, batchItems.presetVersionId))
    .leftJoin(presets, eq(presets.id, presetVersions.presetId))
    .where(and(eq(batchItems.id, itemId), eq(batchItems.batchId, batchId), eq(batchItems.state, "done"), madeFromVisibleTo(role)));
  if (!row) throw notFound("That output (it is not made, or not in this batch)");
  // Named as in the batch's zip (before a clash there would number it).
  return { ...row, fileName: outputFileName(row.scanName, row.position, row.presetName ?? row.kind, row.format) };
}

/**
 * A small picture of an output as it came out (the mock-up in its frame, the print on its
 * paper), cached in the library. Colours go to sRGB for the screen (sharp converts with the
 * file's own ICC profile); transparency is shown on white. A PDF has none here.
 * Returns its key.
 */
export async function outputThumb(
  library: Storage,
  out: { id: string; key: string; format: string; updatedAt: Date },
  opts: { maxPixels: number; edge?: OutputPictureEdge },
): Promise<string> {
  const edge = opts.edge ?? OUTPUT_THUMB_EDGE;
  const key = outputThumbKey(out.id, out.updatedAt, edge);
  if (await library.exists(key)) return key;
  if (out.format === "pdf") throw new AppError(404, "not_found", "A PDF has no picture here; download it to look at it.");
  let job = inFlight.get(key);
  if (!job) {
    if (making.pendingCount >= MAX_WAITING)
      throw new AppError(503, "unavailable", "The server is making many pictures just now. Try again in a moment.");
    job = making(async () => {
      // Made meanwhile (by a request that finished just before this one started): nothing to do.
      if (await library.exists(key)) return;
      await library.withLocalFile(out.key, (file) =>
        library.writeAtomic(key, async (tmp) => {
          // Outputs are made from scans within the studio's pixel limit; a file past it is refused.
          await sharp(file, { limitInputPixels: opts.maxPixels, sequentialRead: true })
            .resize(edge, edge, { fit: "inside", withoutEnlargement: true })
            .flatten({ background: "#ffffff" })
            .jpeg({ quality: 80 })
            .toFile(tmp);
        }),
      );
    }).finally(() => inFlight.delete(key));
    inFlight.set(key, job);
  }
  await job;
  return key;
}

/**
 * Makes an output's small picture right after its file is stored (in the worker), so nobody waits
 * for it on the first look. A picture that cannot be made now is only logged: the web server
 * makes it on the first ask instead. A PDF has none.
 */
export async function premakeOutputPicture(
  library: Storage,
  out: { id: string; key: string; format: string; updatedAt: Date },
  opts: { maxPixels: number; log: { warn: (o: object, msg: string) => void } },
): Promise<void> {
  if (out.format === "pdf") return;
  try {
    await outputThumb(library, out, { maxPixels: opts.maxPixels });
  } catch (err) {
    opts.log.warn({ err, outputId: out.id }, "output picture not made now; the web server makes it when asked");
  }
}
