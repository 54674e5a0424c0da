import { Router, type Request } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import type { AppDeps } from "../../app";
import type { Db } from "../../db";
import type { LiveEvent } from "../../../shared/schemas/queue";
import { findUser } from "../../services/users";

/** How often an open stream checks that its session still stands (with the keep-alive ping). */
const LIVE_CHECK_MS = 15_000;

/**
 * Whether the session a stream was opened with still signs in the same, enabled person. Sign-out,
 * a password reset (which ends every session of the account) and disabling the account all end it,
 * in this process or any other one on the same database.
 */
async function stillSignedIn(req: Request, db: Db): Promise<boolean> {
  const sess = await new Promise<{ passport?: { user?: string } } | null | undefined>((resolve, reject) =>
    req.sessionStore.get(req.sessionID, (err, s) => (err ? reject(err) : resolve(s as never))),
  );
  const id = req.user?.id;
  if (!id || sess?.passport?.user !== id) return false;
  const row = await findUser(db, id);
  return Boolean(row && !row.disabledAt);
}

/** Server-sent events: every change anywhere (NOTIFY from any process) is pushed to open pages. */
export function eventsRouter({ hub, database, liveCheckMs = LIVE_CHECK_MS }: AppDeps): Router {
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
    let checking = false;
    const check = setInterval(() => {
      if (checking) return;
      checking = true;
      stillSignedIn(req, database.db)
        .then((ok) => {
          if (ok || res.writableEnded) return;
          // Said once, then the stream ends; the browser's reconnect is answered 401.
          res.end(`event: signed-out\ndata: {}\n\n`);
        })
        // A database hiccup is not a sign-out: the next check decides.
        .catch((err: unknown) => req.log.warn({ err }, "live events: session check failed"))
        .finally(() => (checking = false));
    }, liveCheckMs);
    req.on("close", () => {
      clearInterval(ping);
      clearInterval(check);
      unsubscribe();
    });
    return undefined;
  });
  return router;
}
