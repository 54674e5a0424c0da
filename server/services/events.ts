import type pg from "pg";
import type { LiveEvent } from "../../shared/schemas/queue";

/**
 * Live events travel through PostgreSQL NOTIFY, so any process (watcher, workers on other machines)
 * can tell every server process that something changed. Sent inside a transaction, the notice is
 * delivered at commit.
 */
export const EVENTS_CHANNEL = "platen_events";

export async function notify(q: Pick<pg.Pool | pg.PoolClient, "query">, event: LiveEvent): Promise<void> {
  await q.query("select pg_notify($1, $2)", [EVENTS_CHANNEL, JSON.stringify(event)]);
}

/** Listens on a dedicated connection and calls `onEvent` for each notice; reconnects if dropped. */
export function listen(pool: pg.Pool, onEvent: (event: LiveEvent) => void, onError: (err: Error) => void) {
  let client: pg.PoolClient | null = null;
  let stopped = false;
  let retry: NodeJS.Timeout | undefined;

  const connect = async () => {
    try {
      client = await pool.connect();
      client.on("notification", (msg) => {
        if (msg.channel !== EVENTS_CHANNEL || !msg.payload) return;
        try {
          onEvent(JSON.parse(msg.payload) as LiveEvent);
        } catch (err) {
          onError(err as Error);
        }
      });
      const mine = client;
      mine.on("error", (err) => {
        onError(err);
        if (client === mine) {
          client = null;
          mine.release(true);
        }
        if (!stopped) retry = setTimeout(connect, 1000);
      });
      await client.query(`listen ${EVENTS_CHANNEL}`);
    } catch (err) {
      onError(err as Error);
      if (!stopped) retry = setTimeout(connect, 1000);
    }
  };
  void connect();
  return async () => {
    stopped = true;
    clearTimeout(retry);
    const c = client;
    client = null;
    if (c) {
      try {
        await c.query(`unlisten ${EVENTS_CHANNEL}`);
      } catch {
        /* closing anyway */
      }
      c.release();
    }
  };
}
