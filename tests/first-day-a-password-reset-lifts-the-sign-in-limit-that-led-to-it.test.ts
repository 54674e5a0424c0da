import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;

beforeAll(async () => {
  stack = await startStack({ mail: true, worker: false, watcher: false, env: { PLATEN_LOGIN_LIMIT: "3" } });
});
afterAll(async () => {
  await stack?.stop();
});

const TOKEN = /\/reset-password#token=([A-Za-z0-9_-]{43})/;

describe("a password reset after too many wrong passwords", () => {
  it("lets the new password sign in at once from that address, and leaves other e-mails' counts alone", async () => {
    await userAgent(stack, "operator", "assistant@test.example");
    await userAgent(stack, "viewer", "framer@test.example");
    const browser = stack.agent();
    const tries = async (email: string, password: string, n: number) => {
      const statuses: number[] = [];
      for (let i = 0; i < n; i++) statuses.push((await browser.post("/api/auth/login").send({ email, password })).status);
      return statuses;
    };
    // Three wrong passwords, then the limit: even the right one is refused now.
    expect(await tries("assistant@test.example", "not-the-password", 4)).toEqual([401, 401, 401, 429]);
    expect(await tries("assistant@test.example", "operator-password-123", 1)).toEqual([429]);
    // The framer mistyped too, from the same machine.
    expect(await tries("framer@test.example", "not-the-password", 4)).toEqual([401, 401, 401, 429]);

    // The assistant asks for a link, as the limit's message on the sign-in page offers.
    await browser.post("/api/auth/password-reset").send({ email: "Assistant@test.example" }).expect(202);
    const message = await stack.mail!.waitFor("assistant@test.example");
    const token = TOKEN.exec(message.text)![1]!;
    const done = await browser.post("/api/auth/password-reset/complete").send({ token, password: "a-new-password-2026" });
    expect(done.status).toBe(200);
    await browser.post("/api/auth/logout").expect(204);

    // Signed out again (another browser, the next morning's sign-in): the new password works, the
    // guesses that led to the reset are not counted against it.
    const signIn = await browser.post("/api/auth/login").send({ email: "assistant@test.example", password: "a-new-password-2026" });
    expect(signIn.status).toBe(200);
    expect(signIn.body.user.email).toBe("assistant@test.example");
    // The framer reset nothing: their count stands.
    const framer = await browser.post("/api/auth/login").send({ email: "framer@test.example", password: "viewer-password-123" });
    expect(framer.status).toBe(429);
    expect(framer.body.error.message).toBe("Too many sign-in attempts. Wait 15 minutes and try again.");
  });
});
