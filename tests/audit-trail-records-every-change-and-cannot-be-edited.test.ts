import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import supertest from "supertest";
import { asc, eq, gt } from "drizzle-orm";
import { API, type RouteName, type RouteSpec } from "../shared/api";
import { AUDIT_ACTION_NAMES, auditDetailResponse, auditListResponse, type AuditAction } from "../shared/schemas/audit";
import { auditEvents, batchItems, intakes, scans, users } from "../server/db/schema";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";
import { INVITE_PAGE, RESET_PAGE } from "../shared/schemas/mail";

type Row = typeof auditEvents.$inferSelect;

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let viewer: supertest.Agent;
type Named = "admin" | "operator" | "viewer" | "framer" | "intake" | "scan" | "f1" | "f2" | "recipe" | "preset" | "batch" | "guest";
/** Ids of what the scenarios make, by name, filled as they run. */
const ids = {} as Record<Named, string>;

/**
 * Mutating routes that write no audit row, each with the reason. Routes that only read or preview
 * are declared `mutates: false` in shared/api.ts and never reach this list.
 */
const EXEMPT: Partial<Record<RouteName, string>> = {};

/** A 300 DPI white-lid scan with four well-separated pieces (invented test data). */
async function fourPieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1400" height="1000">
    <rect width="100%" height="100%" fill="#f8f8f5"/>
    <rect x="100" y="120" width="380" height="280" fill="#b33a2e"/>
    <rect x="800" y="120" width="300" height="300" fill="#2d6a4f"/>
    <rect x="100" y="600" width="400" height="260" fill="#283d6b"/>
    <rect x="800" y="600" width="320" height="280" fill="#8a5a14"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

async function lastId(): Promise<number> {
  const r = await stack.database.pool.query<{ id: string | null }>("select max(id) as id from audit_events");
  return Number(r.rows[0]?.id ?? 0);
}
const rowsAfter = (mark: number) => stack.db.select().from(auditEvents).where(gt(auditEvents.id, mark)).orderBy(asc(auditEvents.id));

/** Runs `call`, then returns the audit rows it wrote. */
async function audited(call: () => Promise<supertest.Response>, status = 200): Promise<{ res: supertest.Response; rows: Row[] }> {
  const mark = await lastId();
  const res = await call();
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  return { res, rows: await rowsAfter(mark) };
}
const only = (rows: Row[], action: AuditAction) => {
  const found = rows.filter((r) => r.action === action);
  expect(found, `one ${action} row among ${rows.map((r) => r.action).join(", ")}`).toHaveLength(1);
  return found[0]!;
};

const fragmentsOf = async (scanId: string) => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
const ready = (scanId: string) =>
  waitFor(
    "the scan to be ready",
    async () => {
      const s = (await operator.get(`/api/scans/${scanId}`)).body.scan;
      if (s.status === "failed") throw new Error(s.error);
      return s.status === "ready" ? s : null;
    },
    60_000,
  );

beforeAll(async () => {
  // Mail goes to the SMTP fake, masters are copied to a fake S3 bucket: the e-mail and off-site routes record too.
  stack = await startStack({ watcher: false, mail: true, offsite: true });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  for (const role of ["admin", "operator", "viewer"] as const) {
    const [u] = await stack.db
      .select()
      .from(users)
      .where(eq(users.email, `${role}@test.example`));
    ids[role] = u!.id;
  }
});
afterAll(async () => {
  await stack?.stop();
});

/** Which scenario below proves that each mutating route records; filled as the scenarios are declared. */
const covered = new Set<RouteName>();
function route(name: RouteName) {
  covered.add(name);
  return name;
}

