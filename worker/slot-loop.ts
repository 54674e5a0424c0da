import type PgBoss from "pg-boss";
import type { Logger } from "../server/logger";

/** How long a queue found empty is left alone, ms. */
const EMPTY_FOR_MS = 250;

export interface SlotQueue {
  queue: string;
  /** Runs one job; resolves when it is done, throws to fail it (the queue retries it). */
  run: (job: PgBoss.JobWithMetadata<unknown>) => Promise<void>;
}

/**
 * Runs jobs from several queues with one pool of `slots`: a job is fetched only when a slot is
 * free, from the first queue (in the order given) that has one, so a busy process never holds
 * jobs another process could run. A job past its expiry is failed (and so retried) and its slot
 * freed, as pg-boss's own workers do. A queue found empty is asked again after EMPTY_FOR_MS.
 * `stop()` stops fetching and waits for the jobs in hand.
 */
export function startSlotLoop(opts: { boss: PgBoss; log: Logger; slots: number; queues: SlotQueue[]; idleMs?: number }) {
  const { boss, log, slots, queues } = opts;
  const idleMs = opts.idleMs ?? 500;
  const inHand = new Set<Promise<void>>();
  let accepting = true;
  let wake: (() => void) | null = null;
  const nap = (ms: number) =>
    new Promise<void>((resolve) => {
      const t = setTimeout(() => ((wake = null), resolve()), ms);
      wake = () => (clearTimeout(t), (wake = null), resolve());
    });
  // A queue found empty is not asked again for a moment: with several queues, asking each empty
  // one before every job would cost a round trip each. A job sent meanwhile waits that long at most.
  const emptyUntil = new Map<string, number>();
  const fetchNext = async () => {
    const now = Date.now();
    for (const q of queues) {
      if ((emptyUntil.get(q.queue) ?? 0) > now) continue;
      const [job] = await boss.fetch(q.queue, { batchSize: 1, includeMetadata: true });
      if (job) return { job, q };
      emptyUntil.set(q.queue, now + EMPTY_FOR_MS);
    }
    return null;
  };
  const start = (job: PgBoss.JobWithMetadata<unknown>, q: SlotQueue) => {
    let timer: NodeJS.Timeout | undefined;
    const expiry = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error(`The job took longer than ${job.expireInSeconds} s and was given up`)), job.expireInSeconds * 1000);
    });
    const p: Promise<void> = Promise.race([q.run(job), expiry])
      .finally(() => clearTimeout(timer))
      .then(
        () => boss.complete(job.name, job.id),
        (err: unknown) => boss.fail(job.name, job.id, err instanceof Error ? { message: err.message, stack: err.stack } : { message: String(err) }),
      )
      .then(() => undefined)
      .catch((err: unknown) => log.error({ err, jobId: job.id }, "worker: could not record a job's outcome"))
      .finally(() => {
        inHand.delete(p);
        wake?.();
      });
    inHand.add(p);
  };
  const loop = (async () => {
    while (accepting) {
      if (inHand.size >= slots) {
        await nap(1000);
        continue;
      }
      let next: Awaited<ReturnType<typeof fetchNext>> = null;
      try {
        next = await fetchNext();
      } catch (err) {
        log.warn({ err }, "worker: could not fetch a job; trying again shortly");
      }
      // A job fetched just as a stop was asked for is run like the others in hand (failing it
      // would use up one of its retries).
      if (next) start(next.job, next.q);
      else await nap(idleMs);
    }
  })();
  return {
    /** Jobs running now. */
    get running() {
      return inHand.size;
    },
    async stop() {
      accepting = false;
      wake?.();
      await loop;
      await Promise.all([...inHand]);
    },
  };
}
