import type { Batch } from "../../../../shared/schemas/recipe-api";
import { EmptyNote, Panel } from "../../../components/panel";
import { BatchRow } from "./batch-progress";

/** The queue's batches: those running now and those that finished in the last hour. */
export function BatchList({ batches }: { batches: Batch[] }) {
  return (
    <Panel title="Batches" titleId="batches-title">
      {batches.length === 0 ? (
        <EmptyNote>No batch has run in the last hour.</EmptyNote>
      ) : (
        <ul className="flex flex-col gap-4" aria-label="Batches">
          {batches.map((b) => (
            <li key={b.id}>
              <BatchRow batch={b} />
            </li>
          ))}
        </ul>
      )}
    </Panel>
  );
}
