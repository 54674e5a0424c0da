import fsp from "node:fs/promises";
import type { Stats } from "node:fs";

export interface SettleOptions {
  /** How long a file's size and modification time must stay the same (ms). */
  stableMs: number;
  /** How often it is looked at meanwhile (ms). */
  pollMs: number;
  /** Still for stableMs, or gone or unreadable (the look that takes it says which): hand it on. */
  onSettled: (file: string) => void;
  /** Looked at and still changing (or not still long enough yet). */
  onChanging: (file: string, st: Stats) => void;
}

/**
 * The wait for files seen arriving or changing: each is looked at every pollMs until its size and
 * modification time have not changed for stableMs, then handed on (the wait chokidar's
 * awaitWriteFinish makes, kept here so the inbox can say which files it is waiting on meanwhile).
 * Seen again while waited for (a change event): the wait starts afresh.
 */
export function createSettler(opts: SettleOptions) {
  const settling = new Map<string, { size: number; mtimeMs: number; stillSince: number; timer?: NodeJS.Timeout }>();
  let closed = false;
  return {
    /** A file arrived or changed. */
    seen(file: string) {
      if (closed) return;
      const known = settling.get(file);
      if (known) {
        known.stillSince = Date.now();
        return;
      }
      const entry: { size: number; mtimeMs: number; stillSince: number; timer?: NodeJS.Timeout } = {
        size: -1,
        mtimeMs: -1,
        stillSince: Date.now(),
      };
      settling.set(file, entry);
      const look = async () => {
        if (closed || settling.get(file) !== entry) return;
        const st = await fsp.stat(file).catch(() => null);
        if (closed || settling.get(file) !== entry) return;
        const now = Date.now();
        if (st && entry.size >= 0 && (st.size !== entry.size || st.mtimeMs !== entry.mtimeMs)) entry.stillSince = now;
        if (!st || now - entry.stillSince >= opts.stableMs) {
          settling.delete(file);
          return opts.onSettled(file);
        }
        entry.size = st.size;
        entry.mtimeMs = st.mtimeMs;
        opts.onChanging(file, st);
        entry.timer = setTimeout(() => void look(), opts.pollMs);
      };
      entry.timer = setTimeout(() => void look(), opts.pollMs);
    },
    /** The file has gone: no longer waited for. */
    drop(file: string) {
      clearTimeout(settling.get(file)?.timer);
      settling.delete(file);
    },
    close() {
      closed = true;
      settling.forEach((s) => clearTimeout(s.timer));
      settling.clear();
    },
  };
}
