import crypto from "node:crypto";
import type { RequestHandler } from "express";
import type { Logger } from "../logger";

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      id: string;
      log: Logger;
    }
  }
}

/** Gives every request an id and a logger that prints it on every line; logs the outcome. */
export function requestContext(log: Logger): RequestHandler {
  return (req, res, next) => {
    const incoming = req.get("x-request-id");
    req.id = incoming && /^[\w-]{8,64}$/.test(incoming) ? incoming : crypto.randomUUID();
    req.log = log.child({ reqId: req.id });
    res.setHeader("X-Request-Id", req.id);
    const started = process.hrtime.bigint();
    res.on("finish", () => {
      if (req.path === "/api/events") return;
      const ms = Number(process.hrtime.bigint() - started) / 1e6;
      req.log.info(
        { method: req.method, path: req.originalUrl.split("?")[0], status: res.statusCode, ms: Math.round(ms), user: req.user?.id },
        "request",
      );
    });
    next();
  };
}
