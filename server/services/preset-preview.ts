import path from "node:path";
import sharp from "sharp";
import { and, eq } from "drizzle-orm";
import type { Db } from "../db";
import { fragments, outputs, scans } from "../db/schema";
import { outputTitle } from "../presenters/fragment";
import { studioRights } from "./studio";
import type { Storage } from "../storage/storage";
import { badRequest, conflict, notFound } from "../errors";
import type { Preset } from "../../shared/schemas/presets";
import { isOutputError, outputExtension, renderOutput } from "../../worker/pipeline/output";

/**
 * Makes the preset's real output from the fragment's master into a temporary file (the same code a
 * batch runs), and sends back a reduced picture of it with the report: the print on its paper, the
 * mock-up as composed, the web copy as cropped or padded.
 */
export async function previewPreset(db: Db, library: Storage, input: { fragmentId: string; settings: Preset; size: number }) {
  const started = performance.now();
  const [f] = await db.select().from(fragments).where(eq(fragments.id, input.fragmentId));
  if (!f) throw notFound("That fragment");
  const [master] = await db
    .select()
    .from(outputs)
    .where(and(eq(outputs.fragmentId, f.id), eq(outputs.kind, "master")));
  if (!master) throw conflict("This fragment has no master yet: approve it and wait for its render.");
  const [scan] = await db.select({ name: scans.originalName }).from(scans).where(eq(scans.id, f.scanId));
  // The words and rights the batch's file would carry.
  const rights = await studioRights(db);
  return library.withScratch(async (dir) => {
    const target = path.join(dir, `preview.${outputExtension(input.settings)}`);
    try {
      const report = await library.withLocalFile(master.key, (masterPath) =>
        renderOutput(
          {
            master: masterPath,
            dpi: master.dpi,
            title: outputTitle(f.title, scan?.name, f.position),
            ...rights,
            shape: f.shape,
          },
          input.settings,
          { path: target },
        ),
      );
      // A PDF cannot be pictured by sharp here: show the page layout from the same code as a TIFF.
      const pictured =
        report.format === "pdf"
          ? null
          : await sharp(target)
              .resize(input.size, input.size, { fit: "inside", withoutEnlargement: true })
              .flatten({ background: "#ffffff" })
              .jpeg({ quality: 82 })
              .toBuffer();
      return {
        image: pictured ? `data:image/jpeg;base64,${pictured.toString("base64")}` : "",
        report: {
          pixelWidth: report.pixelWidth,
          pixelHeight: report.pixelHeight,
          printedIn: report.printedIn,
          effectiveDpi: report.effectiveDpi,
          warnings: report.warnings,
          format: report.format,
        },
        ms: Math.round(performance.now() - started),
      };
    } catch (err) {
      if (isOutputError(err) && err.code !== "failed") throw badRequest(err.message, "settings");
      throw err;
    }
  });
}
