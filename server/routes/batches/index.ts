import { Router } from "express";
import { createHash } from "node:crypto";
import { PassThrough } from "node:stream";
import { ZipArchive } from "archiver";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { badRequest, conflict } from "../../errors";
import {
  batchDetail,
  batchFiles,
  cancelBatch,
  createOutputBatch,
  estimateBatch,
  rerunBatch,
  retryFailed,
} from "../../services/output-batches";
import { getBatch, listBatches } from "../../services/batches";
import type { AppDeps } from "../../app";
import type { Storage } from "../../storage/storage";
import { batchItemOutput } from "../../services/output-thumbs";
import { sendOutputThumb, sendStored } from "../send-stored";

/** The caution that travels with a listing pack (see the product brief). */
export const RIGHTS_NOTICE = `Before you sell or publish these images

Pieces cut from printed publications (magazines, books, packaging, posters) may still be under
copyright, even when cut up and collaged. Check the rights and licences for each source under
the law where you sell or publish, and keep a note of what you checked.
`;

/**
 * One CSV cell (RFC 4180 quoting). Text that a spreadsheet would run as a formula (it starts with
 * = + - @, a tab or a return) gets a leading single quote, as OWASP advises against CSV injection:
 * titles, scan and preset names are typed by people.
 */
function csvCell(v: unknown): string {
  let s = v === null || v === undefined ? "" : String(v);
  if (typeof v === "string" && /^[=+\-@\t\r]/.test(s)) s = `'${s}`;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/**
 * A name for a file at the top of the zip: no folders (so nothing unpacks outside the folder it is
 * unpacked into), no characters that some systems refuse or read specially, not starting with a
 * dot or a dash, and different from every name taken before it.
 */
function zipEntryName(wanted: string, fallback: string, taken: Set<string>): string {
  const cleaned = wanted
    // eslint-disable-next-line no-control-regex
    .replace(/[\u0000-\u001f\u007f/\\:*?"<>|]+/g, "-")
    .replace(/^[\s.=+\-@]+/, "")
    .replace(/[\s.]+$/, "")
    .slice(0, 200);
  const base = cleaned || fallback;
  let name = base;
  const dot = base.lastIndexOf(".");
  const [stem, ext] = dot > 0 ? [base.slice(0, dot), base.slice(dot)] : [base, ""];
  for (let n = 2; taken.has(name.toLowerCase()); n++) name = `${stem}-${n}${ext}`;
  taken.add(name.toLowerCase());
  return name;
}

/** Streams one stored file into the zip (no other file open meanwhile) and returns its SHA-256. */
async function appendStored(zip: ZipArchive, library: Storage, key: string, name: string): Promise<string> {
  const hash = createHash("sha256");
  const source = await library.createReadStream(key);
  const tap = new PassThrough();
  tap.on("data", (chunk: Buffer) => hash.update(chunk));
  await new Promise<void>((resolve, reject) => {
    const fail = (err: Error) => {
      zip.off("entry", done);
      reject(err);
    };
    const done = () => {
      source.off("error", fail);
      zip.off("error", fail);
      resolve();
    };
    zip.once("entry", done);
    zip.once("error", fail);
    source.once("error", fail);
    zip.append(source.pipe(tap), { name });
  });
  return hash.digest("hex");
}

export function batchesRouter({ config, database, boss, library }: AppDeps): Router {
  const router = Router();
  const { db } = database;
  handle(router, API.batchesList, async ({ user }) => ({ batches: await listBatches(db, user.role) }));
  handle(router, API.batchesEstimate, async ({ body }) => {
    try {
      return await estimateBatch(db, body);
    } catch (err) {
      // A print preset saved before its paper was checked can leave no print area: every output
      // of it fails, and the estimate says why instead of failing as a server error.
      if (err instanceof RangeError) throw badRequest(`A picked preset makes no file: ${err.message}.`, "presetIds");
      throw err;
    }
  });
  handle(router, API.batchesCreate, async ({ body, user, res, req }) => {
    const batch = await createOutputBatch(database, boss, user.id, body);
    req.log.info({ batchId: batch.id, total: batch.counts.total }, "batch started");
    res.status(201);
    return { batch };
  });
  handle(router, API.batchesGet, ({ params, user }) => batchDetail(db, params.id, user.role));
  handle(router, API.batchesRetry, async ({ params }) => ({ batch: await retryFailed(database, boss, params.id) }));
  handle(router, API.batchesCancel, async ({ params }) => ({ batch: await cancelBatch(db, params.id) }));
  handle(router, API.batchesRerun, async ({ params, body, user, res }) => {
    const batch = await rerunBatch(database, boss, user.id, params.id, body);
    res.status(201);
    return { batch };
  });

  handle(router, API.batchesItemFile, async ({ params, user, req, res }) => {
    const out = await batchItemOutput(db, params.id, params.itemId, user.role);
    await sendStored(req, res, library, out.key, { what: "This output's file", downloadName: out.fileName });
  });
  handle(router, API.batchesItemThumb, async ({ params, query, user, req, res }) => {
    const out = await batchItemOutput(db, params.id, params.itemId, user.role);
    await sendOutputThumb(req, res, library, out, {
      maxPixels: config.maxPixels,
      what: "This output's picture",
      edge: query.edge as 320 | 1024,
    });
  });

  // A zip streamed straight to the response (never built in memory), with a CSV of every output.
  handle(router, API.batchesDownload, async ({ params, query, user, req, res }) => {
    const batch = await getBatch(db, params.id);
    const { detail, files } = await batchFiles(db, params.id, user.role);
    if (!files.length) throw conflict("Nothing in this batch is made yet, so there is nothing to download.");
    const byItem = new Map(detail.items.map((i) => [i.id, i]));
    const safe = batch.name.replace(/[^\w.-]+/g, "-").slice(0, 60) || "batch";
    res.attachment(`${safe}.zip`);
    const zip = new ZipArchive({ zlib: { level: 6 } });
    zip.pipe(res);
    const header = [
      "title",
      "scan",
      "fragment",
      "preset",
      "file",
      "width_px",
      "height_px",
      "printed_width_in",
      "printed_height_in",
      "printed_width_cm",
      "printed_height_cm",
      "effective_dpi",
      "warnings",
      "sha256",
    ];
    const lines = [header.join(",")];
    const taken = new Set(["outputs.csv", "rights-notice.txt"]);
    // One file at a time from the library (a folder or a bucket), hashed on its way into the zip.
    for (const f of files) {
      const item = byItem.get(f.itemId)!;
      const name = zipEntryName(item.fileName ?? "", `${f.itemId}.${f.format}`, taken);
      let sha256: string;
      try {
        sha256 = await appendStored(zip, library, f.key, name);
      } catch (err) {
        // The zip is half sent: cut it short (the browser shows a failed download) and log why.
        req.log.error({ err, key: f.key, batchId: params.id }, "batch download cut short");
        zip.abort();
        res.destroy();
        return;
      }
      const p = item.printedIn;
      lines.push(
        [
          item.fragmentTitle,
          item.scanName,
          item.position,
          item.preset,
          name,
          item.pixelWidth,
          item.pixelHeight,
          p ? p.width.toFixed(3) : "",
          p ? p.height.toFixed(3) : "",
          p ? (p.width * 2.54).toFixed(2) : "",
          p ? (p.height * 2.54).toFixed(2) : "",
          item.effectiveDpi ? Math.round(item.effectiveDpi) : "",
          item.warnings.join("; "),
          sha256,
        ]
          .map(csvCell)
          .join(","),
      );
    }
    zip.append(lines.join("\n") + "\n", { name: "outputs.csv" });
    if (query.pack === "listing") zip.append(RIGHTS_NOTICE, { name: "RIGHTS-NOTICE.txt" });
    await zip.finalize();
  });
  return router;
}
