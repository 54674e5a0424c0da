import type PgBoss from "pg-boss";
import { config } from "../config";

/** Queue names and their retry policy, shared by the processes that send and the workers. */
export const QUEUES = {
  analyse: "scan-analyse",
  split: "scan-split",
  render: "fragment-render",
  output: "output-render",
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
    [QUEUES.render]: {
      policy: "standard",
      retryLimit: cfg.jobRetryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: cfg.jobExpireSeconds,
    },
  };
}