describe("every change a person makes is on the trail, with who, what and before/after", () => {
  it(`${route("login")}: a sign-in names the person, the address and the browser`, async () => {
    const agent = stack.agent().set("User-Agent", "Platen audit test browser");
    const { rows } = await audited(() =>
      agent.post("/api/auth/login").send({ email: "operator@test.example", password: "operator-password-123" }),
    );
    const row = only(rows, "auth.sign_in");
    expect(row).toMatchObject({
      actorId: ids.operator,
      actorEmail: "operator@test.example",
      subjectType: "user",
      subjectId: ids.operator,
      userAgent: "Platen audit test browser",
    });
    expect(row.ip).toMatch(/127\.0\.0\.1/);
  });

  it("a failed sign-in keeps the address tried, never the password", async () => {
    let { rows } = await audited(
      () => stack.agent().post("/api/auth/login").send({ email: "Nobody@Test.example", password: "hunter2-secret-guess" }),
      401,
    );
    let row = only(rows, "auth.sign_in_failed");
    expect(row).toMatchObject({ actorId: null, actorEmail: "nobody@test.example", subjectId: null });
    expect(row.after).toEqual({ email: "nobody@test.example", reason: "Wrong e-mail or password." });
    expect(JSON.stringify(row)).not.toContain("hunter2");

    // A known address with a wrong password: the account is named, the guess is not kept.
    ({ rows } = await audited(
      () => stack.agent().post("/api/auth/login").send({ email: "viewer@test.example", password: "not-the-password-9" }),
      401,
    ));
    row = only(rows, "auth.sign_in_failed");
    expect(row).toMatchObject({ actorId: ids.viewer, actorEmail: "viewer@test.example", subjectId: ids.viewer });
    expect(JSON.stringify(row)).not.toContain("not-the-password-9");
  });

  it(`${route("usersCreate")}: a new account, without its password`, async () => {
    const { res, rows } = await audited(
      () => admin.post("/api/users").send({ email: "framer@test.example", name: "Framer", role: "viewer", password: "framer-password-1" }),
      201,
    );
    ids.framer = res.body.user.id;
    const row = only(rows, "user.create");
    expect(row).toMatchObject({
      actorId: ids.admin,
      actorEmail: "admin@test.example",
      subjectType: "user",
      subjectId: ids.framer,
      before: null,
    });
    expect(row.after).toEqual({ email: "framer@test.example", name: "Framer", role: "viewer" });
    const text = JSON.stringify(row);
    expect(text).not.toContain("framer-password-1");
    expect(text).not.toMatch(/\$2[aby]\$/); // no bcrypt hash either
  });

  it(`${route("usersUpdate")}: a role change records {role: viewer} → {role: operator}; disable, enable and rename too`, async () => {
    let { rows } = await audited(() => admin.patch(`/api/users/${ids.framer}`).send({ role: "operator" }));
    expect(rows).toHaveLength(1);
    expect(only(rows, "user.role")).toMatchObject({
      actorId: ids.admin,
      subjectId: ids.framer,
      before: { role: "viewer" },
      after: { role: "operator" },
    });

    ({ rows } = await audited(() => admin.patch(`/api/users/${ids.framer}`).send({ disabled: true })));
    expect(only(rows, "user.disable")).toMatchObject({ before: { disabled: false }, after: { disabled: true } });
    ({ rows } = await audited(() => admin.patch(`/api/users/${ids.framer}`).send({ disabled: false })));
    expect(only(rows, "user.enable")).toMatchObject({ before: { disabled: true }, after: { disabled: false } });
    ({ rows } = await audited(() => admin.patch(`/api/users/${ids.framer}`).send({ name: "Framer at the shop" })));
    expect(only(rows, "user.rename")).toMatchObject({ before: { name: "Framer" }, after: { name: "Framer at the shop" } });

    // Saying what is already so changes nothing and records nothing.
    ({ rows } = await audited(() => admin.patch(`/api/users/${ids.framer}`).send({ role: "operator" })));
    expect(rows).toEqual([]);
  });

  it(`${route("invitationsCreate")}, ${route("invitationsResend")}, ${route("invitationsAccept")} and ${route("invitationsRevoke")}`, async () => {
    let { res, rows } = await audited(() => admin.post("/api/invitations").send({ email: "guest@test.example", role: "viewer" }), 201);
    const invitation = res.body.invitation.id as string;
    expect(only(rows, "invitation.create")).toMatchObject({
      actorId: ids.admin,
      subjectType: "invitation",
      subjectId: invitation,
      after: { email: "guest@test.example", role: "viewer" },
    });

    ({ rows } = await audited(() => admin.post(`/api/invitations/${invitation}/resend`)));
    expect(only(rows, "invitation.resend")).toMatchObject({
      subjectId: invitation,
      before: { sendCount: 1 },
      after: { sendCount: 2, sendError: null },
    });

    const message = await stack.mail!.waitFor("guest@test.example", 2);
    const token = new RegExp(`${INVITE_PAGE}#token=([A-Za-z0-9_-]{43})`).exec(message.text)![1]!;
    ({ res, rows } = await audited(
      () => stack.agent().post("/api/invitations/accept").send({ token, name: "Guest framer", password: "guest-password-12" }),
      201,
    ));
    ids.guest = res.body.user.id;
    expect(only(rows, "invitation.accept")).toMatchObject({
      actorId: ids.guest,
      actorEmail: "guest@test.example",
      subjectType: "user",
      subjectId: ids.guest,
      after: { invitation, email: "guest@test.example", name: "Guest framer", role: "viewer" },
    });
    const text = JSON.stringify(rows);
    expect(text).not.toContain(token);
    expect(text).not.toContain("guest-password-12");

    ({ res } = await audited(() => admin.post("/api/invitations").send({ email: "maybe@test.example", role: "operator" }), 201));
    ({ rows } = await audited(() => admin.delete(`/api/invitations/${res.body.invitation.id}`), 204));
    expect(only(rows, "invitation.revoke")).toMatchObject({
      before: { email: "maybe@test.example", role: "operator", revoked: false },
      after: { revoked: true },
    });
  });

  it(`${route("passwordResetRequest")} and ${route("passwordResetComplete")}: the address asked for, never the token or the password`, async () => {
    const mark = await lastId();
    expect((await stack.agent().post("/api/auth/password-reset").send({ email: "framer@test.example" })).status).toBe(202);
    // The answer goes first; the link is made just after.
    const asked = await waitFor("the reset request on the trail", async () =>
      (await rowsAfter(mark)).find((r) => r.action === "auth.password_reset_request"),
    );
    expect(asked).toMatchObject({ actorId: null, actorEmail: "framer@test.example", subjectType: "user", subjectId: ids.framer });
    const message = await stack.mail!.waitFor("framer@test.example", 1);
    const token = new RegExp(`${RESET_PAGE}#token=([A-Za-z0-9_-]{43})`).exec(message.text)![1]!;
    const { rows } = await audited(() =>
      stack.agent().post("/api/auth/password-reset/complete").send({ token, password: "framer-new-password-2" }),
    );
    expect(only(rows, "auth.password_reset")).toMatchObject({ actorId: ids.framer, subjectId: ids.framer, before: null, after: null });
    const text = JSON.stringify([asked, ...rows]);
    expect(text).not.toContain(token);
    expect(text).not.toContain("framer-new-password-2");
  });

  it(`${route("noticesUpdate")}: a person's own notice choices, only what changed`, async () => {
    let { rows } = await audited(() => operator.patch("/api/account/notices").send({ scanFailed: false, batchFinished: true }));
    expect(only(rows, "account.notices")).toMatchObject({
      actorId: ids.operator,
      subjectId: ids.operator,
      before: { scanFailed: true },
      after: { scanFailed: false },
    });
    ({ rows } = await audited(() => operator.patch("/api/account/notices").send({ scanFailed: false })));
    expect(rows).toEqual([]);
  });

  it(`${route("passwordChange")}: a new password while signed in, never the password itself`, async () => {
    const changer = await userAgent(stack, "viewer", "changer@test.example");
    const { rows } = await audited(() =>
      changer.post("/api/account/password").send({ currentPassword: "viewer-password-123", newPassword: "changer-new-password-4" }),
    );
    const row = only(rows, "auth.password_change");
    expect(row).toMatchObject({ actorEmail: "changer@test.example", subjectType: "user", before: null, after: { signedOutElsewhere: 0 } });
    expect(row.subjectId).toBe(row.actorId);
    expect(JSON.stringify(rows)).not.toContain("changer-new-password-4");
  });

  it(`${route("nameUpdate")}: one's own name, before and after`, async () => {
    let { rows } = await audited(() => viewer.patch("/api/account/name").send({ name: "Noor Haddad" }));
    expect(only(rows, "account.rename")).toMatchObject({
      actorId: ids.viewer,
      subjectId: ids.viewer,
      before: { name: "Test viewer" },
      after: { name: "Noor Haddad" },
    });
    ({ rows } = await audited(() => viewer.patch("/api/account/name").send({ name: "Noor Haddad" })));
    expect(rows).toEqual([]);
  });

  it(`${route("intakesCreate")}: a new scanning session`, async () => {
    const { res, rows } = await audited(() => operator.post("/api/intakes").send({ name: "Spring collage session" }), 201);
    ids.intake = res.body.intake.id;
    expect(only(rows, "intake.create")).toMatchObject({
      actorId: ids.operator,
      subjectType: "intake",
      subjectId: ids.intake,
      after: { name: "Spring collage session" },
    });
  });

  it(`${route("scansUpload")}: an upload names the file and its hash`, async () => {
    const file = path.join(stack.inbox, "..", "four-pieces.tif");
    await fs.writeFile(file, await fourPieceScan());
    const { res, rows } = await audited(() => operator.post("/api/scans/upload").attach("files", file), 201);
    ids.scan = res.body.results[0].scanId;
    const row = only(rows, "scan.upload");
    expect(row).toMatchObject({ actorId: ids.operator, subjectType: "scan", subjectId: ids.scan });
    expect(row.after).toMatchObject({ originalName: "four-pieces.tif", intakeId: ids.intake, duplicateOf: null });
    expect(row.after!.sha256).toMatch(/^[0-9a-f]{64}$/);
    await ready(ids.scan);
  });

  it(`${route("scansResplit")}: splitting again records the sensitivity before and after`, async () => {
    const { rows } = await audited(() => operator.post(`/api/scans/${ids.scan}/resplit`).send({ sensitivity: 0.7 }));
    const row = only(rows, "scan.resplit");
    expect(row.after).toEqual({ sensitivity: 0.7 });
    expect(row.before).toHaveProperty("sensitivity");
    await waitFor(
      "the second split",
      async () => {
        const s = (await operator.get(`/api/scans/${ids.scan}`)).body.scan;
        return s.status === "ready" && (await fragmentsOf(ids.scan)).length === 4;
      },
      60_000,
    );
  });

  it(`${route("scansSetResolution")}: a resolution set by hand records the file's figure before`, async () => {
    // The figure the scan already has, so later scenarios see the same sizes; only its source changes.
    const dpi = (await operator.get(`/api/scans/${ids.scan}`)).body.scan.dpi;
    const { rows } = await audited(() => operator.patch(`/api/scans/${ids.scan}/resolution`).send({ x: dpi.x, y: dpi.y }));
    expect(only(rows, "scan.resolution")).toMatchObject({
      actorId: ids.operator,
      subjectType: "scan",
      subjectId: ids.scan,
      before: { dpiX: dpi.x, dpiY: dpi.y, dpiSource: dpi.source },
      after: { dpiX: dpi.x, dpiY: dpi.y, dpiSource: "set" },
    });
  });

  it(`${route("scansRestoreResolution")}: going back to the file's figure records the hand-set one before`, async () => {
    const dpi = (await operator.get(`/api/scans/${ids.scan}`)).body.scan.dpi;
    let { rows } = await audited(() => operator.delete(`/api/scans/${ids.scan}/resolution`));
    expect(only(rows, "scan.resolution")).toMatchObject({
      actorId: ids.operator,
      subjectId: ids.scan,
      before: { dpiX: dpi.x, dpiY: dpi.y, dpiSource: "set" },
      after: { dpiX: 300, dpiY: 300, dpiSource: "embedded" },
    });
    // Nothing set by hand any more: asking again writes nothing.
    ({ rows } = await audited(() => operator.delete(`/api/scans/${ids.scan}/resolution`)));
    expect(rows).toEqual([]);
  });

  it(`${route("fragmentsUpdate")}: approve, reject and edits, each with only what changed`, async () => {
    const [f1, f2] = await fragmentsOf(ids.scan);
    ids.f1 = f1!.id;
    ids.f2 = f2!.id;
    let { rows } = await audited(() => operator.patch(`/api/fragments/${ids.f1}`).send({ status: "approved" }));
    expect(only(rows, "fragment.approve")).toMatchObject({
      actorId: ids.operator,
      subjectType: "fragment",
      subjectId: ids.f1,
      before: { status: "proposed" },
      after: { status: "approved" },
    });
    ({ rows } = await audited(() => operator.patch(`/api/fragments/${ids.f2}`).send({ status: "rejected" })));
    expect(only(rows, "fragment.reject")).toMatchObject({ before: { status: "proposed" }, after: { status: "rejected" } });
    ({ rows } = await audited(() => operator.patch(`/api/fragments/${ids.f2}`).send({ status: "proposed" })));
    expect(only(rows, "fragment.unreview")).toMatchObject({ before: { status: "rejected" }, after: { status: "proposed" } });
    await operator.patch(`/api/fragments/${ids.f2}`).send({ status: "rejected" });

    ({ rows } = await audited(() =>
      operator.patch(`/api/fragments/${ids.f1}`).send({ title: "Red field", tags: ["spring", "red"], notes: "Cut from a seed catalogue" }),
    ));
    expect(rows.map((r) => r.action)).toEqual(["fragment.edit"]);
    expect(rows[0]!.before).toEqual({ title: null, tags: [], notes: null });
    expect(rows[0]!.after).toEqual({ title: "Red field", tags: ["spring", "red"], notes: "Cut from a seed catalogue" });

    // A turn changes angle, rectangle and box (the box follows the turned rectangle).
    ({ rows } = await audited(() => operator.patch(`/api/fragments/${ids.f1}`).send({ angle: 2.5 })));
    const turn = only(rows, "fragment.edit");
    expect(turn.before).toMatchObject({ angle: f1!.angle });
    expect(turn.after).toMatchObject({ angle: 2.5 });
    expect(Object.keys(turn.after!)).not.toContain("title");
    expect(turn.summary).toMatch(/^Edited angle, box of fragment 1 of four-pieces\.tif \(Red field\)$/);
  });

  it(`${route("fragmentsReset")}: back to the proposal`, async () => {
    const { rows } = await audited(() => operator.post(`/api/fragments/${ids.f2}/reset`));
    expect(only(rows, "fragment.reset")).toMatchObject({
      subjectId: ids.f2,
      before: { status: "rejected" },
      after: { status: "proposed" },
    });
  });

  it(`${route("fragmentsDraw")}: a fragment drawn by hand`, async () => {
    const { res, rows } = await audited(
      () => operator.post(`/api/scans/${ids.scan}/fragments`).send({ rect: { cx: 650, cy: 500, width: 60, height: 40 }, angle: 0 }),
      201,
    );
    expect(only(rows, "fragment.draw")).toMatchObject({
      subjectId: res.body.fragment.id,
      after: { rect: { cx: 650, cy: 500, width: 60, height: 40 }, angle: 0 },
    });
  });

  it(`${route("fragmentsMerge")} and ${route("fragmentsUnmerge")}: a merge, and the deletion that takes it back`, async () => {
    const list = await fragmentsOf(ids.scan);
    const [a, b] = [list[2]!, list[3]!];
    const made = await audited(() => operator.post("/api/fragments/merge").send({ ids: [a.id, b.id] }), 201);
    let rows = made.rows;
    const merged = made.res.body.fragment.id as string;
    expect(only(rows, "fragment.merge")).toMatchObject({ subjectId: merged, before: { fragments: [a.id, b.id] } });

    ({ rows } = await audited(() => operator.post(`/api/fragments/${merged}/unmerge`)));
    const row = only(rows, "fragment.unmerge");
    expect(row.before).toMatchObject({ fragment: merged });
    expect((row.after!.fragments as string[]).sort()).toEqual([a.id, b.id].sort());
    expect(row.summary).toMatch(/the merged one is deleted/);
  });

  it(`${route("fragmentsApproveRemaining")}: one row for the whole scan, naming each fragment`, async () => {
    const proposed = (await fragmentsOf(ids.scan)).filter((f) => f.status === "proposed").map((f) => f.id);
    expect(proposed.length).toBeGreaterThan(1);
    const { rows } = await audited(() => operator.post(`/api/scans/${ids.scan}/approve-remaining`));
    const row = only(rows, "fragment.approve_remaining");
    expect(row).toMatchObject({ subjectType: "scan", subjectId: ids.scan, before: { status: "proposed" } });
    expect((row.after!.fragments as string[]).sort()).toEqual(proposed.sort());
  });

  it(`${route("recipesCreate")} and ${route("recipesUpdate")}: a recipe, each new version, its name and the studio default`, async () => {
    let { res, rows } = await audited(() => operator.post("/api/recipes").send({ name: "Warm paper", steps: [{ type: "levels" }] }), 201);
    ids.recipe = res.body.recipe.id;
    expect(only(rows, "recipe.create")).toMatchObject({
      subjectType: "recipe",
      subjectId: ids.recipe,
      after: { name: "Warm paper", version: 1 },
    });

    const steps = [{ type: "levels", mode: "manual", black: 0.02, white: 0.98 }];
    ({ res, rows } = await audited(() => operator.patch(`/api/recipes/${ids.recipe}`).send({ steps })));
    const v = only(rows, "recipe.version");
    expect(v.before).toMatchObject({ version: 1 });
    expect(v.after).toMatchObject({ version: 2, versionId: res.body.recipe.versionId });
    expect((v.after!.steps as { black: number }[])[0]!.black).toBe(0.02);

    ({ rows } = await audited(() => operator.patch(`/api/recipes/${ids.recipe}`).send({ steps })));
    expect(rows).toEqual([]); // the same steps make no version

    ({ rows } = await audited(() => operator.patch(`/api/recipes/${ids.recipe}`).send({ name: "Warm cream paper" })));
    expect(only(rows, "recipe.edit")).toMatchObject({ before: { name: "Warm paper" }, after: { name: "Warm cream paper" } });

    ({ rows } = await audited(() => operator.patch(`/api/recipes/${ids.recipe}`).send({ studioDefault: true })));
    const d = only(rows, "recipe.default");
    expect(d.after).toEqual({ defaultRecipe: { id: ids.recipe, name: "Warm cream paper" } });
    expect((d.before!.defaultRecipe as { id: string }).id).not.toBe(ids.recipe);
  });

  it(`${route("recipesApply")}: applying a recipe records what it replaced and the batch it started`, async () => {
    const { res, rows } = await audited(() => operator.post(`/api/recipes/${ids.recipe}/apply`).send({ scanId: ids.scan }));
    const row = only(rows, "recipe.apply");
    expect(row).toMatchObject({
      subjectId: ids.recipe,
      before: { scanId: ids.scan, recipeId: null },
      after: { recipeId: ids.recipe, version: 2, batchId: res.body.batchId },
    });
  });

  it(`${route("presetsCreate")} and ${route("presetsUpdate")}: a preset and its next version, only the settings that changed`, async () => {
    const web = ((await operator.get("/api/presets")).body.presets as { kind: string; settings: Record<string, unknown> }[]).find(
      (p) => p.kind === "web",
    )!;
    const made = await audited(
      () => operator.post("/api/presets").send({ name: "Shop tile", settings: { ...web.settings, quality: 80 } }),
      201,
    );
    let rows = made.rows;
    ids.preset = made.res.body.preset.id;
    expect(only(rows, "preset.create")).toMatchObject({
      subjectType: "preset",
      subjectId: ids.preset,
      after: { name: "Shop tile", kind: "web", version: 1 },
    });

    ({ rows } = await audited(() => operator.patch(`/api/presets/${ids.preset}`).send({ settings: { ...web.settings, quality: 72 } })));
    const v = only(rows, "preset.version");
    expect(v.before).toEqual({ version: 1, versionId: expect.any(String), quality: 80 });
    expect(v.after).toEqual({ version: 2, versionId: expect.any(String), quality: 72 });

    ({ rows } = await audited(() => operator.patch(`/api/presets/${ids.preset}`).send({ name: "Shop tile, small" })));
    expect(rows.map((r) => r.action)).toEqual(["preset.rename"]);
    expect(rows[0]).toMatchObject({ before: { name: "Shop tile" }, after: { name: "Shop tile, small" } });
  });

  it(`${route("batchesCreate")}, ${route("batchesCancel")}, ${route("batchesRetry")} and ${route("batchesRerun")}`, async () => {
    let { res, rows } = await audited(
      () =>
        operator.post("/api/batches").send({ name: "Shop tiles, spring", selection: { fragmentIds: [ids.f1] }, presetIds: [ids.preset] }),
      201,
    );
    ids.batch = res.body.batch.id;
    expect(only(rows, "batch.create")).toMatchObject({
      subjectType: "batch",
      subjectId: ids.batch,
      after: { name: "Shop tiles, spring", fragments: 1 },
    });

    ({ rows } = await audited(() => operator.post(`/api/batches/${ids.batch}/cancel`)));
    expect(only(rows, "batch.cancel")).toMatchObject({ subjectId: ids.batch });

    // A failed item to retry: once the worker has left it alone, it is marked failed (as a full disk would).
    await waitFor("the batch to settle", async () => {
      const items = await stack.db.select().from(batchItems).where(eq(batchItems.batchId, ids.batch));
      return items.every((i) => i.state !== "queued" && i.state !== "running");
    });
    await stack.db.update(batchItems).set({ state: "failed", error: "disk full" }).where(eq(batchItems.batchId, ids.batch));
    ({ rows } = await audited(() => operator.post(`/api/batches/${ids.batch}/retry`)));
    expect(only(rows, "batch.retry")).toMatchObject({ subjectId: ids.batch, before: { failed: 1 }, after: { queued: 1 } });

    ({ res, rows } = await audited(() => operator.post(`/api/batches/${ids.batch}/rerun`).send({ replaceOld: true }), 201));
    expect(only(rows, "batch.rerun")).toMatchObject({ subjectId: res.body.batch.id, after: { rerunOf: ids.batch, replaceOld: true } });
  });

  it(`${route("fragmentsOffsiteCheck")}, ${route("fragmentsOffsiteCopy")} and ${route("offsiteCheckAll")}: the off-site copy of a master`, async () => {
    // Earlier scenarios re-render this fragment; each new master queues a new copy. Wait for the
    // renders and copies to settle, so the copy checked is the last one.
    await waitFor(
      "renders and copies to settle",
      async () => {
        const { rows: busy } = await stack.database.pool.query(
          "select 1 from pgboss.job where name in ('fragment-render', 'offsite-copy') and state in ('created', 'retry', 'active') limit 1",
        );
        if (busy.length > 0) return null;
        return (await operator.get(`/api/fragments/${ids.f1}/offsite`)).body.copy?.status === "copied";
      },
      60_000,
    );
    let { rows } = await audited(() => operator.post(`/api/fragments/${ids.f1}/offsite/check`));
    expect(only(rows, "offsite.check")).toMatchObject({
      actorId: ids.operator,
      subjectType: "fragment",
      subjectId: ids.f1,
      after: { status: "copied" },
    });
    ({ rows } = await audited(() => operator.post(`/api/fragments/${ids.f1}/offsite/copy`), 202));
    expect(only(rows, "offsite.copy")).toMatchObject({ subjectId: ids.f1 });
    // Check-all takes the copies that have settled; let the copy just asked for finish first.
    await waitFor(
      "the copy made again",
      async () => (await operator.get(`/api/fragments/${ids.f1}/offsite`)).body.copy?.status === "copied",
      60_000,
    );
    ({ rows } = await audited(() => admin.post("/api/offsite/check"), 202));
    expect(only(rows, "offsite.check_all")).toMatchObject({ actorId: ids.admin, subjectType: "studio" });
    expect((rows[0]!.after!.queued as number) >= 1).toBe(true);
  });

  it(`${route("libraryTidy")}: an admin tidies the library (a dry run writes nothing)`, async () => {
    let { rows } = await audited(() => admin.post("/api/library/tidy").send({ dryRun: true }));
    expect(rows).toEqual([]);
    ({ rows } = await audited(() => admin.post("/api/library/tidy").send({})));
    expect(only(rows, "library.tidy")).toMatchObject({
      actorId: ids.admin,
      subjectType: "studio",
      subjectId: null,
      after: { removed: 0, bytes: 0 },
    });
  });

  it(`${route("libraryRefile")}: an admin has the originals the database does not know filed again, and the job says what it filed`, async () => {
    // An original in the library no scan names, as a database restored from an older backup leaves it.
    const bytes = await sharp({ create: { width: 240, height: 160, channels: 3, background: "#f4f1ea" } })
      .composite([{ input: { create: { width: 90, height: 70, channels: 3, background: "#6b3d8c" } }, left: 60, top: 40 }])
      .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
      .toBuffer();
    const sha = (await import("node:crypto")).createHash("sha256").update(bytes).digest("hex");
    const key = `originals/${sha.slice(0, 2)}/${sha}.tif`;
    await fs.mkdir(path.dirname(stack.libraryPath(key)), { recursive: true });
    await fs.writeFile(stack.libraryPath(key), bytes);
    const old = new Date(Date.now() - 2 * 24 * 3600_000);
    await fs.utimes(stack.libraryPath(key), old, old);
    const { rows } = await audited(() => admin.post("/api/library/refile"), 202);
    expect(only(rows, "library.refile")).toMatchObject({
      actorId: ids.admin,
      subjectType: "studio",
      subjectId: null,
      after: { originals: 1 },
    });
    // The job's own row, under the same admin, once it has filed it (waited for here, so no later
    // scenario sees it arrive).
    const filed = await waitFor(
      "the refile job's row",
      async () => {
        const r = await stack.db.select().from(auditEvents).where(eq(auditEvents.action, "library.refile")).orderBy(asc(auditEvents.id));
        return r.length === 2 ? r[1]! : null;
      },
      30_000,
    );
    expect(filed).toMatchObject({
      actorId: ids.admin,
      subjectType: "scan",
      summary: `Filed an original the database did not know again as filed-again-${sha.slice(0, 12)}.tif`,
    });
  });

  it(`${route("studioUpdate")}: an admin changes the studio's settings, with only what changed`, async () => {
    const { rows } = await audited(() => admin.patch("/api/studio/settings").send({ name: "Test studio", creator: "Mara Ilves" }));
    expect(only(rows, "studio.settings")).toMatchObject({
      actorId: ids.admin,
      subjectType: "studio",
      subjectId: null,
      before: { creator: null },
      after: { creator: "Mara Ilves" },
    });
  });

  it(`${route("mastersRightsWrite")}: an admin writes the studio's new rights into the masters already made`, async () => {
    // The piece approved above was rendered before the studio named a creator.
    const behind = await waitFor(
      "the approved piece's master, behind the studio's new creator",
      async () => {
        const { rights } = (await admin.get("/api/studio/masters-rights")).body;
        return rights.behind > 0 ? rights : null;
      },
      60_000,
    );
    const { rows } = await audited(() => admin.post("/api/studio/masters-rights").send({ creator: "Mara Ilves", copyright: null }));
    expect(only(rows, "studio.masters_rights")).toMatchObject({
      actorId: ids.admin,
      subjectType: "studio",
      subjectId: null,
      after: { creator: "Mara Ilves", copyright: null, pieces: behind.behind },
    });
  });

  it(`${route("fragmentsRenderRetry")} and ${route("scansRenderRetry")}: failed renders queued again, one piece or a scan's`, async () => {
    await waitFor(
      "renders of the scan's pieces to settle",
      async () => {
        const { rows: busy } = await stack.database.pool.query(
          "select 1 from pgboss.job where name in ('fragment-render', 'fragment-rights') and state in ('created', 'retry', 'active') limit 1",
        );
        return busy.length === 0;
      },
      60_000,
    );
    // Not f1, whose own trail is read below.
    const made = (await fragmentsOf(ids.scan)).filter((f) => f.id !== ids.f1 && f.status === "approved" && f.renderState === "done");
    expect(made.length).toBeGreaterThanOrEqual(2);
    const [one, two] = made as [Fragment, Fragment];
    // As a render's last attempt leaves a piece (the failure itself is another test's).
    const fail = (id: string) =>
      stack.database.pool.query("update fragments set render_state = 'failed', render_error = 'The disk is full.' where id = $1", [id]);
    await fail(one.id);
    let { rows } = await audited(() => operator.post(`/api/fragments/${one.id}/render-retry`));
    expect(only(rows, "fragment.render_retry")).toMatchObject({
      actorId: ids.operator,
      subjectType: "fragment",
      subjectId: one.id,
      before: { renderState: "failed", renderError: "The disk is full." },
      after: { renderState: "queued" },
    });
    await fail(two.id);
    ({ rows } = await audited(() => operator.post(`/api/scans/${ids.scan}/render-retry`)));
    expect(only(rows, "fragment.render_retry")).toMatchObject({
      subjectType: "scan",
      subjectId: ids.scan,
      before: { renderState: "failed", renderErrors: { [two.id]: "The disk is full." } },
      after: { renderState: "queued", fragments: [two.id] },
    });
  });

  it(`${route("scansRetry")}: a failed scan sent back to the queue`, async () => {
    const [row] = await stack.db
      .insert(scans)
      .values({
        intakeId: ids.intake,
        originalName: "jammed.tif",
        source: "inbox",
        sha256: "a".repeat(64),
        sizeBytes: 1,
        originalKey: `originals/aa/${"a".repeat(64)}`,
        status: "failed",
        error: "The file is empty (0 bytes)",
      })
      .returning();
    const { rows } = await audited(() => operator.post(`/api/scans/${row!.id}/retry`));
    expect(only(rows, "scan.retry")).toMatchObject({
      subjectId: row!.id,
      before: { status: "failed", error: "The file is empty (0 bytes)" },
      after: { status: "queued" },
    });
  });

  it(`${route("logout")}: signing out`, async () => {
    const leaving = await userAgent(stack, "viewer", "leaving@test.example");
    const { rows } = await audited(() => leaving.post("/api/auth/logout"), 204);
    expect(only(rows, "auth.sign_out")).toMatchObject({ actorEmail: "leaving@test.example" });
  });

  it(`${route("fragmentsFilesDelete")}: an admin deletes a piece's master and copies, and the trail keeps what went`, async () => {
    await waitFor(
      "renders and copies of the piece to settle",
      async () => {
        const { rows: busy } = await stack.database.pool.query(
          "select 1 from pgboss.job where name in ('fragment-render', 'output-render', 'offsite-copy', 'fragment-rights') and state in ('created', 'retry', 'active') limit 1",
        );
        return busy.length === 0 && !(await admin.get(`/api/fragments/${ids.f1}/files`)).body.plan.blocked;
      },
      60_000,
    );
    const { plan } = (await admin.get(`/api/fragments/${ids.f1}/files`)).body;
    expect(plan.files).toBeGreaterThanOrEqual(2);
    const { rows } = await audited(() => admin.delete(`/api/fragments/${ids.f1}/files`).query({ upTo: plan.files }));
    const row = only(rows, "fragment.delete_files");
    expect(row).toMatchObject({ actorId: ids.admin, subjectType: "fragment", subjectId: ids.f1, after: { files: [] } });
    expect((row.before!.files as unknown[]).length).toBe(plan.files);
  });

  it(`${route("offsiteKeptRemove")}: an admin removes for good the off-site copy the delete above kept`, async () => {
    const kept = (await admin.get("/api/offsite/kept")).body.copies as { key: string; fragmentId: string; sha256: string | null }[];
    const mine = kept.filter((c) => c.fragmentId === ids.f1);
    expect(mine).toHaveLength(1);
    const { rows } = await audited(() => admin.delete("/api/offsite/kept").query({ key: mine[0]!.key }));
    expect(only(rows, "offsite.remove_kept")).toMatchObject({
      actorId: ids.admin,
      subjectType: "fragment",
      subjectId: ids.f1,
      before: { key: mine[0]!.key, sha256: mine[0]!.sha256 },
      after: { key: null },
    });
  });

  it("walks the route table: every mutating route has a scenario above or an exemption with a reason", () => {
    const mutating = (Object.entries(API) as [RouteName, RouteSpec][]).filter(([, s]) => s.mutates).map(([n]) => n);
    const missing = mutating.filter((n) => !covered.has(n) && !(n in EXEMPT));
    expect(missing, "mutating routes that write no audit row and are not exempt").toEqual([]);
    // The exemptions name only routes that exist and still change data.
    for (const n of Object.keys(EXEMPT)) expect(mutating).toContain(n);
    // Every action the screen can filter by has been seen on the trail in this file.
    return stack.db
      .selectDistinct({ action: auditEvents.action })
      .from(auditEvents)
      .then((seen) => expect(AUDIT_ACTION_NAMES.filter((a) => !seen.some((s) => s.action === a))).toEqual([]));
  });
});

