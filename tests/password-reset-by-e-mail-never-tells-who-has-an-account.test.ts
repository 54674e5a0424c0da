import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import bcrypt from "bcryptjs";
import { passwordResets } from "../server/db/schema";
import { RESET_REQUESTED_MESSAGE } from "../shared/schemas/mail";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;

beforeAll(async () => {
  stack = await startStack({ mail: true, worker: false, watcher: false, env: { PLATEN_RESET_LIMIT: "4" } });
});
afterAll(async () => {
  await stack?.stop();
});

const TOKEN = /\/reset-password#token=([A-Za-z0-9_-]{43})/;

async function tokenFrom(address: string, n = 1) {
  const message = await stack.mail!.waitFor(address, n);
  expect(TOKEN.exec(message.html ?? "")?.[1]).toBe(TOKEN.exec(message.text)?.[1]);
  return TOKEN.exec(message.text)![1]!;
}

describe("password reset", () => {
  it("answers the same for a known and an unknown address, and mails only the known one", async () => {
    const signedIn = await userAgent(stack, "operator", "forgetful@test.example");
    const unknown = await stack.agent().post("/api/auth/password-reset").send({ email: "nobody-here@test.example" });
    const known = await stack.agent().post("/api/auth/password-reset").send({ email: "Forgetful@Test.example" });
    for (const res of [unknown, known]) {
      expect(res.status).toBe(202);
      expect(res.body).toEqual({ message: RESET_REQUESTED_MESSAGE });
    }
    expect(
      Object.keys(unknown.headers)
        .filter((h) => !["date", "x-request-id", "etag", "ratelimit", "ratelimit-policy"].includes(h))
        .sort(),
    ).toEqual(
      Object.keys(known.headers)
        .filter((h) => !["date", "x-request-id", "etag", "ratelimit", "ratelimit-policy"].includes(h))
        .sort(),
    );
    const token = await tokenFrom("forgetful@test.example");
    const message = (await stack.mail!.to("forgetful@test.example"))[0]!;
    expect(message.subject).toBe("Choose a new password for Test studio on Platen");
    // The unknown address got nothing (its request was handled before the known one's mail went out).
    expect((await stack.mail!.messages()).flatMap((m) => m.to)).not.toContain("nobody-here@test.example");

    const preview = await stack.agent().post("/api/auth/password-reset/preview").send({ token });
    expect(preview.body).toMatchObject({ email: "forgetful@test.example" });

    const browser = stack.agent();
    const done = await browser.post("/api/auth/password-reset/complete").send({ token, password: "a-brand-new-password" });
    expect(done.status).toBe(200);
    expect(done.body.user.email).toBe("forgetful@test.example");
    expect((await browser.get("/api/auth/me")).status).toBe(200);
    // The session that was open elsewhere is over.
    expect((await signedIn.get("/api/auth/me")).status).toBe(401);
    // The old password no longer works, the new one does.
    expect(
      (await stack.agent().post("/api/auth/login").send({ email: "forgetful@test.example", password: "operator-password-123" })).status,
    ).toBe(401);
    expect(
      (await stack.agent().post("/api/auth/login").send({ email: "forgetful@test.example", password: "a-brand-new-password" })).status,
    ).toBe(200);

    // The link works once.
    const again = await stack.agent().post("/api/auth/password-reset/complete").send({ token, password: "yet-another-password" });
    expect(again.status).toBe(410);
    expect(again.body.error.message).toBe(
      "This link has already been used, or a newer one was sent. Sign in with your password, or ask for a new link on the sign-in page.",
    );
    expect(
      (await stack.agent().post("/api/auth/login").send({ email: "forgetful@test.example", password: "a-brand-new-password" })).status,
    ).toBe(200);
  });

  it("refuses an expired link, and a newer request retires the older link", async () => {
    await userAgent(stack, "viewer", "slow@test.example");
    await stack.agent().post("/api/auth/password-reset").send({ email: "slow@test.example" }).expect(202);
    const first = await tokenFrom("slow@test.example", 1);
    await stack.agent().post("/api/auth/password-reset").send({ email: "slow@test.example" }).expect(202);
    const second = await tokenFrom("slow@test.example", 2);
    const retired = await stack.agent().post("/api/auth/password-reset/complete").send({ token: first, password: "slow-new-password" });
    expect(retired.status).toBe(410);

    expect(retired.body.error.message).toMatch(/^This link has already been used, or a newer one was sent/);
    await stack.db.update(passwordResets).set({ expiresAt: new Date("2026-03-04T05:06:00Z") });
    const expired = await stack.agent().post("/api/auth/password-reset/complete").send({ token: second, password: "slow-new-password" });
    expect(expired.status).toBe(410);
    expect(expired.body.error.message).toBe(
      "This link expired at 4 March 2026, 05:06 UTC. Ask for a new one on the sign-in page (“Forgot password”).",
    );
    expect((await stack.agent().post("/api/auth/login").send({ email: "slow@test.example", password: "viewer-password-123" })).status).toBe(
      200,
    );
  });

  it("refuses a made-up token before the slow password hash, so such requests cost the server little", async () => {
    const hash = vi.spyOn(bcrypt, "hash");
    try {
      const res = await stack
        .agent()
        .post("/api/auth/password-reset/complete")
        .send({ token: "C".repeat(43), password: "guessing-password" });
      expect(res.status).toBe(410);
      expect(res.body.error.message).toMatch(/^This link to choose a new password does not work/);
      expect(hash).not.toHaveBeenCalled();
    } finally {
      hash.mockRestore();
    }
  });

  it("is rate-limited per address and e-mail, with the same answer meanwhile", async () => {
    const agent = stack.agent();
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) statuses.push((await agent.post("/api/auth/password-reset").send({ email: "flood@test.example" })).status);
    expect(statuses).toEqual([202, 202, 202, 202, 429, 429]);
    const res = await agent.post("/api/auth/password-reset").send({ email: "flood@test.example" });
    expect(res.body.error.message).toBe("Too many requests for a new password. Wait 15 minutes and try again.");
  });
});
