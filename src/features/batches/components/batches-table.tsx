import { Link } from "react-router-dom";
import type { Batch } from "../../../../shared/schemas/recipe-api";
import { paths } from "../../../config/paths";
import { BatchProgressBlock, BatchStateBadge } from "./batch-progress";

/** Every batch, newest first, with its bar and counts. */
export function BatchesTable({ batches }: { batches: Batch[] }) {
  return (
    <ul className="flex flex-col divide-y divide-paper-200" aria-label="Batches">
      {batches.map((b) => (
        <li key={b.id} className="flex flex-col gap-2 px-5 py-3.5 hover:bg-paper-100" data-batch={b.id}>
          <div className="flex items-baseline justify-between gap-4">
            <span className="flex min-w-0 items-baseline gap-2">
              <Link to={paths.batch(b.id)} className="truncate text-sm font-semibold text-ink hover:text-accent hover:underline">
                {b.name}
              </Link>
              {b.rerunOf && (
                <span className="shrink-0 text-[11px] text-ink-muted" data-testid="rerun-mark" title={`A re-run of “${b.rerunOf.name}”`}>
                  ↻ re-run{b.replaceOld ? ", replacing" : ""}
                </span>
              )}
            </span>
            <BatchStateBadge batch={b} />
          </div>
          <BatchProgressBlock batch={b} compact warningsHref={`${paths.batch(b.id)}?warnings=1`} />
        </li>
      ))}
    </ul>
  );
}
