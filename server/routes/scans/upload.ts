import fsp from "node:fs/promises";
import path from "node:path";
import multer from "multer";
import { SNIFF_BYTES, sniff } from "../../../worker/pipeline/sniff";
import type { RequestHandler } from "express";
import { MAX_FILES_PER_UPLOAD } from "../../../shared/limits";
import { badRequest, unsupportedMedia } from "../../errors";
import { scanDisplayName } from "../../services/intake";

/** The name a person gave the file, made safe to show and store: no folders, on one line (intake.ts). */
export function cleanFileName(raw: string): string {
  // Browsers send UTF-8; multer hands it over read as latin1.
  const utf8 = Buffer.from(raw, "latin1").toString("utf8");
  return scanDisplayName(path.basename(utf8.replace(/\\/g, "/")), "upload");
}

/**
 * Multer into the library's temp folder (same filesystem as the library), with size and count
 * limits. Form data the parser cannot read (no boundary, a broken part header, a body cut off) is
 * the sender's mistake, a 400; multer has removed whatever it had written by then.
 */
export function uploadMiddleware(tempDir: string, maxBytes: number): RequestHandler {
  const parse = multer({
    dest: tempDir,
    limits: { fileSize: maxBytes, files: MAX_FILES_PER_UPLOAD, fields: 10, parts: MAX_FILES_PER_UPLOAD + 10 },
  }).array("files", MAX_FILES_PER_UPLOAD);
  return (req, res, next) =>
    parse(req, res, (err?: unknown) => {
      if (!err || err instanceof multer.MulterError) return next(err);
      // An error with a system code (a full disk, a missing folder) is ours, not the sender's.
      if (err instanceof Error && !(err as NodeJS.ErrnoException).code) {
        return next(
          badRequest(`Upload refused: the form data is malformed (${err.message.replace(/^Multipart: /, "")}). Send the files again.`),
        );
      }
      next(err);
    });
}

/** Removes upload temps that are still there (filed ones are gone already); never throws. */
export async function removeTemps(files: Express.Multer.File[]): Promise<void> {
  await Promise.all(files.map((f) => fsp.rm(f.path, { force: true }).catch(() => {})));
}

/**
 * Sniffs each uploaded file by its content (not its name or the browser's claim). Any file that is
 * not a TIFF, JPEG, PNG or WebP refuses the whole request, naming it; the temps are removed. An
 * empty file is no wrong type: it is a scan whose copy stopped before its first byte, said so apart.
 */
export async function sniffUploads(files: Express.Multer.File[]): Promise<void> {
  const empty: string[] = [];
  const refused: string[] = [];
  for (const f of files) {
    if (f.size === 0) {
      empty.push(cleanFileName(f.originalname));
      continue;
    }
    const fh = await fsp.open(f.path, "r");
    const head = Buffer.alloc(Math.min(SNIFF_BYTES, f.size));
    try {
      await fh.read(head, 0, head.length, 0);
    } finally {
      await fh.close();
    }
    const found = sniff(head);
    if (found.kind !== "scan") refused.push(`${cleanFileName(f.originalname)} (it holds ${found.what})`);
  }
  if (empty.length || refused.length) {
    await removeTemps(files);
    throw unsupportedMedia([emptyMessage(empty), wrongTypeMessage(refused)].filter(Boolean).join(" "));
  }
}

/** "a.tif is empty (0 bytes): …", or "a.tif and b.tif are empty (0 bytes): …"; "" for none. */
function emptyMessage(names: string[]): string {
  if (!names.length) return "";
  const list = names.length === 1 ? names[0] : `${names.slice(0, -1).join(", ")} and ${names.at(-1)}`;
  const one = names.length === 1;
  return `${list} ${one ? "is" : "are"} empty (0 bytes): the scan was probably cut off while copying. Copy ${one ? "it" : "them"} again from the scanner, or scan again.`;
}

function wrongTypeMessage(refused: string[]): string {
  return refused.length ? `Not a scan Platen can read: ${refused.join(", ")}. Expected TIFF, JPEG, PNG or WebP.` : "";
}
