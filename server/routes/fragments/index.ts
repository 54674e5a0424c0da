import { Router } from "express";
import { and, eq } from "drizzle-orm";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { notFound } from "../../errors";
import { fragments, outputs, scans } from "../../db/schema";
import {
  approveRemaining,
  drawFragment,
  getFragment,
  listFragments,
  listScanFragments,
  mergeFragments,
  requestResplit,
  resetFragment,
  unmergeFragment,
  updateFragment,
} from "../../services/fragments";
import { fragmentThumb } from "../../services/fragment-thumbs";
import { deleteFragmentFiles, fragmentFilesPlan } from "../../services/fragment-files";
import { retryFragmentRender, retryScanRenders } from "../../services/render-retry";
import { getScan, getScanRow } from "../../services/scans";
import type { AppDeps } from "../../app";
import { sendOutputThumb, sendStored } from "../send-stored";

export function fragmentsRouter(deps: AppDeps): Router {
  const router = Router();
  const { database, boss, library, offsite } = deps;
  const { db } = database;

  handle(router, API.scanFragments, async ({ params, user }) => {
    await getScanRow(db, params.id);
    return { fragments: await listScanFragments(db, params.id, user.role) };
  });
  handle(router, API.fragmentsDraw, async ({ params, body, user, res }) => {
    const fragment = await drawFragment(database, boss, user, params.id, body);
    res.status(201);
    return { fragment };
  });
  handle(router, API.fragmentsApproveRemaining, async ({ params, user, req }) => {
    const list = await approveRemaining(database, boss, user, params.id);
    req.log.info({ scanId: params.id }, "approved the remaining fragments");
    return { fragments: list };
  });
  handle(router, API.scansResplit, async ({ params, body }) => {
    await requestResplit(database, boss, params.id, body.sensitivity);
    return { scan: await getScan(db, params.id) };
  });
  handle(router, API.scansRenderRetry, async ({ params, user, req }) => {
    const result = await retryScanRenders(database, boss, user, params.id);
    req.log.info({ scanId: params.id, queued: result.queued }, "failed renders queued again");
    return result;
  });
  handle(router, API.fragmentsRenderRetry, async ({ params, user, req }) => {
    const fragment = await retryFragmentRender(database, boss, user, params.id);
    req.log.info({ fragmentId: fragment.id }, "failed render queued again");
    return { fragment };
  });
  handle(router, API.fragmentsList, ({ query, user }) => listFragments(db, user.role, query));
  handle(router, API.fragmentsMerge, async ({ body, user, res }) => {
    const fragment = await mergeFragments(database, boss, user, body.ids);
    res.status(201);
    return { fragment };
  });
  handle(router, API.fragmentsGet, async ({ params, user }) => ({
    fragment: await getFragment(db, params.id, user.role),
  }));
  handle(router, API.fragmentsUpdate, async ({ params, body, user, req }) => {
    const fragment = await updateFragment(database, boss, user, params.id, body);
    req.log.info({ fragmentId: fragment.id, patch: Object.keys(body) }, "fragment updated");
    return { fragment };
  });
  handle(router, API.fragmentsFilesPlan, async ({ params }) => ({
    plan: await fragmentFilesPlan(db, params.id),
  }));
  handle(router, API.fragmentsFilesDelete, async ({ params, query, user, req }) =>
    deleteFragmentFiles({ database, boss, library, offsite, log: req.log }, user, params.id, query.upTo, query.offsite),
  );
  handle(router, API.fragmentsReset, async ({ params, user }) => ({
    fragment: await resetFragment(database, boss, user, params.id),
  }));
  handle(router, API.fragmentsUnmerge, async ({ params, user }) => ({
    fragments: await unmergeFragment(database, boss, user, params.id),
  }));

  handle(router, API.fragmentsThumb, async ({ params, user, req, res }) => {
    const f = await getFragment(db, params.id, user.role);
    const [row] = await db.select({ previewKey: scans.previewKey, width: scans.width }).from(scans).where(eq(scans.id, f.scanId));
    const key = await fragmentThumb(library, f, row!);
    await sendStored(req, res, library, key, {
      what: "The fragment's picture",
      type: "image/jpeg",
      cacheControl: "private, max-age=3600",
    });
  });

  handle(router, API.fragmentsOutput, async ({ params, user, req, res }) => {
    const f = await getFragment(db, params.id, user.role);
    const out = f.outputs.find((o) => o.kind === params.kind);
    const [row] = await db
      .select({ key: outputs.key })
      .from(outputs)
      .innerJoin(fragments, eq(fragments.id, outputs.fragmentId))
      .where(and(eq(outputs.fragmentId, f.id), eq(outputs.kind, params.kind)));
    if (!out || !row) throw notFound(`The ${params.kind} file of this fragment (it is not rendered yet)`);
    await sendStored(req, res, library, row.key, {
      what: `The ${params.kind} file of this fragment`,
      downloadName: out.fileName,
      cacheControl: "private, no-cache",
    });
  });
  handle(router, API.fragmentsOutputThumb, async ({ params, user, req, res }) => {
    const f = await getFragment(db, params.id, user.role);
    const [row] = await db
      .select({
        id: outputs.id,
        key: outputs.key,
        format: outputs.format,
        updatedAt: outputs.updatedAt,
      })
      .from(outputs)
      .where(and(eq(outputs.fragmentId, f.id), eq(outputs.kind, params.kind)));
    if (!f.outputs.some((o) => o.kind === params.kind) || !row)
      throw notFound(`The ${params.kind} file of this fragment (it is not rendered yet)`);
    // The address carries the file's time (?v=), so a new file is a new address.
    await sendOutputThumb(req, res, library, row, {
      maxPixels: deps.config.maxPixels,
      what: `The picture of this fragment's ${params.kind} file`,
    });
  });
  return router;
}
