import { useState } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { uploadResponse } from "../../../../shared/schemas/scans";
import { apiUpload } from "../../../lib/api-client";
import { intakesQueryOptions } from "./get-intakes";
import { scanKeys } from "./keys";

/** The multipart field the upload route reads. */
export const UPLOAD_FIELD = "files";
/** Files sent side by side; more would only compete for the same connection. */
const CONCURRENCY = 2;

export type UploadState = "waiting" | "sending" | "queued" | "duplicate" | "refused";

export interface UploadItem {
  key: string;
  name: string;
  size: number;
  state: UploadState;
  /** 0–100 while sending. */
  progress: number;
  scanId?: string;
  duplicateOf?: string;
  /** The earlier scan had failed, and arriving again it is analysed again. */
  triedAgain?: boolean;
  message?: string;
}

/** Sends one file and reports its result: queued, duplicate of an earlier scan, or refused. */
export function uploadScan(file: File, onProgress: (percent: number) => void, signal?: AbortSignal) {
  return apiUpload(API.scansUpload, {
    field: UPLOAD_FIELD,
    files: [file],
    schema: uploadResponse,
    onProgress: (loaded, total) => onProgress(total > 0 ? (loaded / total) * 100 : 0),
    signal,
    // Each file's refusal is shown on its own row.
    quiet: true,
  });
}

let counter = 0;

/**
 * The upload queue outside React: one request per file, CONCURRENCY at a time, so each file has
 * its own progress and its own result even when another one is refused.
 */
function createUploadQueue(events: { onChange: (items: UploadItem[]) => void; onSettled: () => void }) {
  let items: UploadItem[] = [];
  const pending: Array<{ key: string; file: File }> = [];
  let active = 0;

  const publish = (next: UploadItem[]) => {
    items = next;
    events.onChange(items);
  };
  const update = (key: string, patch: Partial<UploadItem>) =>
    publish(items.map((item) => (item.key === key ? { ...item, ...patch } : item)));

  const send = async (key: string, file: File) => {
    update(key, { state: "sending", progress: 0 });
    try {
      const { results } = await uploadScan(file, (progress) => update(key, { progress }));
      const result = results[0];
      if (!result) update(key, { state: "refused", message: "The server accepted nothing." });
      else if (result.duplicateOf) {
        update(key, {
          state: "duplicate",
          progress: 100,
          scanId: result.scanId,
          duplicateOf: result.duplicateOf,
          triedAgain: result.triedAgain,
        });
      } else update(key, { state: "queued", progress: 100, scanId: result.scanId });
      events.onSettled();
    } catch (error) {
      const message = error instanceof Error ? error.message : "The upload failed.";
      update(key, { state: "refused", message });
    }
  };

  const pump = () => {
    while (active < CONCURRENCY && pending.length > 0) {
      const next = pending.shift()!;
      active++;
      void send(next.key, next.file).finally(() => {
        active--;
        pump();
      });
    }
  };

  return {
    add(files: File[]) {
      const fresh = files.map((file) => ({ key: `u${++counter}`, file }));
      publish([
        ...fresh.map(({ key, file }) => ({
          key,
          name: file.name,
          size: file.size,
          state: "waiting" as const,
          progress: 0,
        })),
        ...items,
      ]);
      pending.push(...fresh);
      pump();
    },
    clearFinished() {
      publish(items.filter((item) => item.state === "waiting" || item.state === "sending"));
    },
  };
}

/** Uploads dropped files and keeps a line per file with its progress and result. */
export function useUploadScans() {
  const queryClient = useQueryClient();
  const [items, setItems] = useState<UploadItem[]>([]);
  const [queue] = useState(() =>
    createUploadQueue({
      onChange: setItems,
      onSettled: () => {
        void queryClient.invalidateQueries({ queryKey: scanKeys.lists() });
        void queryClient.invalidateQueries({ queryKey: intakesQueryOptions().queryKey });
      },
    }),
  );
  return { items, add: queue.add, clearFinished: queue.clearFinished };
}
