/**
 * In the browser: a scan whose file the inbox filed but left where it was says so on its page,
 * with the file's path and why; one whose file was later taken in again links to the new scan.
 * The inbox's memory (inbox_kept_files) and the link (scans.continued_by_id) are written here as
 * the intake writes them (the watcher's part is tested in
 * the-inbox-files-a-kept-file-once-across-restarts-and-waits-for-its-rest).
 */
import fs from "node:fs/promises";
import path from "node:path";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { inboxKeptFiles, scans } from "../server/db/schema";
import { paperScan } from "./helpers/fixtures";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
const ids: string[] = [];

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  const operator = await userAgent(stack, "operator", "operator@test.example");
  for (const [name, seed] of [
    ["night-bed-04.png", 41],
    ["night-bed-04-whole.png", 42],
  ] as const) {
    const file = path.join(stack.inbox, "..", name);
    await fs.writeFile(file, await paperScan({ format: "png", seed }));
    ids.push((await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId);
  }
  await waitFor(
    "the scans to settle",
    async () => {
      const rows = await stack.db.select({ status: scans.status }).from(scans);
      return rows.every((r) => r.status === "ready" || r.status === "failed");
    },
    45_000,
  );
  const [first] = await stack.db.select().from(scans).where(eq(scans.id, ids[0]!));
  await stack.db.insert(inboxKeptFiles).values({
    inbox: stack.inbox,
    path: "night/bed-04.png",
    sizeBytes: first!.sizeBytes,
    mtimeMs: 0,
    sha256: first!.sha256,
    scanId: first!.id,
    reason: "unfinished",
    detail: "the PNG's IDAT chunk runs past its end",
  });
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("a scan's page and its file in the inbox", () => {
  it("says the file is still in the inbox, then links to the scan it became", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans/${ids[0]}`);
    const kept = page.getByTestId("in-inbox");
    await expect.poll(() => kept.textContent()).toContain("night/bed-04.png");
    expect(await kept.textContent()).toContain("It still looked unfinished when it was filed, so it was left there");
    expect(await page.getByTestId("continued-by").count()).toBe(0);

    // Its writer finished it: taken in again as the other scan (the intake's one transaction).
    await stack.db.delete(inboxKeptFiles).where(eq(inboxKeptFiles.scanId, ids[0]!));
    await stack.db.update(scans).set({ continuedById: ids[1]!, continuedHow: "whole" }).where(eq(scans.id, ids[0]!));
    await page.reload();
    const link = page.getByTestId("continued-by");
    await expect
      .poll(() => link.textContent())
      .toBe("Its writer finished the file afterwards; it was taken in again, whole, as a new scan of night-bed-04-whole.png.");
    expect(await kept.count()).toBe(0);
    await link.getByRole("link").click();
    await page.waitForURL(new RegExp(`/scans/${ids[1]}$`));
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent()).toContain("night-bed-04-whole.png");
  });
});
