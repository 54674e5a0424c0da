import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createMailer, MAIL_OFF_REASON } from "../server/mail/mailer";
import { RESET_REQUESTED_MESSAGE } from "../shared/schemas/mail";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
});
afterAll(async () => {
  await stack?.stop();
});

describe("with no mail server configured", () => {
  it("the mailer refuses with what to set, rather than dropping mail", async () => {
    const mailer = createMailer(stack.cfg.mail);
    expect(mailer).toMatchObject({ enabled: false, reason: MAIL_OFF_REASON });
    await expect(mailer.send({ to: "a@b.example", subject: "s", text: "t", html: "<p>t</p>", studio: "S" })).rejects.toThrow(
      MAIL_OFF_REASON,
    );
  });

  it("production refuses the development mailbox, whose screen would show admins everyone's reset links", async () => {
    const { loadConfig } = await import("../server/config");
    const env = { PLATEN_DATA_DIR: stack.cfg.dataDir, PLATEN_SMTP_HOST: "127.0.0.1", PLATEN_MAILBOX_DIR: `${stack.cfg.dataDir}/mailbox` };
    expect(loadConfig({ ...env, NODE_ENV: "development" }).mail.mailboxDir).toBeDefined();
    expect(() => loadConfig({ ...env, NODE_ENV: "production" })).toThrow(
      /PLATEN_MAILBOX_DIR: the development mailbox \(the local mail fake\) is not for production/,
    );
  });

  it("an invitation is refused with that reason; a reset still answers the same; there is no mailbox", async () => {
    const admin = await userAgent(stack, "admin");
    const res = await admin.post("/api/invitations").send({ email: "someone@test.example", role: "viewer" });
    expect(res.status).toBe(503);
    expect(res.body.error.code).toBe("unavailable");
    expect(res.body.error.message).toMatch(/^Invitations go out by e-mail, and e-mail is not set up on this server: set PLATEN_SMTP_HOST/);
    expect((await admin.get("/api/invitations")).body.invitations).toEqual([]);

    const reset = await stack.agent().post("/api/auth/password-reset").send({ email: "admin@test.example" });
    expect(reset.status).toBe(202);
    expect(reset.body.message).toBe(RESET_REQUESTED_MESSAGE);

    const box = await admin.get("/api/dev/mailbox");
    expect(box.status).toBe(404);
    expect((await admin.get("/api/account/notices")).body.mailEnabled).toBe(false);
  });
});
