import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { getFragment } from "../../services/fragments";
import { fragmentOffsite, queueCheckAll, recheckFragment, recopyFragment } from "../../services/offsite";
import type { AppDeps } from "../../app";
import { recordAudit } from "../../services/audit";
import { keptCopyForDownload, listKeptCopies, removeKeptCopy } from "../../services/offsite-kept";
import { sendStored } from "../send-stored";

/**
 * The off-site copy of masters: status per fragment's master, re-check now, copy again, check all;
 * and the copies kept there after their piece's files were deleted: list, download, remove.
 */
export function offsiteRouter(deps: AppDeps): Router {
  const router = Router();
  const { db } = deps.database;
  handle(router, API.fragmentsOffsite, async ({ params, user }) => {
    await getFragment(db, params.id, user.role);
    return fragmentOffsite(deps, params.id);
  });
  handle(router, API.fragmentsOffsiteCheck, async ({ params, user, req }) => {
    await getFragment(db, params.id, user.role);
    const result = await recheckFragment(deps, params.id);
    req.log.info({ fragmentId: params.id, status: result.copy?.status }, "off-site copy re-checked");
    await recordAudit(db, {
      action: "offsite.check",
      subjectType: "fragment",
      subjectId: params.id,
      summary: `Re-checked the off-site copy of a master: ${result.copy?.status ?? "no copy"}`,
      after: { status: result.copy?.status ?? null },
    });
    return result;
  });
  handle(router, API.fragmentsOffsiteCopy, async ({ params, user, res }) => {
    await getFragment(db, params.id, user.role);
    res.status(202);
    return recopyFragment(deps, params.id, (tx) =>
      recordAudit(tx, {
        action: "offsite.copy",
        subjectType: "fragment",
        subjectId: params.id,
        summary: "Queued a fresh off-site copy of a master",
      }),
    );
  });
  handle(router, API.offsiteCheckAll, async ({ res }) => {
    res.status(202);
    return queueCheckAll(deps, (tx, queued) =>
      recordAudit(tx, {
        action: "offsite.check_all",
        subjectType: "studio",
        subjectId: null,
        summary: `Queued a re-check of every off-site copy (${queued})`,
        after: { queued },
      }),
    );
  });
  handle(router, API.offsiteKept, () => listKeptCopies(deps));
  handle(router, API.offsiteKeptDownload, async ({ query, req, res }) => {
    const { offsite, copy } = await keptCopyForDownload(deps, query.key);
    await sendStored(req, res, offsite, copy.key, {
      what: `The kept off-site copy "${copy.key}"`,
      downloadName: copy.fileName,
      // Byte for byte what was copied; no browser should keep it.
      cacheControl: "private, no-store",
    });
  });
  handle(router, API.offsiteKeptRemove, async ({ query, req }) => {
    const removed = await removeKeptCopy(deps, query.key);
    req.log.info({ key: removed.key, sizeBytes: removed.sizeBytes }, "kept off-site copy removed");
    return removed;
  });
  return router;
}
