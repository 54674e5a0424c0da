/**
 * A refused sign-in or password request says how long is left to wait: the time to the end of
 * the window that refused it (as counted in PostgreSQL), rounded up to whole minutes, not the
 * whole window every time. A person told "Wait 15 minutes" at minute 14 would wait 14 minutes
 * for nothing. The window's end is moved here (rather than waited for) to make the time left.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { waitLeft } from "../server/middleware/rate-limit-store";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false, env: { PLATEN_LOGIN_LIMIT: "2", PLATEN_RESET_LIMIT: "1" } });
  await userAgent(stack, "operator", "waiting@test.example");
}, 60_000);
afterAll(async () => {
  await stack?.stop();
});

/** Moves the end of every count of `name` to `seconds` from now. */
const endIn = (name: string, seconds: number) =>
  stack.database.pool.query("update rate_limit_hits set reset_at = now() + make_interval(secs => $2) where name = $1", [name, seconds]);

describe("the wait a limit asks for", () => {
  it("is rounded up to whole minutes, never shorter than the real one, and hours when long", () => {
    const now = Date.parse("2026-12-04T10:00:00Z");
    const at = (ms: number) => new Date(now + ms);
    expect(waitLeft(at(15 * 60_000), 15 * 60_000, now)).toBe("15 minutes");
    expect(waitLeft(at(14 * 60_000 + 1), 15 * 60_000, now)).toBe("15 minutes");
    expect(waitLeft(at(14 * 60_000), 15 * 60_000, now)).toBe("14 minutes");
    expect(waitLeft(at(61_000), 15 * 60_000, now)).toBe("2 minutes");
    expect(waitLeft(at(60_000), 15 * 60_000, now)).toBe("1 minute");
    expect(waitLeft(at(5_000), 15 * 60_000, now)).toBe("1 minute");
    // A window that ended while the answer was made still asks for a moment, never "0 minutes".
    expect(waitLeft(at(-5_000), 15 * 60_000, now)).toBe("1 minute");
    // No reset time known: the whole window.
    expect(waitLeft(undefined, 15 * 60_000, now)).toBe("15 minutes");
    expect(waitLeft(at(119 * 60_000), 180 * 60_000, now)).toBe("119 minutes");
    expect(waitLeft(at(150 * 60_000), 180 * 60_000, now)).toBe("3 hours");
  });

  it("for sign-in guesses is the time left in the window that refused them", async () => {
    const agent = stack.agent();
    const signIn = (password: string) => agent.post("/api/auth/login").send({ email: "waiting@test.example", password });
    expect((await signIn("wrong-password-1")).status).toBe(401);
    expect((await signIn("wrong-password-2")).status).toBe(401);
    const first = await signIn("wrong-password-3");
    expect(first.status).toBe(429);
    expect(first.body.error.message).toBe("Too many sign-in attempts. Wait 15 minutes and try again.");

    // Four minutes and ten seconds are left: five minutes, rounded up.
    await endIn("sign-in", 250);
    const later = await signIn("operator-password-123");
    expect(later.status).toBe(429);
    expect(later.body.error.message).toBe("Too many sign-in attempts. Wait 5 minutes and try again.");

    // Under a minute left: one minute, said in the singular.
    await endIn("sign-in", 20);
    expect((await signIn("operator-password-123")).body.error.message).toBe("Too many sign-in attempts. Wait 1 minute and try again.");
  });

  it("for new-password requests is the time left in their window", async () => {
    const agent = stack.agent();
    const ask = () => agent.post("/api/auth/password-reset").send({ email: "someone@test.example" });
    expect((await ask()).status).toBe(202);
    const refused = await ask();
    expect(refused.status).toBe(429);
    expect(refused.body.error.message).toBe("Too many requests for a new password. Wait 15 minutes and try again.");
    await endIn("reset-email", 7 * 60 + 30);
    expect((await ask()).body.error.message).toBe("Too many requests for a new password. Wait 8 minutes and try again.");
  });

  it("for wrong current passwords is the time left in their window", async () => {
    const signedIn = await userAgent(stack, "viewer", "changing@test.example");
    const change = (current: string) =>
      signedIn.post("/api/account/password").send({ currentPassword: current, newPassword: "a-new-password-456" });
    expect((await change("not-my-password-1")).status).not.toBe(429);
    expect((await change("not-my-password-2")).status).not.toBe(429);
    const refused = await change("not-my-password-3");
    expect(refused.status).toBe(429);
    expect(refused.body.error.message).toMatch(/^Too many wrong current passwords\. Wait 15 minutes and try again/);
    await endIn("password-change", 2 * 60 + 1);
    expect((await change("not-my-password-4")).body.error.message).toMatch(
      /^Too many wrong current passwords\. Wait 3 minutes and try again/,
    );
  });
});
