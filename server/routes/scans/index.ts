import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { badRequest, notFound } from "../../errors";
import { getScan, getScanRow, listScans, restoreScanResolution, retryScan, setScanResolution } from "../../services/scans";
import { getStudioSettings } from "../../services/studio";
import { intakeFile } from "../../services/intake";
import { cleanFileName, removeTemps, sniffUploads, uploadMiddleware } from "./upload";
import type { AppDeps } from "../../app";
import { uploadDir } from "../../storage";
import { sendStored } from "../send-stored";

export function scansRouter(deps: AppDeps): Router {
  const router = Router();
  const { database, boss, library, config } = deps;
  const { db } = database;

  handle(router, API.scansList, ({ query }) => listScans(db, query));

  handle(
    router,
    API.scansUpload,
    async ({ req, res, user }) => {
      const files = (req.files as Express.Multer.File[] | undefined) ?? [];
      if (!files.length) throw badRequest('Expected one or more files in the "files" field but received none.', "files");
      try {
        await sniffUploads(files);
        const results = [];
        for (const f of files) {
          const originalName = cleanFileName(f.originalname);
          const r = await intakeFile(
            { database, boss, library, log: req.log },
            {
              path: f.path,
              originalName,
              source: "upload",
              uploadedBy: user.id,
              removeSource: true,
            },
          );
          results.push({
            originalName,
            scanId: r.scanId,
            duplicateOf: r.duplicateOf,
            triedAgain: r.triedAgain,
          });
        }
        res.status(201);
        return { results };
      } finally {
        // Filed uploads are already gone from the temp folder; one that failed, and any after it,
        // must not stay there (the person still has the file and can send it again).
        await removeTemps(files);
      }
    },
    [uploadMiddleware(uploadDir(library), config.maxUploadBytes)],
  );

  handle(router, API.scansGet, async ({ params }) => ({ scan: await getScan(db, params.id) }));

  const sendImage =
    (which: "previewKey" | "thumbKey") =>
    async ({ params, req, res }: { params: { id: string }; req: import("express").Request; res: import("express").Response }) => {
      const row = await getScanRow(db, params.id);
      const key = row[which];
      if (!key) throw notFound("The preview of this scan (it is not analysed yet)");
      await sendStored(req, res, library, key, {
        what: "The preview file",
        type: "image/jpeg",
        cacheControl: "private, max-age=300",
      });
    };
  handle(router, API.scansPreview, sendImage("previewKey"));
  handle(router, API.scansThumb, sendImage("thumbKey"));

  handle(router, API.scansSetResolution, async ({ params, body }) => ({
    scan: await setScanResolution(database, boss, params.id, body),
  }));
  handle(router, API.scansRestoreResolution, async ({ params }) => ({
    scan: await restoreScanResolution(database, boss, params.id, (await getStudioSettings(db, config)).defaultDpi),
  }));

  handle(router, API.scansRetry, async ({ params, req }) => {
    const scan = await retryScan(database, boss, params.id);
    req.log.info({ scanId: scan.id }, "scan retry queued");
    return { scan };
  });

  return router;
}
