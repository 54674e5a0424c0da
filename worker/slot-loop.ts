import type PgBoss from "pg-boss";
import type { Logger } from "../server/logger";

/** How long a queue found empty is left alone, ms. */
const EMPTY_FOR_MS = 250;

/**
 * A running job's hold on its slot. A job that only waits (for another job rendering its piece)
 * parks: its slot goes to the next job meanwhile, and it takes one back (first in line, before any
 * new job is fetched) when it has work to do again.
 */
export interface SlotHold {
  /** Gives the slot up while the job only waits; false when too many jobs wait already (it keeps it). */
  park(): boolean;
  /** Takes a slot back; resolves once one is free. */
  unpark(): Promise<void>;
}

export interface SlotQueue {
  queue: string;
  /** Runs one job; resolves when it is done, throws to fail it (the queue retries it). */
  run: (job: PgBoss.JobWithMetadata<unknown>, hold: SlotHold) => Promise<void>;
}

/** Jobs that may wait parked at once, per slot: each holds a job the queue counts as active. */
const PARKED_PER_SLOT = 4;

/**
 * Runs jobs from several queues with one pool of `slots`: a job is fetched only when a slot is
 * free, from the first queue (in the order given) that has one, so a busy process never holds
 * jobs another process could run. A job that only waits may park (SlotHold) and free its slot. A job past its expiry is failed (and so retried) and its slot
 * freed, as pg-boss's own workers do. A queue found empty is asked again after EMPTY_FOR_MS.
 * `stop()` stops fetching and waits for the jobs in hand.
 */
export function startSlotLoop(opts: { boss: PgBoss; log: Logger; slots: number; queues: SlotQueue[]; idleMs?: number }) {
  const { boss, log, slots, queues } = opts;
  const idleMs = opts.idleMs ?? 500;
  const inHand = new Set<Promise<void>>();
  // Slots held now (jobs in hand less those parked), and parked jobs waiting to take one back.
  let busy = 0;
  let parked = 0;
  const waiting: (() => void)[] = [];
  const acquire = () =>
    new Promise<void>((resolve) => {
      if (busy < slots && waiting.length === 0) {
        busy++;
        resolve();
      } else waiting.push(resolve);
    });
  const release = () => {
    const next = waiting.shift();
    if (next)
      next(); // the slot passes straight to a parked job that has work again
    else {
      busy--;
      wake?.();
    }
  };
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
    busy++;
    // Holding a slot, parked (given it up to wait), or waiting in line to take one back. Once the
    // job's outcome is recorded (or it expired) its hold means nothing more: a handler still running
    // past its expiry never keeps a slot it will not give back.
    let state: "holding" | "parked" | "waiting" = "holding";
    let ended = false;
    const hold: SlotHold = {
      park() {
        if (ended || state !== "holding") return state === "parked";
        if (parked >= PARKED_PER_SLOT * slots) return false;
        state = "parked";
        parked++;
        release();
        return true;
      },
      async unpark() {
        if (ended || state !== "parked") return;
        state = "waiting";
        parked--;
        await acquire();
        if (ended)
          release(); // ended while in line: the slot goes straight on
        else state = "holding";
      },
    };
    let timer: NodeJS.Timeout | undefined;
    const expiry = new Promise<never>((_, reject) => {
      timer = setTimeout(
        () => reject(new Error(`The job took longer than ${job.expireInSeconds} s and was given up`)),
        job.expireInSeconds * 1000,
      );
    });
    const p: Promise<void> = Promise.race([q.run(job, hold), expiry])
      .finally(() => clearTimeout(timer))
      .then(
        () => boss.complete(job.name, job.id),
        (err: unknown) =>
          boss.fail(job.name, job.id, err instanceof Error ? { message: err.message, stack: err.stack } : { message: String(err) }),
      )
      .then(() => undefined)
      .catch((err: unknown) => log.error({ err, jobId: job.id }, "worker: could not record a job's outcome"))
      .finally(() => {
        inHand.delete(p);
        ended = true;
        if (state === "holding") release();
        else if (state === "parked") {
          parked--;
          wake?.();
        } // waiting: its turn, when it comes, is passed on (unpark)
      });
    inHand.add(p);
  };
  const loop = (async () => {
    while (accepting) {
      if (busy >= slots || waiting.length > 0) {
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
