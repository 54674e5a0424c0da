import type pg from "pg";
import type { Request } from "express";
import type { ClientRateLimitInfo, Options, RateLimitInfo, Store } from "express-rate-limit";

/**
 * A fixed-window count of attempts in PostgreSQL (table rate_limit_hits), so every server process
 * on the database counts the same attempts and a restart forgives none. One row per limit and key:
 * the first attempt of a window writes it with the window's end, later ones add to it, and the
 * first attempt after the end starts the count again. Rows long past their end are removed as
 * attempts arrive (the table stays as small as the recent attempts).
 */
export class PgRateLimitStore implements Store {
  /** Counted here, not in this process: the same key is the same count in every process. */
  localKeys = false;
  private windowMs = 60_000;

  constructor(
    private readonly pool: Pick<pg.Pool, "query">,
    /** Which limit; also express-rate-limit's prefix, so two limits never share a count. */
    readonly prefix: string,
  ) {}

  init(options: Options): void {
    this.windowMs = options.windowMs;
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const { rows } = await this.pool.query<{ hits: number; reset_at: Date }>(
      "select hits, reset_at from rate_limit_hits where name = $1 and key = $2 and reset_at > now()",
      [this.prefix, key],
    );
    return rows[0] ? { totalHits: rows[0].hits, resetTime: rows[0].reset_at } : undefined;
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    // One statement: two processes counting the same key at once both land (the row is locked by
    // the conflict), and a window that ended starts again from 1. Other keys' rows a whole window
    // past their end go meanwhile (never this key's: one statement must not touch a row twice).
    const { rows } = await this.pool.query<{ hits: number; reset_at: Date }>(
      `with gone as (
         delete from rate_limit_hits
          where reset_at < now() - make_interval(secs => $3::double precision / 1000)
            and not (name = $1 and key = $2)
       )
       insert into rate_limit_hits as r (name, key, hits, reset_at)
       values ($1, $2, 1, now() + make_interval(secs => $3::double precision / 1000))
       on conflict (name, key) do update set
         hits = case when r.reset_at <= now() then 1 else r.hits + 1 end,
         reset_at = case when r.reset_at <= now() then excluded.reset_at else r.reset_at end
       returning hits, reset_at`,
      [this.prefix, key, this.windowMs],
    );
    return { totalHits: rows[0]!.hits, resetTime: rows[0]!.reset_at };
  }

  async decrement(key: string): Promise<void> {
    await this.pool.query("update rate_limit_hits set hits = greatest(hits - 1, 0) where name = $1 and key = $2 and reset_at > now()", [
      this.prefix,
      key,
    ]);
  }

  async resetKey(key: string): Promise<void> {
    await this.pool.query("delete from rate_limit_hits where name = $1 and key = $2", [this.prefix, key]);
  }

  async resetAll(): Promise<void> {
    await this.pool.query("delete from rate_limit_hits where name = $1", [this.prefix]);
  }
}

/**
 * How long a refused person has to wait, for the limit's message: the time left in the window
 * that refused them (`resetTime`, as the store counted it), rounded up to whole minutes so the
 * wait said is never shorter than the real one. Without a reset time, the whole window.
 */
export function waitLeft(resetTime: Date | undefined, windowMs: number, now = Date.now()): string {
  const left = resetTime ? Math.max(0, resetTime.getTime() - now) : windowMs;
  const minutes = Math.max(1, Math.ceil(left / 60_000));
  if (minutes === 1) return "1 minute";
  if (minutes < 120) return `${minutes} minutes`;
  return `${Math.ceil(minutes / 60)} hours`;
}

/** The time left in the window that refused `req` (express-rate-limit puts its count on the request). */
export function waitLeftFor(req: Request, windowMs: number): string {
  return waitLeft((req as Request & { rateLimit?: RateLimitInfo }).rateLimit?.resetTime, windowMs);
}