describe("a change and its audit row commit together or not at all", () => {
  it("a change whose transaction fails at commit leaves no audit row", async () => {
    const pool = stack.database.pool;
    // A deferred check that fails only at COMMIT: after the update and the audit insert both ran.
    await pool.query(`create function test_refuse_at_commit() returns trigger language plpgsql as $$
      begin if new.name = 'Refused at commit' then raise exception 'refused at commit (test)'; end if; return new; end $$`);
    await pool.query(`create constraint trigger test_refuse_at_commit after update on users deferrable initially deferred
      for each row execute function test_refuse_at_commit()`);
    try {
      const { rows } = await audited(() => admin.patch(`/api/users/${ids.framer}`).send({ name: "Refused at commit" }), 500);
      expect(rows).toEqual([]);
      const [u] = await stack.db.select().from(users).where(eq(users.id, ids.framer));
      expect(u!.name).toBe("Framer at the shop");
    } finally {
      await pool.query("drop trigger test_refuse_at_commit on users; drop function test_refuse_at_commit()");
    }
  });

  it("an audit row that cannot be written takes the change back with it", async () => {
    const pool = stack.database.pool;
    await pool.query(`create function test_refuse_audit() returns trigger language plpgsql as $$
      begin if new.summary like '%Poisoned session%' then raise exception 'audit refused (test)'; end if; return new; end $$`);
    await pool.query("create trigger test_refuse_audit before insert on audit_events for each row execute function test_refuse_audit()");
    try {
      const { rows } = await audited(() => operator.post("/api/intakes").send({ name: "Poisoned session" }), 500);
      expect(rows).toEqual([]);
      expect(await stack.db.select().from(intakes).where(eq(intakes.name, "Poisoned session"))).toEqual([]);
      // The intake that was open is still open: the closing was taken back too.
      const [open] = await stack.db.select().from(intakes).where(eq(intakes.id, ids.intake));
      expect(open!.closedAt).toBeNull();
    } finally {
      await pool.query("drop trigger test_refuse_audit on audit_events; drop function test_refuse_audit()");
    }
  });
});

