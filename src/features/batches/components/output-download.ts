import { useState, type MouseEvent } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { ApiError } from "../../../lib/api-client";
import { useHasRole } from "../../../lib/authorization";
import { checkedDownload, isPlainClick } from "../../../lib/checked-download";
import { toast } from "../../../lib/toast";
import type { BatchItem } from "../api/get-batch-report";
import { batchKeys } from "../api/keys";

/** An output's own file, served from the library with byte ranges (so it can be checked first). */
export const outputFileUrl = (batchId: string, itemId: string) =>
  `/api/batches/${encodeURIComponent(batchId)}/items/${encodeURIComponent(itemId)}/file`;

/**
 * What to say when an output's file is gone from the library (removed by hand, a restore that
 * missed it, a replacing re-run a moment ago): which file, and how to get it back. A re-run makes
 * an output whose file is missing again rather than reusing its record.
 */
export function goneFileMessage(fileName: string, canRun: boolean): string {
  return `${fileName} is no longer in the library: its file was removed after it was made. ${
    canRun ? "Run the batch again (Run again with…) to make it anew." : "Ask an operator to run the batch again to make it anew."
  }`;
}

/**
 * The batch page's downloads of single outputs: each asks the server for the file's first byte
 * before the browser's download starts, so a file that is gone says so (a toast, and on its row
 * until a download of it works) instead of ending as a failed download. The report is read again,
 * since a 404 can also mean a later run replaced the output.
 */
export function useOutputDownload(batchId: string) {
  const queryClient = useQueryClient();
  const canRun = useHasRole("operator");
  const [starting, setStarting] = useState<string | null>(null);
  const [gone, setGone] = useState<ReadonlyMap<string, string>>(new Map());

  const download = (event: MouseEvent<HTMLAnchorElement>, item: Pick<BatchItem, "id" | "fileName">) => {
    if (!isPlainClick(event)) return;
    event.preventDefault();
    if (starting === item.id) return;
    setStarting(item.id);
    const forget = () =>
      setGone((now) => {
        if (!now.has(item.id)) return now;
        const next = new Map(now);
        next.delete(item.id);
        return next;
      });
    checkedDownload(outputFileUrl(batchId, item.id), item.fileName ?? undefined)
      .then(forget)
      .catch((err: unknown) => {
        if (err instanceof ApiError && err.status === 404) {
          const message = goneFileMessage(item.fileName ?? "This output's file", canRun);
          setGone((now) => new Map(now).set(item.id, message));
          toast.error(message);
          void queryClient.invalidateQueries({ queryKey: batchKeys.report(batchId) });
        } else toast.error(err instanceof Error ? err.message : String(err));
      })
      .finally(() => setStarting(null));
  };
  return { download, starting, gone };
}

export type OutputDownload = ReturnType<typeof useOutputDownload>;
