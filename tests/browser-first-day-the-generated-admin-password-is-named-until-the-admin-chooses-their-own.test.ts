/**
 * First start makes an admin with a generated password, shown in the start log and kept in the
 * data folder (first-admin.txt, readable by its owner only). Once that admin chooses a password
 * of their own, by Your account or by a reset link, the kept copy goes: it signs no one in any
 * more, and a password in plain text on disk helps nobody. The start log says where the file is
 * (from the checkout when inside it, else the full path) only while it exists, and never echoes a
 * password the studio set itself in PLATEN_ADMIN_PASSWORD. Until then, signed in with it, the
 * admin sees a line above every page leading to Your account.
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ensureFirstAdmin, firstAdminFile, shownPath, signInAdvice } from "../server/services/bootstrap";
import { startStack, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false, mail: true });
  browser = await openBrowser();
}, 60_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the generated first-admin password", () => {
  it("is kept for its owner only, shown once with the advice to choose one's own, and removed when they do", async () => {
    const admin = await ensureFirstAdmin(stack.database.db, stack.cfg);
    expect(admin?.generated).toBe(true);
    const file = firstAdminFile(stack.cfg);
    expect(admin!.file).toBe(file);
    expect(fs.readFileSync(file, "utf8")).toBe(`e-mail: admin@platen.local\npassword: ${admin!.password}\n`);
    expect(fs.statSync(file).mode & 0o777).toBe(0o600);
    // A second start makes no second admin.
    expect(await ensureFirstAdmin(stack.database.db, stack.cfg)).toBeNull();

    const first = signInAdvice(admin, stack.cfg, "/somewhere/else");
    expect(first[0]).toBe(`  Sign in as admin@platen.local with password ${admin!.password} (also saved in ${file}).`);
    expect(first[1]).toMatch(/choose a password of your own on Your account; the saved copy is removed when you do/);
    // A later start names the file while it is there.
    expect(signInAdvice(null, stack.cfg, "/somewhere/else").join("\n")).toContain(`generated password is still in ${file}`);

    const agent = stack.agent();
    const signedIn = await agent.post("/api/auth/login").send({ email: "admin@platen.local", password: admin!.password });
    expect(signedIn.status).toBe(200);
    // Signed in with it, the admin is told so (at sign-in and on every page, through /me).
    expect(signedIn.body.user.generatedPassword).toBe(true);
    expect((await agent.get("/api/auth/me")).body.user.generatedPassword).toBe(true);

    // In the browser: a line above every page says so and leads to Your account.
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@platen.local", admin!.password);
    const note = page.getByTestId("generated-password");
    await note.waitFor({ timeout: 10_000 });
    expect(await note.textContent()).toBe(
      "You are signed in with the password Platen generated at first start, which is also kept in a file on the server. Choose one of your own: the kept copy is removed when you do.",
    );
    await note.getByRole("link", { name: "Choose one of your own" }).click();
    await page.waitForURL((u) => u.pathname === "/account");
    // A refused change (wrong current password) leaves the file.
    expect((await agent.post("/api/account/password").send({ currentPassword: "not-it", newPassword: "studio-chosen-42" })).status).toBe(
      400,
    );
    expect(fs.existsSync(file)).toBe(true);
    // The admin chooses their own on Your account, in the browser: the line goes at once.
    await page.getByLabel("Current password").fill(admin!.password);
    await page.getByLabel("New password", { exact: true }).fill("studio-chosen-42");
    await page.getByLabel("Repeat the new password").fill("studio-chosen-42");
    await page.getByRole("button", { name: "Change password" }).click();
    await expect.poll(() => note.count(), { timeout: 10_000 }).toBe(0);
    expect(fs.existsSync(file)).toBe(false);
    await page.reload();
    await page.getByRole("heading", { name: "Your account" }).waitFor();
    expect(await note.count()).toBe(0);
    await page.close();
    expect(signInAdvice(null, stack.cfg, "/somewhere/else")).toEqual(["  Sign in with your account."]);
  });

  it("is removed by a reset link too, but a file naming someone else stays", async () => {
    const file = firstAdminFile(stack.cfg);
    // The kept file names another address: a reset for admin@platen.local leaves it alone.
    fs.writeFileSync(file, "e-mail: someone-else@test.example\npassword: abc\n", { mode: 0o600 });
    const reset = async () => {
      const ask = await stack.agent().post("/api/auth/password-reset").send({ email: "admin@platen.local" });
      expect(ask.status).toBe(202);
      const mail = await stack.mail!.waitFor("admin@platen.local");
      const token = /reset-password#token=(\S+)/.exec(mail.text)![1]!;
      return stack.agent().post("/api/auth/password-reset/complete").send({ token, password: "studio-chosen-43" });
    };
    expect((await reset()).status).toBe(200);
    expect(fs.readFileSync(file, "utf8")).toContain("someone-else@test.example");

    // Naming this admin (in any case), it goes.
    fs.writeFileSync(file, "e-mail: Admin@Platen.local\npassword: abc\n", { mode: 0o600 });
    const ask = await stack.agent().post("/api/auth/password-reset").send({ email: "admin@platen.local" });
    expect(ask.status).toBe(202);
    const mail = await stack.mail!.waitFor("admin@platen.local", 2);
    const token = /reset-password#token=(\S+)/.exec(mail.text)![1]!;
    expect((await stack.agent().post("/api/auth/password-reset/complete").send({ token, password: "studio-chosen-44" })).status).toBe(200);
    expect(fs.existsSync(file)).toBe(false);
  });

  it("set by the studio in PLATEN_ADMIN_PASSWORD is never written to the log", () => {
    const lines = signInAdvice({ email: "owner@test.example", password: "secret-from-env", generated: false, file: null }, stack.cfg, "/x");
    expect(lines).toEqual(["  Sign in as owner@test.example with the password set in PLATEN_ADMIN_PASSWORD."]);
    expect(lines.join("\n")).not.toContain("secret-from-env");
  });

  it("is named from the checkout when the data folder is inside it, else in full", () => {
    const root = path.resolve("/srv/platen");
    expect(shownPath(root, path.join(root, ".data", "first-admin.txt"))).toBe(path.join(".data", "first-admin.txt"));
    expect(shownPath(root, "/var/lib/platen/first-admin.txt")).toBe("/var/lib/platen/first-admin.txt");
    // A sibling folder whose name starts with the checkout's is outside it.
    expect(shownPath(root, "/srv/platen-data/first-admin.txt")).toBe("/srv/platen-data/first-admin.txt");
  });
});