describe("the trail cannot be edited", () => {
  it("the database refuses UPDATE, DELETE and TRUNCATE on audit_events", async () => {
    const pool = stack.database.pool;
    const id = await lastId();
    await expect(pool.query("update audit_events set summary = 'nothing happened' where id = $1", [id])).rejects.toThrow(
      "The audit trail cannot be changed: UPDATE on audit_events is refused.",
    );
    await expect(pool.query("delete from audit_events where id = $1", [id])).rejects.toThrow(
      "The audit trail cannot be changed: DELETE on audit_events is refused.",
    );
    await expect(pool.query("truncate audit_events")).rejects.toThrow(
      "The audit trail cannot be changed: TRUNCATE on audit_events is refused.",
    );
    const [still] = await stack.db.select().from(auditEvents).where(eq(auditEvents.id, id));
    expect(still!.summary).not.toBe("nothing happened");
  });

  it("the API has read routes only, for admins only", async () => {
    const auditRoutes = Object.values(API).filter((s: RouteSpec) => s.path.startsWith("/api/audit"));
    expect(auditRoutes.map((s) => `${s.method} ${s.path} ${s.access} ${s.mutates}`)).toEqual([
      "GET /api/audit admin false",
      "GET /api/audit/:id admin false",
    ]);
    const id = await lastId();
    for (const agent of [viewer, operator]) {
      for (const url of ["/api/audit", `/api/audit/${id}`]) {
        const res = await agent.get(url);
        expect(res.status).toBe(403);
        expect(res.body.error.code).toBe("forbidden");
      }
    }
    for (const res of [
      await admin.patch(`/api/audit/${id}`).send({ summary: "x" }),
      await admin.delete(`/api/audit/${id}`),
      await admin.post("/api/audit").send({}),
    ]) {
      expect(res.status).toBe(404);
    }
    expect((await stack.agent().get("/api/audit")).status).toBe(401);
  });
});

