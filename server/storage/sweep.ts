import path from "node:path";
import type { Logger } from "../logger";
import type { Storage } from "./storage";

export interface SweepResult {
  /** Unfinished writes found (any age). */
  found: number;
  removed: number;
  removedBytes: number;
  /** Old ones that could not be removed (they stay for the next sweep or tidy). */
  failed: number;
}

/**
 * Removes what stopped processes left unfinished on this machine (`library.unfinished()`: the same
 * finds, by the same names, as the library's tidy) untouched since `cutoff` (ms since the epoch),
 * each measured again just before it goes (`removeUnfinished`). Needs no database: no row names
 * such a file. One that cannot be removed is counted, never the end of the sweep.
 */
export async function sweepUnfinished(library: Storage, cutoff: number): Promise<SweepResult> {
  const found = await library.unfinished();
  const result: SweepResult = { found: found.length, removed: 0, removedBytes: 0, failed: 0 };
  for (const u of found) {
    if (u.modified.getTime() > cutoff) continue;
    try {
      if (!(await library.removeUnfinished(u, cutoff))) continue; // written to (or gone) since
    } catch {
      result.failed++;
      continue;
    }
    result.removed++;
    result.removedBytes += u.size;
  }
  return result;
}

export interface UnfinishedSweep {
  /** The sweep made at start. */
  readonly first: Promise<void>;
  /** Stops the regular sweeps; resolves when a sweep in hand is done. */
  stop(): Promise<void>;
}

interface Sweeper {
  users: number;
  timer: NodeJS.Timeout | null;
  inHand: Promise<void> | null;
  first: Promise<void>;
}

/** One sweeper per set of folders in a process (server and worker share one in tests and may elsewhere). */
const sweepers = new Map<string, Sweeper>();

/** Longest delay a timer takes (2^31 − 1 ms); a longer one would fire at once. */
const MAX_TIMER_MS = 2 ** 31 - 1;

/**
 * Sweeps this machine's unfinished writes older than `graceHours` now and then every `everyHours`
 * (0: never; only the library's tidy removes them then), on a timer that keeps no process alive.
 * Logs one line when it removed something; an error is logged and the next sweep tries again.
 * A second start in the same process for the same folders joins the first: one timer, and never
 * two sweeps of the same folders at once.
 */
export function startUnfinishedSweep(library: Storage, opts: { everyHours: number; graceHours: number; log: Logger }): UnfinishedSweep {
  const { log } = opts;
  if (!(opts.everyHours > 0)) return { first: Promise.resolve(), stop: () => Promise.resolve() };
  // The folders `unfinished()` looks in follow from the scratch folder and the configuration.
  const key = `${library.kind}:${path.resolve(library.scratchDir)}`;
  let sweeper = sweepers.get(key);
  if (!sweeper) {
    const s: Sweeper = { users: 0, timer: null, inHand: null, first: Promise.resolve() };
    const sweep = (): Promise<void> => {
      if (s.inHand) return s.inHand;
      s.inHand = (async () => {
        try {
          const r = await sweepUnfinished(library, Date.now() - opts.graceHours * 3600_000);
          if (r.removed)
            log.info(
              { removed: r.removed, bytes: r.removedBytes, failed: r.failed },
              `removed ${r.removed === 1 ? "1 unfinished write" : `${r.removed} unfinished writes`} a stopped process left on this machine`,
            );
          else if (r.failed) log.warn({ failed: r.failed }, "could not remove unfinished writes a stopped process left on this machine");
        } catch (err) {
          log.warn({ err }, "could not look for unfinished writes a stopped process left on this machine");
        } finally {
          s.inHand = null;
        }
      })();
      return s.inHand;
    };
    s.first = sweep();
    s.timer = setInterval(() => void sweep(), Math.min(Math.max(opts.everyHours * 3600_000, 1000), MAX_TIMER_MS));
    s.timer.unref();
    sweepers.set(key, (sweeper = s));
  }
  const s = sweeper;
  s.users++;
  let stopped = false;
  return {
    first: s.first,
    stop() {
      if (!stopped) {
        stopped = true;
        if (--s.users === 0) {
          if (s.timer) clearInterval(s.timer);
          s.timer = null;
          sweepers.delete(key);
        }
      }
      return s.inHand ?? Promise.resolve();
    },
  };
}
