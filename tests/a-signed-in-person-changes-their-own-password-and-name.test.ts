import { afterAll, beforeAll, describe, expect, it } from "vitest";
import bcrypt from "bcryptjs";
import { and, desc, eq, gt } from "drizzle-orm";
import { auditEvents, users } from "../server/db/schema";
import { WRONG_CURRENT_PASSWORD } from "../shared/schemas/account";
import { startStack, userAgent, type Stack } from "./helpers/stack";

// A small guess limit, so the lock-out is reached in a few requests.
let stack: Stack;
beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false, env: { PLATEN_LOGIN_LIMIT: "3" } });
});
afterAll(async () => {
  await stack?.stop();
});

async function signIn(email: string, password: string) {
  const agent = stack.agent();
  const res = await agent.post("/api/auth/login").send({ email, password });
  return { agent, status: res.status, cookie: res.headers["set-cookie"] as unknown as string[] | undefined };
}

/** The newest audit row's id so far (rows after it are this test's). */
async function lastAuditId() {
  const [row] = await stack.db.select({ id: auditEvents.id }).from(auditEvents).orderBy(desc(auditEvents.id)).limit(1);
  return row?.id ?? 0;
}

describe("changing one's own password while signed in", () => {
  it("needs the current password, keeps this browser signed in on a fresh session id and signs out the rest", async () => {
    const email = "changer@test.example";
    const first = await userAgent(stack, "viewer", email);
    const here = await signIn(email, "viewer-password-123");
    const elsewhere = await signIn(email, "viewer-password-123");
    const [before] = await stack.db.select().from(users).where(eq(users.email, email));

    // A wrong current password: refused beside its field, nothing changed, nobody signed out.
    const wrong = await here.agent
      .post("/api/account/password")
      .send({ currentPassword: "not-my-password", newPassword: "a-fresh-password-1" });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error).toMatchObject({ message: WRONG_CURRENT_PASSWORD, field: "currentPassword" });
    expect((await elsewhere.agent.get("/api/auth/me")).status).toBe(200);
    const [unchanged] = await stack.db.select().from(users).where(eq(users.email, email));
    expect(unchanged!.passwordHash).toBe(before!.passwordHash);

    // The same password again is not a change.
    const same = await here.agent
      .post("/api/account/password")
      .send({ currentPassword: "viewer-password-123", newPassword: "viewer-password-123" });
    expect(same.status).toBe(400);
    expect(same.body.error).toMatchObject({
      field: "newPassword",
      message: "newPassword: Expected a new password different from your current one",
    });

    const since = await lastAuditId();
    const done = await here.agent
      .post("/api/account/password")
      .send({ currentPassword: "viewer-password-123", newPassword: "a-fresh-password-1" });
    expect(done.status, JSON.stringify(done.body)).toBe(200);
    expect(done.body).toMatchObject({ user: { email, role: "viewer" }, signedOutElsewhere: 2 });

    // This browser is still in (its agent took the new cookie); the other two are out.
    expect((await here.agent.get("/api/auth/me")).status).toBe(200);
    expect((await elsewhere.agent.get("/api/auth/me")).status).toBe(401);
    expect((await first.get("/api/auth/me")).status).toBe(401);
    // The session id this browser had before the change no longer works (a fresh one was issued).
    const oldCookie = here.cookie!.map((c) => c.split(";")[0]).join("; ");
    expect((await stack.agent().get("/api/auth/me").set("Cookie", oldCookie)).status).toBe(401);

    // The stored hash is a bcrypt hash of the new password; the old one signs in no more.
    const [after] = await stack.db.select().from(users).where(eq(users.email, email));
    expect(await bcrypt.compare("a-fresh-password-1", after!.passwordHash)).toBe(true);
    expect((await signIn(email, "viewer-password-123")).status).toBe(401);
    expect((await signIn(email, "a-fresh-password-1")).status).toBe(200);

    // One audit row, naming the person; neither password nor hash appears in it.
    const rows = await stack.db
      .select()
      .from(auditEvents)
      .where(and(gt(auditEvents.id, since), eq(auditEvents.action, "auth.password_change")));
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ actorEmail: email, subjectId: before!.id, after: { signedOutElsewhere: 2 } });
    expect(rows[0]!.summary).toBe(`${email} changed their password while signed in; 2 other sessions were signed out`);
    const text = JSON.stringify(rows);
    for (const secret of ["a-fresh-password-1", "viewer-password-123", after!.passwordHash, before!.passwordHash])
      expect(text).not.toContain(secret);
  });

  it("counts wrong current passwords like failed sign-ins, but not a new password refused for its form", async () => {
    const email = "guesser@test.example";
    const agent = await userAgent(stack, "operator", email);
    // Malformed bodies are answered on their own and are not guesses.
    for (let i = 0; i < 5; i++) {
      const res = await agent.post("/api/account/password").send({ currentPassword: "whatever", newPassword: "short" });
      expect(res.status).toBe(400);
      expect(res.body.error.field).toBe("newPassword");
    }
    for (let i = 0; i < 3; i++) {
      const res = await agent.post("/api/account/password").send({ currentPassword: `guess-${i}`, newPassword: "a-taken-over-password" });
      expect(res.status).toBe(400);
      expect(res.body.error.message).toBe(WRONG_CURRENT_PASSWORD);
    }
    // The fourth guess is refused before it is checked, even when it is right.
    const locked = await agent
      .post("/api/account/password")
      .send({ currentPassword: "operator-password-123", newPassword: "a-taken-over-password" });
    expect(locked.status).toBe(429);
    expect(locked.body.error.message).toMatch(
      /^Too many wrong current passwords\. Wait 15 minutes and try again, or choose a new password by e-mail\.$/,
    );
    expect((await signIn(email, "operator-password-123")).status).toBe(200);
  });

  it("is refused signed out", async () => {
    const res = await stack.agent().post("/api/account/password").send({ currentPassword: "x", newPassword: "a-long-password" });
    expect(res.status).toBe(401);
  });
});

describe("changing one's own name", () => {
  it("renames only the person asking, records it once, and refuses a blank name", async () => {
    const email = "renamer@test.example";
    const agent = await userAgent(stack, "viewer", email);
    const other = await userAgent(stack, "viewer", "bystander@test.example");
    const since = await lastAuditId();

    const blank = await agent.patch("/api/account/name").send({ name: "   " });
    expect(blank.status).toBe(400);
    expect(blank.body.error.field).toBe("name");

    const res = await agent.patch("/api/account/name").send({ name: "  Ilse Varga  " });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.user).toMatchObject({ email, name: "Ilse Varga" });
    expect((await agent.get("/api/auth/me")).body.user.name).toBe("Ilse Varga");
    expect((await other.get("/api/auth/me")).body.user.name).toBe("Test viewer");

    // The same name again writes nothing.
    expect((await agent.patch("/api/account/name").send({ name: "Ilse Varga" })).status).toBe(200);
    const rows = await stack.db
      .select()
      .from(auditEvents)
      .where(and(gt(auditEvents.id, since), eq(auditEvents.action, "account.rename")));
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ actorEmail: email, before: { name: "Test viewer" }, after: { name: "Ilse Varga" } });
  });
});
