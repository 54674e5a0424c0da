import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { getAuditEvent, listAuditEvents } from "../../services/audit";
import type { AppDeps } from "../../app";

/** The audit trail, for admins: a filtered list, newest first, and one event with its changes. Read-only. */
export function auditRouter({ database }: AppDeps): Router {
  const router = Router();
  handle(router, API.auditList, ({ query }) => listAuditEvents(database.db, query));
  handle(router, API.auditGet, async ({ params }) => ({ event: await getAuditEvent(database.db, params.id) }));
  return router;
}
