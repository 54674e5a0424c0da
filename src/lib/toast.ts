/**
 * A tiny toast store outside React, so the API client can raise a toast from anywhere.
 * The <Toaster> component subscribes with useSyncExternalStore.
 */
export type ToastTone = "error" | "success" | "info";

/** A button on the toast, such as "Undo"; pressing it closes the toast. */
export interface ToastAction {
  label: string;
  run: () => void;
}

export interface Toast {
  id: number;
  tone: ToastTone;
  message: string;
  action?: ToastAction;
}

const LIFETIME_MS: Record<ToastTone, number> = { error: 8000, success: 4000, info: 5000 };
/** A toast with a way back stays long enough to be read and reached with the keys. */
const ACTION_LIFETIME_MS = 10000;
const MAX_TOASTS = 4;

let toasts: Toast[] = [];
let nextId = 1;
const listeners = new Set<() => void>();

function emit() {
  for (const listener of listeners) listener();
}

function push(tone: ToastTone, message: string, action?: ToastAction): number {
  // The same message twice in a row (a burst of failures) shows once.
  const existing = toasts.find((t) => t.message === message && t.tone === tone);
  if (existing && !action) return existing.id;
  if (existing) toasts = toasts.filter((t) => t.id !== existing.id);
  const id = nextId++;
  toasts = [...toasts, { id, tone, message, action }].slice(-MAX_TOASTS);
  emit();
  setTimeout(() => dismissToast(id), action ? ACTION_LIFETIME_MS : LIFETIME_MS[tone]);
  return id;
}

export function dismissToast(id: number): void {
  const before = toasts.length;
  toasts = toasts.filter((t) => t.id !== id);
  if (toasts.length !== before) emit();
}

export function subscribeToasts(listener: () => void): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

export function getToasts(): Toast[] {
  return toasts;
}

export const toast = {
  error: (message: string) => push("error", message),
  success: (message: string, action?: ToastAction) => push("success", message, action),
  info: (message: string, action?: ToastAction) => push("info", message, action),
};
