import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { queueSummary } from "../../services/queue";
import type { AppDeps } from "../../app";

export function queueRouter({ database }: AppDeps): Router {
  const router = Router();
  handle(router, API.queue, ({ user }) => queueSummary(database.db, user.role));
  return router;
}
