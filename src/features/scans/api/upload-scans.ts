import { useCallback, useRef, useState } from "react";
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
 * Uploads dropped files one request per file, so each file has its own progress and its own
 * result even when another one is refused.
 */
export function useUploadScans() {
  const queryClient = useQueryClient();
  const [items, setItems] = useState<UploadItem[]>([]);
  const pending = useRef<Array<{ key: string; file: File }>>([]);
  const active = useRef(0);

  const update = useCallback((key: string, patch: Partial<UploadItem>) => {
    setItems((list) => list.map((item) => (item.key === key ? { ...item, ...patch } : item)));
  }, []);

  const pump = useCallback(() => {
    while (active.current < CONCURRENCY && pending.current.length > 0) {
      const next = pending.current.shift()!;
      active.current++;
      update(next.key, { state: "sending", progress: 0 });
      uploadScan(next.file, (progress) => update(next.key, { progress }))
        .then(({ results }) => {
          const result = results[0];
          if (!result) {
            update(next.key, { state: "refused", message: "The server accepted nothing." });
          } else if (result.duplicateOf) {
            update(next.key, {
              state: "duplicate",
              progress: 100,
              scanId: result.scanId,
              duplicateOf: result.duplicateOf,
            });
          } else {
            update(next.key, { state: "queued", progress: 100, scanId: result.scanId });
          }
          void queryClient.invalidateQueries({ queryKey: scanKeys.lists() });
          void queryClient.invalidateQueries({ queryKey: intakesQueryOptions().queryKey });
        })
        .catch((error: unknown) => {
          const message = error instanceof Error ? error.message : "The upload failed.";
          update(next.key, { state: "refused", message });
        })
        .finally(() => {
          active.current--;
          pump();
        });
    }
  }, [queryClient, update]);

  const add = useCallback(
    (files: File[]) => {
      const fresh = files.map((file) => ({ key: `u${++counter}`, file }));
      setItems((list) => [
        ...fresh.map(({ key, file }) => ({
          key,
          name: file.name,
          size: file.size,
          state: "waiting" as const,
          progress: 0,
        })),
        ...list,
      ]);
      pending.current.push(...fresh);
      pump();
    },
    [pump],
  );

  const clearFinished = useCallback(() => {
    setItems((list) => list.filter((item) => item.state === "waiting" || item.state === "sending"));
  }, []);

  return { items, add, clearFinished };
}
