import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { approvedPieces, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signedOutPage, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the new screens. */
const shots = process.env.PLATEN_SHOTS;
const shot = async (page: Page, name: string) => {
  if (!shots) return;
  await fs.mkdir(shots, { recursive: true });
  await page.screenshot({ path: path.join(shots, `${name}.png`), fullPage: true });
};

/** Two pieces on a white lid (invented test data). */
async function twoPieceScan(second = "#d4a017"): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1000" height="600">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="80" y="90" width="340" height="380" fill="#2b5d8a"/>
    <rect x="560" y="120" width="320" height="360" fill="${second}"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

beforeAll(async () => {
  stack = await startStack({ mail: true, watcher: false });
  await userAgent(stack, "admin", "admin@test.example");
  // Approved work for the viewer to see: a scan split and both pieces approved.
  const operator = await userAgent(stack, "operator", "operator@test.example");
  const { scanId } = await approvedPieces(operator, { name: "blue-and-ochre.tif", bytes: await twoPieceScan(), pieces: 2, render: false });
  // And one left unreviewed: its pieces are nothing a viewer should see yet.
  const waiting = await uploadScan(operator, { name: "still-to-review.tif", bytes: await twoPieceScan("#7a3b2e"), pieces: 2 });
  expect(waiting.scanId).not.toBe(scanId);
  expect(waiting.scan.fragments.proposed).toBe(2);
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("in the browser", () => {
  it("an admin invites a viewer; the viewer accepts from the mailbox's link and sees approved work, no operator actions", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    // Those who review see each scan's thumbnail (a viewer, below, does not).
    await page.goto(`${stack.url}/scans`);
    await expect
      .poll(
        () =>
          page
            .locator("main table img")
            .evaluateAll((imgs) => imgs.filter((i) => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0).length),
        { timeout: 15_000 },
      )
      .toBe(2);
    await page.goto(`${stack.url}/users`);
    const invite = page.getByRole("form", { name: "Invite someone" });
    await invite.getByLabel("E-mail").fill("framer@test.example");
    await invite.getByLabel("Role").selectOption("viewer");
    await invite.getByRole("button", { name: "Send invitation" }).click();
    const pending = page.getByRole("list", { name: "Pending invitations" });
    await pending.getByText("framer@test.example").waitFor();
    await expect.poll(() => pending.getByText(/Viewer · sent/).count()).toBe(1);
    await shot(page, "users-with-invitation");

    // An address that already has an account is refused beside the field.
    await invite.getByLabel("E-mail").fill("operator@test.example");
    await invite.getByRole("button", { name: "Send invitation" }).click();
    await invite.getByText("operator@test.example already has an account (Test operator, operator).", { exact: false }).waitFor();

    await page.getByRole("link", { name: "Mailbox" }).click();
    await page
      .getByRole("list", { name: "Messages" })
      .getByRole("button", { name: /framer@test\.example/ })
      .click();
    const message = page.getByRole("article", { name: "Message: You are invited to Test studio on Platen" });
    await message.waitFor();
    const frame = page.frameLocator('iframe[title="HTML part"]');
    await frame.getByRole("link", { name: "Accept the invitation" }).waitFor();
    await shot(page, "mailbox-invitation-html");
    await message.getByRole("tab", { name: "Plain text" }).click();
    await message
      .getByRole("link", { name: /\/join#token=/ })
      .first()
      .waitFor();
    await shot(page, "mailbox-invitation-text");
    await message.getByRole("tab", { name: "HTML" }).click();

    // The viewer opens the link in the message.
    await frame.getByRole("link", { name: "Accept the invitation" }).click();
    await page.waitForURL((u) => u.pathname === "/join");
    await page.getByRole("heading", { name: "Join Test studio" }).waitFor();
    // The token is taken out of the address bar once read.
    expect(new URL(page.url()).hash).toBe("");
    await shot(page, "join");
    await page.getByLabel("Your name").fill("Noor Haddad");
    await page.getByLabel("Choose a password").fill("framing-password-1");
    await page.getByLabel("Repeat the password").fill("framing-password-1");
    await page.getByRole("button", { name: "Join the studio" }).click();

    await page.waitForURL((u) => u.pathname === "/work");
    // From here on the viewer walks the app: no whole-scan picture is asked for (they show pieces
    // not approved), and nothing the pages ask for is refused.
    const scanPictures: string[] = [];
    const refused: string[] = [];
    page.on("request", (req) => {
      if (/\/api\/scans\/[^/]+\/(thumb|preview)(\?|$)/.test(new URL(req.url()).pathname)) scanPictures.push(req.url());
    });
    page.on("response", (res) => {
      if (new URL(res.url()).pathname.startsWith("/api/") && res.status() >= 400) refused.push(`${res.status()} ${res.url()}`);
    });
    const signedIn = page.getByRole("group", { name: "Signed in" });
    await signedIn.getByText("Noor Haddad").waitFor();
    await expect.poll(() => signedIn.getByText("Viewer").count()).toBe(1);
    const grid = page.getByLabel("Approved fragments");
    await expect.poll(() => grid.locator("img").count(), { timeout: 15_000 }).toBe(2);
    // The pictures themselves load for a viewer.
    await expect
      .poll(
        () =>
          grid
            .locator("img")
            .evaluateAll((imgs) => imgs.filter((i) => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0).length),
        { timeout: 15_000 },
      )
      .toBe(2);
    await shot(page, "viewer-approved-work");
    // No operator actions anywhere a viewer goes.
    for (const name of [/approve/i, /reject/i, /upload/i]) expect(await page.getByRole("button", { name }).count()).toBe(0);
    for (const name of ["Recipes", "Presets", "Users", "Mailbox"])
      expect(await page.getByRole("link", { name, exact: true }).count()).toBe(0);
    await page.goto(`${stack.url}/scans`);
    await page.getByRole("heading", { name: "Scans", exact: true }).waitFor();
    for (const name of [/approve/i, /reject/i, /upload/i, /review/i]) expect(await page.getByRole("button", { name }).count()).toBe(0);
    expect(await page.getByText(/drop scans here/i).count()).toBe(0);
    const scanRows = page.getByRole("row").filter({ has: page.getByRole("link", { name: /\.(tif|png)$/ }) });
    await expect.poll(() => scanRows.count(), { timeout: 15_000 }).toBe(2);
    // The list shows a quiet placeholder in place of each scan's thumbnail.
    await expect.poll(() => scanRows.locator("img").count()).toBe(0);
    await shot(page, "viewer-scans");

    // The live queue is for everyone.
    await page.goto(`${stack.url}/queue`);
    await page.getByRole("heading", { name: "Queue", exact: true }).waitFor();
    await page
      .getByText(/still-to-review\.tif/)
      .first()
      .waitFor();
    await shot(page, "viewer-queue");

    // A scan's page: its facts, no picture of the whole bed, and the way to its approved pieces.
    await page.goto(`${stack.url}/scans`);
    await page.getByRole("link", { name: "blue-and-ochre.tif", exact: true }).click();
    await page.getByRole("heading", { name: "blue-and-ochre.tif" }).waitFor();
    const mat = page.getByRole("figure", { name: "The scan's picture" });
    await mat.getByText("The picture of the whole scan is for operators", { exact: false }).waitFor();
    expect(await page.locator("main img").count()).toBe(0);
    await shot(page, "viewer-scan");
    await mat.getByRole("link", { name: "See its 2 approved fragments" }).click();
    await page.waitForURL((u) => u.pathname === "/work" && u.searchParams.has("scan"));
    await expect.poll(() => page.getByLabel("Approved fragments").locator("img").count(), { timeout: 15_000 }).toBe(2);

    // One with nothing approved yet says so, and points to the approved work there is.
    await page.goto(`${stack.url}/scans`);
    await page.getByRole("link", { name: "still-to-review.tif", exact: true }).click();
    await page.getByRole("heading", { name: "still-to-review.tif" }).waitFor();
    const waitingMat = page.getByRole("figure", { name: "The scan's picture" });
    await waitingMat.getByText("Nothing from this scan is approved yet.", { exact: false }).waitFor();
    expect(await waitingMat.getByRole("link", { name: "Browse the approved work" }).count()).toBe(1);
    expect(await page.locator("main img").count()).toBe(0);
    await shot(page, "viewer-scan-unreviewed");
    expect(scanPictures).toEqual([]);
    expect(refused).toEqual([]);

    // The same link does not work twice.
    const link = (await stack.mail!.waitFor("framer@test.example")).text.match(/http\S+\/join#token=\S+/)![0];
    await page.goto(link);
    await page.getByText("This invitation has already been used.", { exact: false }).waitFor();
    await shot(page, "join-used");

    // Notice choices: a viewer starts with none and can turn one on.
    await page.goto(`${stack.url}/account`);
    const failed = page.getByRole("checkbox", { name: /A scan failed/ });
    await failed.waitFor();
    expect(await failed.isChecked()).toBe(false);
    await failed.check();
    await page.getByText("You will get “a scan failed” by e-mail.").waitFor();
    await page.reload();
    await expect.poll(() => page.getByRole("checkbox", { name: /A scan failed/ }).isChecked()).toBe(true);
    await shot(page, "account-notices");
    await page.close();
  });

  it("forgot password: the sign-in page links to it with the address typed, and the answer is the same for anyone", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await page.goto(`${stack.url}/sign-in`);
    // Nothing typed yet: the page opens with an empty address.
    await page.getByRole("link", { name: "Forgot your password?" }).click();
    await page.waitForURL((u) => u.pathname === "/forgot-password" && u.search === "");
    expect(await page.getByLabel("E-mail").inputValue()).toBe("");
    // The address typed on the sign-in page goes along, so it is not typed twice.
    await page.goto(`${stack.url}/sign-in`);
    await page.getByLabel("E-mail").fill(" framer@test.example ");
    await page.getByRole("link", { name: "Forgot your password?" }).click();
    await page.waitForURL((u) => u.pathname === "/forgot-password" && u.searchParams.get("email") === "framer@test.example");
    expect(await page.getByLabel("E-mail").inputValue()).toBe("framer@test.example");
    await page.getByRole("button", { name: "Send me a link" }).click();
    await page.getByText("Check your mail").waitFor();
    await shot(page, "forgot-password-sent");
    const mail = await stack.mail!.waitFor("framer@test.example", 2);
    const link = mail.text.match(/http\S+\/reset-password#token=\S+/)![0];
    await page.goto(link);
    await page.getByRole("heading", { name: "Choose a new password" }).waitFor();
    await page.getByLabel("New password", { exact: true }).fill("another-password-22");
    await page.getByLabel("Repeat the new password").fill("another-password-22");
    await shot(page, "reset-password");
    await page.getByRole("button", { name: "Save and sign in" }).click();
    await page.waitForURL((u) => u.pathname === "/work");
    await page.getByRole("group", { name: "Signed in" }).getByText("Noor Haddad").waitFor();
    await page.close();
  });
});
