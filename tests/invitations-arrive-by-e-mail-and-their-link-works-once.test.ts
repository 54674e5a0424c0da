import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import bcrypt from "bcryptjs";
import type supertest from "supertest";
import { eq, sql } from "drizzle-orm";
import { invitations, users } from "../server/db/schema";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;

beforeAll(async () => {
  stack = await startStack({ mail: true, worker: false, watcher: false });
  admin = await userAgent(stack, "admin");
});
afterAll(async () => {
  await stack?.stop();
});

const TOKEN = /\/join#token=([A-Za-z0-9_-]{43})/;

/** The token of the `n`-th message to `address`, as received over SMTP by the fake. */
async function tokenFrom(address: string, n = 1) {
  const message = await stack.mail!.waitFor(address, n);
  const fromText = TOKEN.exec(message.text)?.[1];
  const fromHtml = TOKEN.exec(message.html ?? "")?.[1];
  expect(fromText, "the plain-text part carries the link").toBeDefined();
  expect(fromHtml, "the HTML part carries the same link").toBe(fromText);
  return { token: fromText!, message };
}

describe("invitations", () => {
  it("an admin invites an address; the message arrives over SMTP and its link works once", async () => {
    const res = await admin.post("/api/invitations").send({ email: "New.Framer@Test.example", role: "viewer" });
    expect(res.status).toBe(201);
    expect(res.body.invitation).toMatchObject({
      email: "new.framer@test.example",
      role: "viewer",
      state: "pending",
      sendCount: 1,
      sendError: null,
    });

    const { token, message } = await tokenFrom("new.framer@test.example");
    expect(message.subject).toBe("You are invited to Test studio on Platen");
    expect(message.from).toBe("platen@localhost");
    expect(message.text).toContain(`${stack.url}/join#token=${token}`);
    // Only the token's SHA-256 is kept.
    const [row] = await stack.db.select().from(invitations).where(eq(invitations.email, "new.framer@test.example"));
    expect(row!.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(row!.tokenHash).not.toContain(token);

    const list = await admin.get("/api/invitations");
    expect(list.body.invitations.map((i: { email: string }) => i.email)).toEqual(["new.framer@test.example"]);

    const preview = await stack.agent().post("/api/invitations/preview").send({ token });
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({
      email: "new.framer@test.example",
      role: "viewer",
      studio: "Test studio",
      invitedBy: "Test admin",
    });

    const invitee = stack.agent();
    const accepted = await invitee.post("/api/invitations/accept").send({ token, name: "Noor the framer", password: "framing-password-1" });
    expect(accepted.status).toBe(201);
    expect(accepted.body.user).toMatchObject({ email: "new.framer@test.example", name: "Noor the framer", role: "viewer" });
    // Signed in by accepting.
    expect((await invitee.get("/api/auth/me")).body.user.email).toBe("new.framer@test.example");
    // And with the password chosen.
    expect(
      (await stack.agent().post("/api/auth/login").send({ email: "new.framer@test.example", password: "framing-password-1" })).status,
    ).toBe(200);

    const again = await stack.agent().post("/api/invitations/accept").send({ token, name: "Someone else", password: "another-password-2" });
    expect(again.status).toBe(410);
    expect(again.body.error).toEqual({
      code: "gone",
      message: "This invitation has already been used. Sign in with the e-mail address and password chosen then.",
    });
    expect((await stack.agent().post("/api/invitations/preview").send({ token })).status).toBe(410);
    expect((await admin.get("/api/invitations")).body.invitations).toEqual([]);
    const made = await stack.db.select().from(users).where(eq(users.email, "new.framer@test.example"));
    expect(made).toHaveLength(1);
  });

  it("refuses an expired token with the date it ran out", async () => {
    await admin.post("/api/invitations").send({ email: "late@test.example", role: "operator" }).expect(201);
    const { token } = await tokenFrom("late@test.example");
    await stack.db
      .update(invitations)
      .set({ expiresAt: new Date("2026-01-02T03:04:00Z") })
      .where(eq(invitations.email, "late@test.example"));
    const res = await stack.agent().post("/api/invitations/accept").send({ token, name: "Late", password: "late-password-1" });
    expect(res.status).toBe(410);
    expect(res.body.error.message).toBe(
      "This invitation expired on 2 January 2026, 03:04 UTC. Ask an admin of the studio to send a new one.",
    );
    expect(
      (await admin.get("/api/invitations")).body.invitations.find((i: { email: string }) => i.email === "late@test.example").state,
    ).toBe("expired");
    expect(await stack.db.select().from(users).where(eq(users.email, "late@test.example"))).toHaveLength(0);
  });

  it("a resend sends a new token and kills the old one; an expired one can be resent", async () => {
    const list = (await admin.get("/api/invitations")).body.invitations as { id: string; email: string }[];
    const late = list.find((i) => i.email === "late@test.example")!;
    const { token: old } = await tokenFrom("late@test.example", 1);
    const res = await admin.post(`/api/invitations/${late.id}/resend`);
    expect(res.status).toBe(200);
    expect(res.body.invitation).toMatchObject({ state: "pending", sendCount: 2 });
    const { token: fresh } = await tokenFrom("late@test.example", 2);
    expect(fresh).not.toBe(old);
    const dead = await stack.agent().post("/api/invitations/accept").send({ token: old, name: "Late", password: "late-password-1" });
    expect(dead.status).toBe(410);
    expect(dead.body.error.message).toMatch(/^This invitation link does not work any more/);
    const ok = await stack
      .agent()
      .post("/api/invitations/accept")
      .send({ token: fresh, name: "Late but here", password: "late-password-1" });
    expect(ok.status).toBe(201);
    expect(ok.body.user.role).toBe("operator");
  });

  it("a revoked invitation's link is refused, and it leaves the list", async () => {
    await admin.post("/api/invitations").send({ email: "changed-mind@test.example", role: "viewer" }).expect(201);
    const { token } = await tokenFrom("changed-mind@test.example");
    const id = ((await admin.get("/api/invitations")).body.invitations as { id: string; email: string }[]).find(
      (i) => i.email === "changed-mind@test.example",
    )!.id;
    expect((await admin.delete(`/api/invitations/${id}`)).status).toBe(204);
    const res = await stack.agent().post("/api/invitations/preview").send({ token });
    expect(res.status).toBe(410);
    expect(res.body.error.message).toBe("This invitation was withdrawn by an admin of the studio. Ask them if you should still join.");
    expect((await admin.get("/api/invitations")).body.invitations).toEqual([]);
    expect((await admin.post(`/api/invitations/${id}/resend`)).body.error.message).toBe(
      "This invitation to changed-mind@test.example was revoked.",
    );
  });

  it("inviting an address that has an account, or one already invited, says so", async () => {
    let res = await admin.post("/api/invitations").send({ email: "admin@test.example", role: "viewer" });
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({
      code: "conflict",
      field: "email",
      message: "admin@test.example already has an account (Test admin, admin). Change their role in the list of accounts instead.",
    });
    await admin.post("/api/invitations").send({ email: "twice@test.example", role: "viewer" }).expect(201);
    res = await admin.post("/api/invitations").send({ email: "twice@test.example", role: "operator" });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(
      /^twice@test\.example is already invited \(sent \d+ \w+ \d{4}, \d\d:\d\d UTC\)\. Resend or revoke that invitation below\.$/,
    );
    expect(await stack.mail!.to("admin@test.example")).toEqual([]);
  });

  it("the same address invited several times at once gives one invitation and conflicts, never a server error", async () => {
    // Each insert is held a moment by a trigger of this test's own, so all pass the look-up for
    // an open invitation before the first has committed; the unique index on open invitations
    // then refuses all but one, which must read as the same conflict.
    await stack.db.execute(
      sql`create function test_hold_invite() returns trigger language plpgsql as $$ begin perform pg_sleep(0.3); return new; end $$`,
    );
    await stack.db.execute(
      sql`create trigger test_hold_invite before insert on invitations for each row execute function test_hold_invite()`,
    );
    let all;
    try {
      all = await Promise.all(
        Array.from({ length: 4 }, () => admin.post("/api/invitations").send({ email: "at-once@test.example", role: "viewer" })),
      );
    } finally {
      await stack.db.execute(sql`drop trigger test_hold_invite on invitations`);
      await stack.db.execute(sql`drop function test_hold_invite()`);
    }
    expect(all.map((r) => r.status).sort()).toEqual([201, 409, 409, 409]);
    for (const r of all.filter((r) => r.status === 409))
      expect(r.body.error).toMatchObject({
        code: "conflict",
        field: "email",
        message: expect.stringMatching(/^at-once@test\.example is already invited/),
      });
  });

  it("refuses a made-up token before the slow password hash, so such requests cost the server little", async () => {
    const hash = vi.spyOn(bcrypt, "hash");
    try {
      const res = await stack
        .agent()
        .post("/api/invitations/accept")
        .send({ token: "B".repeat(43), name: "Guess", password: "guessing-password" });
      expect(res.status).toBe(410);
      expect(res.body.error.message).toMatch(/^This invitation link does not work any more/);
      expect(hash).not.toHaveBeenCalled();
    } finally {
      hash.mockRestore();
    }
  });

  it("refuses a malformed token before looking anything up", async () => {
    const res = await stack.agent().post("/api/invitations/accept").send({ token: "abc", name: "X", password: "long-enough-pw" });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatchObject({
      field: "token",
      message: "token: This link is not complete. Open it again from the message, or copy all of it.",
    });
  });
});
