/**
 * The request limits (sign-in guesses here) are counted in PostgreSQL: two server processes on one
 * database count the same guesses, and a server started again forgives none. Each "process" is a
 * separate app made by createApp, with its own limiters, as every server process has; they share
 * only the database. A window that has ended starts the count again.
 */
import http from "node:http";
import type { AddressInfo } from "node:net";
import supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createApp } from "../server/app";
import { createHub } from "../server/services/hub";
import { PgRateLimitStore } from "../server/middleware/rate-limit-store";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;
const servers: { server: http.Server; hub: ReturnType<typeof createHub> }[] = [];

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false, env: { PLATEN_LOGIN_LIMIT: "3" } });
  await userAgent(stack, "operator", "counted@test.example");
});
afterAll(async () => {
  for (const s of servers) {
    s.server.closeAllConnections();
    await new Promise((r) => s.server.close(r));
    await s.hub.close();
  }
  await stack?.stop();
});

/** Another server process on the same database: its own app, limiters and port. */
async function anotherServer() {
  const log = (await import("pino")).default({ level: "silent" });
  const hub = createHub(stack.database.pool, log);
  const app = createApp({
    config: stack.cfg,
    database: stack.database,
    boss: stack.boss,
    library: stack.library,
    offsite: stack.offsite,
    log,
    hub,
    sessionSecret: stack.env.PLATEN_SESSION_SECRET!,
  });
  const server = await new Promise<http.Server>((resolve) => {
    const s = app.listen(0, "127.0.0.1", () => resolve(s));
  });
  servers.push({ server, hub });
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return {
    signIn: (password: string) =>
      supertest(url).post("/api/auth/login").set("X-Platen-Request", "1").send({ email: "counted@test.example", password }),
    async stop() {
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
    },
  };
}

describe("sign-in limits", () => {
  it("count the guesses made on every server process, and a restart forgives none", async () => {
    const one = await anotherServer();
    const two = await anotherServer();
    expect((await one.signIn("wrong-password-1")).status).toBe(401);
    expect((await two.signIn("wrong-password-2")).status).toBe(401);
    expect((await one.signIn("wrong-password-3")).status).toBe(401);
    // Three guesses in all, the limit: the fourth is refused on either process, even the right one.
    const refused = await two.signIn("operator-password-123");
    expect(refused.status).toBe(429);
    expect(refused.body.error.message).toMatch(/^Too many sign-in attempts\. Wait 15 minutes/);

    // Both processes stop and a new one starts: the count is still there.
    await one.stop();
    await two.stop();
    const again = await anotherServer();
    expect((await again.signIn("operator-password-123")).status).toBe(429);

    // The window ends (moved into the past here rather than waited for): counting starts again.
    await stack.database.pool.query("update rate_limit_hits set reset_at = now() - interval '1 second'");
    expect((await again.signIn("operator-password-123")).status).toBe(200);
    expect((await again.signIn("wrong-password-4")).status).toBe(401);
    // A successful sign-in is not counted (skipSuccessfulRequests: taken back once its answer has
    // gone, which may be a moment after the next request): only the new guess stays.
    await expect
      .poll(
        async () => (await stack.database.pool.query("select name, hits from rate_limit_hits where key like '%counted@test.example'")).rows,
      )
      .toEqual([{ name: "sign-in", hits: 1 }]);
  });

  it("lose no attempt counted at the same moment by two processes", async () => {
    // Two stores of one limit, as two processes have; twenty attempts at once, ten through each.
    const a = new PgRateLimitStore(stack.database.pool, "burst");
    const b = new PgRateLimitStore(stack.database.pool, "burst");
    for (const s of [a, b]) s.init({ windowMs: 60_000 } as never);
    const counts = await Promise.all(Array.from({ length: 20 }, (_, i) => (i % 2 ? a : b).increment("10.0.0.9")));
    expect(counts.map((c) => c.totalHits).sort((x, y) => x - y)).toEqual(Array.from({ length: 20 }, (_, i) => i + 1));
    // Every answer names the same end of the window: the first attempt's.
    expect(new Set(counts.map((c) => c.resetTime!.getTime())).size).toBe(1);
    await a.decrement("10.0.0.9");
    expect((await b.get("10.0.0.9"))?.totalHits).toBe(19);
    await b.resetKey("10.0.0.9");
    expect(await a.get("10.0.0.9")).toBeUndefined();
  });
});
