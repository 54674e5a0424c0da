import { useEffect, useEffectEvent, useRef, useState } from "react";
import { SCAN_MIME_TYPES } from "../../../../shared/limits";
import { cn } from "../../../lib/cn";

const ACCEPT = [...SCAN_MIME_TYPES, ".tif", ".tiff", ".jpg", ".jpeg", ".png", ".webp"].join(",");

function hasFiles(event: DragEvent): boolean {
  return Array.from(event.dataTransfer?.types ?? []).includes("Files");
}

/**
 * Where scans are added by hand: drop files anywhere on the page, or click to choose them.
 * While files are dragged over the window a full-page sheet says where they will go.
 */
export function DropZone({ onFiles, intakeName }: { onFiles: (files: File[]) => void; intakeName?: string }) {
  const input = useRef<HTMLInputElement>(null);
  const [dragging, setDragging] = useState(false);
  const depth = useRef(0);
  const emitFiles = useEffectEvent((files: File[]) => onFiles(files));

  useEffect(() => {
    const enter = (e: DragEvent) => {
      if (!hasFiles(e)) return;
      e.preventDefault();
      depth.current++;
      setDragging(true);
    };
    const over = (e: DragEvent) => {
      if (!hasFiles(e)) return;
      e.preventDefault();
      if (e.dataTransfer) e.dataTransfer.dropEffect = "copy";
    };
    const leave = (e: DragEvent) => {
      if (!hasFiles(e)) return;
      depth.current = Math.max(0, depth.current - 1);
      if (depth.current === 0) setDragging(false);
    };
    const drop = (e: DragEvent) => {
      if (!hasFiles(e)) return;
      e.preventDefault();
      depth.current = 0;
      setDragging(false);
      const files = Array.from(e.dataTransfer?.files ?? []);
      if (files.length > 0) emitFiles(files);
    };
    window.addEventListener("dragenter", enter);
    window.addEventListener("dragover", over);
    window.addEventListener("dragleave", leave);
    window.addEventListener("drop", drop);
    return () => {
      window.removeEventListener("dragenter", enter);
      window.removeEventListener("dragover", over);
      window.removeEventListener("dragleave", leave);
      window.removeEventListener("drop", drop);
    };
  }, []);

  return (
    <>
      <div
        className={cn(
          "flex items-center gap-5 rounded-xl border-2 border-dashed px-6 py-5 transition-colors",
          dragging ? "border-accent bg-accent-faint" : "border-paper-400 bg-paper-50/60",
        )}
      >
        <svg viewBox="0 0 40 40" className="size-10 shrink-0 text-accent" aria-hidden="true">
          <rect x="4" y="9" width="32" height="24" rx="3" fill="none" stroke="currentColor" strokeWidth="2" />
          <path d="M20 27V14m-5 5 5-5 5 5" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
        </svg>
        <div className="min-w-0 flex-1">
          <p className="font-medium text-ink">Drop scans anywhere on this page</p>
          <p className="mt-0.5 text-sm text-ink-muted">
            TIFF, JPEG, PNG or WebP. They are filed
            {intakeName ? (
              <>
                {" "}
                in <span className="font-medium text-ink-soft">{intakeName}</span>
              </>
            ) : (
              " in the current intake"
            )}{" "}
            and queued for analysis; originals are never changed.
          </p>
        </div>
        <label className="inline-flex h-10 cursor-pointer items-center rounded-md border border-transparent bg-accent px-4 text-sm font-medium text-paper-50 hover:bg-accent-strong has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-offset-2 has-[:focus-visible]:outline-accent">
          Choose files…
          <input
            ref={input}
            type="file"
            multiple
            accept={ACCEPT}
            aria-label="Choose scans to upload"
            className="sr-only"
            onChange={(e) => {
              const files = Array.from(e.target.files ?? []);
              e.target.value = "";
              if (files.length > 0) onFiles(files);
            }}
          />
        </label>
      </div>
      {dragging && (
        <div
          aria-hidden="true"
          className="pointer-events-none fixed inset-0 z-40 flex items-center justify-center bg-paper/80 backdrop-blur-[1px]"
        >
          <div className="rounded-2xl border-2 border-dashed border-accent bg-paper-50 px-12 py-10 text-center shadow-xl">
            <p className="text-lg font-semibold text-ink">Release to upload</p>
            <p className="mt-1 text-sm text-ink-muted">{intakeName ? `Into ${intakeName}` : "Into the current intake"}</p>
          </div>
        </div>
      )}
    </>
  );
}