describe("admins browse and filter the trail", () => {
  const list = async (query: Record<string, string | number>) => {
    const res = await admin.get("/api/audit").query(query);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    return auditListResponse.parse(res.body);
  };

  it("lists newest first, with the actor's name, and pages with a cursor without gaps or repeats", async () => {
    const all = await stack.db.select({ id: auditEvents.id }).from(auditEvents);
    const seen: number[] = [];
    let before: number | null = null;
    let pages = 0;
    do {
      const page: { events: { id: number }[]; nextCursor: number | null } = await list(before ? { limit: 7, before } : { limit: 7 });
      seen.push(...page.events.map((e) => e.id));
      before = page.nextCursor;
      pages++;
    } while (before);
    expect(pages).toBeGreaterThan(2);
    expect(seen).toEqual(all.map((r) => r.id).sort((a, b) => b - a));
    const first = await list({ limit: 1, action: "user.role" });
    expect(first.events[0]!.actor).toEqual({ id: ids.admin, email: "admin@test.example", name: "Test admin" });
  });

  it("filters by actor, action, action group, subject, time and text", async () => {
    let page = await list({ actorId: ids.operator, limit: 200 });
    expect(page.events.length).toBeGreaterThan(10);
    expect(page.events.every((e) => e.actor.id === ids.operator)).toBe(true);

    page = await list({ action: "fragment.*", limit: 200 });
    expect(new Set(page.events.map((e) => e.action))).toEqual(
      new Set([
        "fragment.approve",
        "fragment.reject",
        "fragment.unreview",
        "fragment.edit",
        "fragment.reset",
        "fragment.draw",
        "fragment.merge",
        "fragment.unmerge",
        "fragment.approve_remaining",
        "fragment.render_retry",
        "fragment.delete_files",
      ]),
    );
    page = await list({ action: "fragment.edit" });
    expect(page.events.map((e) => e.action)).toEqual(["fragment.edit", "fragment.edit"]);

    page = await list({ subjectType: "fragment", subjectId: ids.f1 });
    expect(page.events.map((e) => e.action).reverse()).toEqual([
      "fragment.approve",
      "fragment.edit",
      "fragment.edit",
      "offsite.check",
      "offsite.copy",
      "fragment.delete_files",
      "offsite.remove_kept",
    ]);

    page = await list({ q: "quokka" }); // no summary, e-mail or changed value says so
    expect(page.events).toEqual([]);
    page = await list({ q: "four-pieces" });
    expect(page.events.length).toBeGreaterThan(3);
    expect(page.events.every((e) => `${e.summary} ${JSON.stringify(e.before)} ${JSON.stringify(e.after)}`.includes("four-pieces"))).toBe(
      true,
    );
    // A value typed into a field is found, though no summary names it.
    page = await list({ q: "mara ilv" });
    expect(page.events.map((e) => e.action)).toContain("studio.settings");
    expect(page.events.find((e) => e.action === "studio.settings")!.summary).not.toMatch(/Mara/);
    page = await list({ q: "NOBODY@test" }); // the actor's e-mail, any case
    expect(page.events.map((e) => e.action)).toEqual(["auth.sign_in_failed"]);

    const future = new Date(Date.now() + 60_000).toISOString();
    expect((await list({ from: future })).events).toEqual([]);
    const all = await list({ to: future, limit: 200 });
    expect(all.events.length).toBeGreaterThan(20);
    const pivot = all.events[10]!;
    const since = await list({ from: pivot.at, limit: 200 });
    expect(since.events.every((e) => e.at >= pivot.at)).toBe(true);
    expect(since.events.length).toBeLessThan(all.events.length);
  });

  it("refuses a malformed filter with a clear message", async () => {
    let res = await admin.get("/api/audit").query({ action: "delete everything" });
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({
      code: "bad_request",
      field: "action",
      message: "action: Expected an action such as fragment.approve, or a group such as fragment.*",
    });
    res = await admin.get("/api/audit").query({ from: "yesterday" });
    expect(res.body.error.message).toBe("from: Expected from as an ISO 8601 date and time such as 2026-03-01T09:00:00Z");
    res = await admin.get("/api/audit").query({ from: "2026-03-02T00:00:00Z", to: "2026-03-01T00:00:00Z" });
    expect(res.body.error.message).toBe("from: Expected from to be no later than to");
    res = await admin.get("/api/audit/abc");
    expect(res.body.error.message).toBe("id: Expected an event id (a whole number)");
    res = await admin.get("/api/audit/999999");
    expect(res.status).toBe(404);
  });

  it("one event shows each changed field side by side", async () => {
    const [event] = (await list({ action: "user.role" })).events;
    const res = await admin.get(`/api/audit/${event!.id}`);
    const { event: detail } = auditDetailResponse.parse(res.body);
    expect(detail.changes).toEqual([{ field: "role", before: "viewer", after: "operator" }]);
    expect(detail.summary).toBe("Changed the role of Framer (framer@test.example) from viewer to operator");
  });
});
