import { useSyncExternalStore } from "react";
import { dismissToast, getToasts, subscribeToasts, type ToastTone } from "../lib/toast";
import { cn } from "../lib/cn";

const TONE: Record<ToastTone, string> = {
  error: "border-brick/50 bg-white text-ink [&_.dot]:bg-brick",
  success: "border-accent/50 bg-white text-ink [&_.dot]:bg-accent",
  info: "border-paper-400 bg-white text-ink [&_.dot]:bg-ink-muted",
};

const TONE_LABEL: Record<ToastTone, string> = { error: "Error", success: "Done", info: "Note" };

/** Toasts in the lower right; errors are announced assertively, others politely. */
export function Toaster() {
  const toasts = useSyncExternalStore(subscribeToasts, getToasts, getToasts);
  return (
    <div className="pointer-events-none fixed right-6 bottom-6 z-50 flex w-96 max-w-[calc(100vw-3rem)] flex-col gap-2">
      {toasts.map((t) => (
        <div
          key={t.id}
          role={t.tone === "error" ? "alert" : "status"}
          className={cn("pointer-events-auto flex items-start gap-3 rounded-lg border px-4 py-3 text-sm shadow-lg", TONE[t.tone])}
        >
          <span className="dot mt-1.5 size-2 shrink-0 rounded-full" aria-hidden="true" />
          <p className="flex-1">
            <span className="sr-only">{TONE_LABEL[t.tone]}: </span>
            {t.message}
          </p>
          {t.action && (
            <button
              type="button"
              onClick={() => {
                dismissToast(t.id);
                t.action!.run();
              }}
              className="-my-1 rounded px-2 font-medium text-accent underline-offset-2 hover:bg-paper-200 hover:underline"
            >
              {t.action.label}
            </button>
          )}
          <button
            type="button"
            onClick={() => dismissToast(t.id)}
            className="-my-1 rounded px-1.5 text-ink-muted hover:bg-paper-200 hover:text-ink"
          >
            <span aria-hidden="true">×</span>
            <span className="sr-only">Dismiss</span>
          </button>
        </div>
      ))}
    </div>
  );
}
