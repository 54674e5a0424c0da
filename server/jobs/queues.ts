import type PgBoss from "pg-boss";
import { config } from "../config";

/** Queue names and their retry policy, shared by the processes that send and the workers. */
export const QUEUES = {
  analyse: "scan-analyse",
  split: "scan-split",
  render: "fragment-render",
  output: "output-render",
  /** Copies one master to the off-site bucket. */
  offsiteCopy: "offsite-copy",
  /** Compares one master's off-site copy with the master, by SHA-256. */
  offsiteCheck: "offsite-check",
  /** Works out who should hear about an event and writes their messages to the outbox. */
  notice: "mail-notice",
  /** Hands one outbox message to the mail server. */
  mail: "mail-send",
  /** Writes a new title (or the studio's rights) into one fragment's existing master and web copy. */
  rights: "fragment-rights",
  /** Removes library files nothing names any more (once a day, by whichever worker asks first). */
  libraryTidy: "library-tidy",
  /** Files one original no scan names again as a new scan (an admin asks, for each such original). */
  libraryRefile: "library-refile",
} as const;

export function queuePolicies(): Record<(typeof QUEUES)[keyof typeof QUEUES], Omit<PgBoss.Queue, "name">> {
  const cfg = config();
  return {
    [QUEUES.analyse]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    [QUEUES.split]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    [QUEUES.output]: {
      policy: "standard",
      // A master still being rendered is waited for by retrying: more, gentler retries.
      retryLimit: Math.max(cfg.jobRetryLimit, 6),
      retryDelay: 3,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    [QUEUES.notice]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 5,
      retryBackoff: true,
      expireInSeconds: 300,
    },
    [QUEUES.mail]: {
      policy: "standard",
      // A mail server that is down for a while is waited out: more, slower retries.
      retryLimit: Math.max(cfg.jobRetryLimit, 8),
      retryDelay: 15,
      retryBackoff: true,
      expireInSeconds: 300,
    },
    [QUEUES.render]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    // A bucket that is down for a while is waited out: more retries, backing off.
    [QUEUES.offsiteCopy]: {
      policy: "standard",
      retryLimit: Math.max(cfg.jobRetryLimit, 5),
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    // A missed day is made up by the next: no retries, and never two at once.
    [QUEUES.libraryTidy]: {
      policy: "singleton",
      retryLimit: 0,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    // One job per original; the route queues none for an original already waiting, and the job
    // takes a lock per original, so two never file one twice.
    [QUEUES.libraryRefile]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 5,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    [QUEUES.rights]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
    [QUEUES.offsiteCheck]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
  };
}
