import type pg from "pg";
import type { LiveEvent } from "../../shared/schemas/queue";
import type { Logger } from "../logger";
import { listen } from "./events";

/** Fans database notices out to this process's open event streams. */
export function createHub(pool: pg.Pool, log: Logger) {
  const subscribers = new Set<(e: LiveEvent) => void>();
  const stop = listen(
    pool,
    (e) => subscribers.forEach((fn) => fn(e)),
    (err) => log.warn({ err }, "live events: listener error, reconnecting"),
  );
  return {
    subscribe(fn: (e: LiveEvent) => void) {
      subscribers.add(fn);
      return () => subscribers.delete(fn);
    },
    close: stop,
  };
}
export type Hub = ReturnType<typeof createHub>;
