import sharp from "sharp";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { mailOutbox } from "../server/db/schema";
import { fanOutNotice } from "../server/services/notices";
import { sendOutboxMessage } from "../server/services/mail-outbox";
import { createMailer } from "../server/mail/mailer";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { RecipeSummary } from "../shared/schemas/recipe-api";

let stack: Stack;
let admin: supertest.Agent;
let busy: supertest.Agent;
let client: supertest.Agent;

/** Two saturated pieces on a white lid (invented test data). */
async function twoPieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1000" height="600">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="80" y="90" width="340" height="380" fill="#c0392b"/>
    <rect x="560" y="120" width="320" height="360" fill="#1e8449"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

const subjects = async (address: string) => (await stack.mail!.to(address)).map((m) => m.subject);
/**
 * What the outbox holds for `address`. One event's rows are written in one transaction, so once
 * anyone has received that event's message, a person missing here was left out (a look at the
 * mailbox alone could pass just because a message had not arrived yet).
 */
const queuedFor = async (address: string) =>
  (await stack.db.select({ subject: mailOutbox.subject }).from(mailOutbox).where(eq(mailOutbox.toAddress, address))).map((r) => r.subject);

beforeAll(async () => {
  stack = await startStack({ mail: true, watcher: false });
  admin = await userAgent(stack, "admin");
  // An operator who wants no batch notices; a second with the defaults (everything).
  busy = await userAgent(stack, "operator", "busy-operator@test.example");
  await userAgent(stack, "operator", "keen-operator@test.example");
  // A viewer with the defaults (nothing) and one who asked for failed scans only.
  await userAgent(stack, "viewer", "quiet-viewer@test.example");
  client = await userAgent(stack, "viewer", "curious-viewer@test.example");
  expect((await busy.patch("/api/account/notices").send({ batchFinished: false })).body).toMatchObject({
    notices: { batchFinished: false, intakeFinished: true, scanFailed: true },
    defaults: false,
    mailEnabled: true,
  });
  await client.patch("/api/account/notices").send({ scanFailed: true }).expect(200);
});
afterAll(async () => {
  await stack?.stop();
});

describe("notice choices", () => {
  it("start from the role's defaults: operators and admins get all, viewers none", async () => {
    expect((await admin.get("/api/account/notices")).body).toEqual({
      notices: { batchFinished: true, intakeFinished: true, scanFailed: true },
      defaults: true,
      mailEnabled: true,
    });
    const viewer = await userAgent(stack, "viewer", "fresh-viewer@test.example");
    expect((await viewer.get("/api/account/notices")).body.notices).toEqual({
      batchFinished: false,
      intakeFinished: false,
      scanFailed: false,
    });
    const bad = await viewer.patch("/api/account/notices").send({});
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toBe("Expected at least one of batchFinished, intakeFinished or scanFailed");
  });
});

describe("notices", () => {
  let batchId: string;

  it("an intake whose scans are all split tells those who chose intake notices, with counts", async () => {
    const up = await busy.post("/api/scans/upload").attach("files", await twoPieceScan(), "two-pieces.tif");
    expect(up.status).toBe(201);
    const scanId = up.body.results[0].scanId as string;
    const message = await stack.mail!.waitFor("keen-operator@test.example");
    expect(message.subject).toMatch(/^Intake finished: /);
    expect(message.text).toContain("2 pieces found");
    expect(message.text).toContain("Ready for review: 1");
    expect(message.html).toContain("Review the scans");
    await stack.mail!.waitFor("admin@test.example");
    await stack.mail!.waitFor("busy-operator@test.example");
    expect(await queuedFor("quiet-viewer@test.example")).toEqual([]);
    expect(await queuedFor("curious-viewer@test.example")).toEqual([]);
    expect(await subjects("quiet-viewer@test.example")).toEqual([]);
    expect(await subjects("curious-viewer@test.example")).toEqual([]);

    // A finished batch: approve both pieces and render them with the default recipe.
    await busy.post(`/api/scans/${scanId}/approve-remaining`).expect(200);
    const recipes = (await busy.get("/api/recipes")).body.recipes as RecipeSummary[];
    const fragments = (await busy.get(`/api/scans/${scanId}/fragments`)).body.fragments as { id: string }[];
    const applied = await busy
      .post(`/api/recipes/${recipes.find((r) => r.builtIn)!.id}/apply`)
      .send({ fragmentIds: fragments.map((f) => f.id) });
    expect(applied.status).toBe(200);
    batchId = applied.body.batch.id;
  });

  it("a finished batch tells those who chose batch notices, not those who did not", async () => {
    const message = await waitFor(
      "the batch notice to the keen operator",
      async () => (await stack.mail!.to("keen-operator@test.example")).find((m) => m.subject.startsWith("Batch finished")),
      60_000,
    );
    expect(message.text).toMatch(/Made: 2\n/);
    expect(message.text).toMatch(/Failed: 0\n/);
    expect(message.text).toContain(`${stack.url}/batches/${batchId}`);
    await waitFor("the batch notice to the admin", async () =>
      (await subjects("admin@test.example")).some((s) => s.startsWith("Batch finished")),
    );
    expect((await queuedFor("busy-operator@test.example")).some((s) => s.startsWith("Batch finished"))).toBe(false);
    expect((await subjects("busy-operator@test.example")).some((s) => s.startsWith("Batch finished"))).toBe(false);
    expect(await queuedFor("quiet-viewer@test.example")).toEqual([]);
    expect(await queuedFor("curious-viewer@test.example")).toEqual([]);
  });

  it("running the notice job or a mail job again sends nothing twice", async () => {
    const before = (await stack.mail!.messages()).length;
    const again = await fanOutNotice(stack.database, stack.boss, stack.cfg, { event: "batch-finished", batchId });
    expect(again).toEqual({ kind: "batchFinished", queued: 0 });
    const [sent] = await stack.db.select().from(mailOutbox).where(eq(mailOutbox.toAddress, "keen-operator@test.example")).limit(1);
    expect(sent!.sentAt).not.toBeNull();
    expect(await sendOutboxMessage(stack.db, createMailer(stack.cfg.mail), stack.cfg.mail, sent!.id)).toBe("already-sent");
    expect((await stack.mail!.messages()).length).toBe(before);
  });

  it("a failed scan tells those who chose it, with its message", async () => {
    const jpeg = await sharp({ create: { width: 800, height: 600, channels: 3, background: "#e0ded8" } })
      .jpeg()
      .toBuffer();
    const cut = jpeg.subarray(0, Math.floor(jpeg.length * 0.6));
    const up = await busy.post("/api/scans/upload").attach("files", cut, "cut-short.jpg");
    expect(up.status).toBe(201);
    const message = await stack.mail!.waitFor("curious-viewer@test.example");
    expect(message.subject).toBe("A scan failed: cut-short.jpg");
    expect(message.text).toContain("The JPEG image data ends early or is damaged");
    for (const who of ["admin@test.example", "busy-operator@test.example", "keen-operator@test.example"]) {
      await waitFor(`the failure notice to ${who}`, async () => (await subjects(who)).includes("A scan failed: cut-short.jpg"));
    }
    expect(await queuedFor("quiet-viewer@test.example")).toEqual([]);
    // Nobody gets the same failure twice.
    expect((await queuedFor("admin@test.example")).filter((s) => s === "A scan failed: cut-short.jpg")).toHaveLength(1);
    expect((await subjects("admin@test.example")).filter((s) => s === "A scan failed: cut-short.jpg")).toHaveLength(1);
  });
});
