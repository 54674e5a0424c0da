import { offsitePayload } from "../../shared/schemas/jobs";
import { checkMaster, copyMaster, type OffsiteDeps } from "../../server/services/offsite";
import type { JobContext } from "./context";

/**
 * Copies one master to the off-site bucket and records its status. A bucket that fails marks the
 * copy failed with the store's answer and throws, so the queue retries with backoff; the last
 * attempt's message stays. Safe to run twice (the same bytes are uploaded again).
 */
export async function offsiteCopyJob(deps: OffsiteDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { outputId } = offsitePayload.parse(data);
  await copyMaster({ ...deps, log: deps.log.child({ jobId: ctx.jobId, outputId }) }, outputId, ctx);
}

/** Re-checks one master's off-site copy by SHA-256 (queued for every master by an admin). */
export async function offsiteCheckJob(deps: OffsiteDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { outputId } = offsitePayload.parse(data);
  const row = await checkMaster({ ...deps, log: deps.log.child({ jobId: ctx.jobId, outputId }) }, outputId);
  if (row) deps.log.info({ outputId, status: row.status }, "offsite: checked");
}
