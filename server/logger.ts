import pino from "pino";
import { config } from "./config";

/** Structured JSON logs; every line of a request or job carries its id through a child logger. */
export const logger = pino({
  level: config().logLevel,
  base: { proc: process.env.PLATEN_PROCESS ?? "platen" },
  redact: { paths: ["password", "*.password", "req.headers.cookie"], censor: "[redacted]" },
});

export type Logger = pino.Logger;
