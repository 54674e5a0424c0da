import { useEffect, useRef, type ReactNode } from "react";
import { Button } from "./button";

/**
 * A modal question with a clear way out. Built on <dialog>, so focus is trapped, Escape cancels
 * and the page behind is inert.
 */
export function ConfirmDialog({
  open,
  title,
  children,
  confirmLabel,
  tone = "danger",
  busy = false,
  initialFocus = "cancel",
  onConfirm,
  onCancel,
}: {
  open: boolean;
  title: string;
  children: ReactNode;
  confirmLabel: string;
  tone?: "danger" | "primary";
  busy?: boolean;
  /**
   * Which button Enter presses at first. Cancel by default; "confirm" only for actions that can be
   * undone, where the dialog is a pause rather than a safety catch.
   */
  initialFocus?: "cancel" | "confirm";
  onConfirm: () => void;
  onCancel: () => void;
}) {
  const ref = useRef<HTMLDialogElement>(null);
  const cancelRef = useRef<HTMLButtonElement>(null);
  const confirmRef = useRef<HTMLButtonElement>(null);
  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) {
      dialog.showModal();
      // showModal focuses the first button; move to the one asked for.
      (initialFocus === "confirm" ? confirmRef : cancelRef).current?.focus();
    }
    if (!open && dialog.open) dialog.close();
  }, [open, initialFocus]);
  return (
    <dialog
      ref={ref}
      aria-labelledby="confirm-title"
      onCancel={(event) => {
        event.preventDefault();
        onCancel();
      }}
      className="m-auto w-[28rem] max-w-[calc(100vw-2rem)] rounded-xl border border-paper-300 bg-paper-50 p-0 text-ink shadow-xl backdrop:bg-ink/30"
    >
      {open && (
        <div className="p-6">
          <h2 id="confirm-title" className="text-lg font-semibold">
            {title}
          </h2>
          <div className="mt-2 text-sm text-ink-soft">{children}</div>
          <div className="mt-6 flex justify-end gap-3">
            <Button ref={cancelRef} variant="secondary" onClick={onCancel}>
              Cancel
            </Button>
            <Button ref={confirmRef} variant={tone} onClick={onConfirm} busy={busy}>
              {confirmLabel}
            </Button>
          </div>
        </div>
      )}
    </dialog>
  );
}
