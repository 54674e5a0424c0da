import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import type { AppDeps } from "../../app";
import type { LiveEvent } from "../../../shared/schemas/queue";

/** Server-sent events: every change anywhere (NOTIFY from any process) is pushed to open pages. */
export function eventsRouter({ hub }: AppDeps): Router {
  const router = Router();
  handle(router, API.events, ({ req, res }) => {
    res.writeHead(200, {
      "Content-Type": "text/event-stream",
      "Cache-Control": "no-cache, no-transform",
      Connection: "keep-alive",
      "X-Accel-Buffering": "no",
    });
    res.write("retry: 2000\n\n");
    res.write(`event: hello\ndata: {}\n\n`);
    const send = (e: LiveEvent) => res.write(`event: change\ndata: ${JSON.stringify(e)}\n\n`);
    const unsubscribe = hub.subscribe(send);
    const ping = setInterval(() => res.write(": ping\n\n"), 15_000);
    req.on("close", () => {
      clearInterval(ping);
      unsubscribe();
    });
    return undefined;
  });
  return router;
}
