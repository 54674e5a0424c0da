import type { Request, Response } from "express";
import { pipeline } from "node:stream/promises";
import { AppError, notFound } from "../errors";
import type { Storage } from "../storage/storage";
import { isStorageError } from "../storage/storage";
import { contentTypeFor } from "../storage/keys";
import { outputThumb } from "../services/output-thumbs";

/**
 * Sends a stored file as the response, streamed from the library (a local file or an object in the
 * bucket), never read whole into memory. Honours a single byte range (206) for resumable downloads.
 * `what` names the file in the 404 message ("The preview of this scan").
 */
export async function sendStored(
  req: Request,
  res: Response,
  storage: Storage,
  key: string,
  opts: { what: string; type?: string; downloadName?: string; cacheControl?: string },
): Promise<void> {
  let stat;
  try {
    stat = await storage.stat(key);
  } catch (err) {
    if (isStorageError(err, "missing")) throw notFound(opts.what);
    throw err;
  }
  const ranges = req.headers.range ? req.range(stat.size, { combine: true }) : undefined;
  if (ranges === -1) {
    res.setHeader("Content-Range", `bytes */${stat.size}`);
    throw new AppError(416, "bad_request", `The requested range is outside the file (${stat.size} bytes).`);
  }
  const range = Array.isArray(ranges) && ranges.length === 1 && ranges.type === "bytes" ? ranges[0] : undefined;
  if (opts.downloadName) res.attachment(opts.downloadName);
  // Only for the file itself: an error answer (a missing file, a bad range) is never kept.
  if (opts.cacheControl) res.setHeader("Cache-Control", opts.cacheControl);
  res.setHeader("Content-Type", opts.type ?? contentTypeFor(key));
  res.setHeader("Accept-Ranges", "bytes");
  res.setHeader("Last-Modified", stat.modified.toUTCString());
  if (range) {
    res.status(206);
    res.setHeader("Content-Range", `bytes ${range.start}-${range.end}/${stat.size}`);
    res.setHeader("Content-Length", String(range.end - range.start + 1));
  } else {
    res.setHeader("Content-Length", String(stat.size));
  }
  let stream;
  try {
    stream = await storage.createReadStream(key, range);
  } catch (err) {
    if (isStorageError(err, "missing")) throw notFound(opts.what);
    throw err;
  }
  try {
    await pipeline(stream, res);
  } catch (err) {
    // The person closed the page or cancelled: normal. Anything else cuts the response short,
    // which the client sees as a failed download (headers are out, no error body can follow).
    if ((err as NodeJS.ErrnoException).code === "ERR_STREAM_PREMATURE_CLOSE") req.log?.debug({ key }, "download closed by the client");
    else req.log?.warn({ err, key }, "download cut short");
    stream.destroy();
    res.destroy();
  }
}

/**
 * Sends the small picture of an output (made on the first ask, then kept), cached by the browser
 * for a day: its address changes with the file. A server too busy making pictures says when to
 * ask again (503 with Retry-After).
 */
export async function sendOutputThumb(
  req: Request,
  res: Response,
  storage: Storage,
  out: Parameters<typeof outputThumb>[1],
  opts: { maxPixels: number; what: string; edge?: 320 | 1024 },
): Promise<void> {
  let key: string;
  // A picture stands for its file: with the file gone from the library, none is shown either.
  if (!(await storage.exists(out.key))) throw notFound(opts.what);
  try {
    key = await outputThumb(storage, out, { maxPixels: opts.maxPixels, edge: opts.edge });
  } catch (err) {
    if (err instanceof AppError && err.status === 503) res.setHeader("Retry-After", "5");
    throw err;
  }
  await sendStored(req, res, storage, key, {
    what: opts.what,
    type: "image/jpeg",
    cacheControl: "private, max-age=86400",
  });
}
