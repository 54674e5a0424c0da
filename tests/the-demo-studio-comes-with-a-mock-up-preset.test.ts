/**
 * A new demo studio (`npm start` with the demo on) makes its own mock-up preset beside the
 * built-in ones, so its first batch can make web, print and mock-up copies at once. The preset is
 * made through the same service as the preset editor, once, and the worker's renderer makes a
 * file from it. Demo data is invented.
 */
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { makeTempDir } from "./helpers/scan-bytes";
import { DEMO_PRESETS, createDemoPresets } from "../scripts/lib/demo";
import { listPresets } from "../server/services/presets";
import { renderOutput } from "../worker/pipeline/output/index";

let stack: Stack;
const tmp = makeTempDir("platen-demo-");

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
}, 60_000);
afterAll(async () => {
  await stack?.stop();
  tmp.cleanup();
});

describe("the demo studio's presets", () => {
  it("are made once, in the first admin's name, and the worker renders them", async () => {
    const admin = await userAgent(stack, "admin");
    const me = (await admin.get("/api/auth/me")).body.user;
    await createDemoPresets(stack.db, me.id);
    await createDemoPresets(stack.db, me.id); // a second start leaves them as they are
    const list = await listPresets(stack.db);
    const mockups = list.filter((p) => p.kind === "mockup");
    expect(mockups.map((p) => p.name)).toEqual(DEMO_PRESETS.map((p) => p.name));
    expect(mockups[0]).toMatchObject({ builtIn: false, version: 1, settings: DEMO_PRESETS[0]!.settings });
    // On the audit trail as made at set-up (no request, so no person), its version by the first admin.
    const { rows } = await stack.database.pool.query("select actor_id, summary from audit_events where action = 'preset.create'");
    expect(rows).toEqual([{ actor_id: null, summary: 'Made the mock-up preset "oak-frame-listing" (version 1)' }]);
    const versions = await stack.database.pool.query(
      "select created_by from preset_versions v join presets p on p.id = v.preset_id where p.name = 'oak-frame-listing'",
    );
    expect(versions.rows).toEqual([{ created_by: me.id }]);

    const piece = path.join(tmp.dir, "piece.png");
    await sharp({ create: { width: 900, height: 1200, channels: 3, background: { r: 60, g: 110, b: 150 } } })
      .png()
      .toFile(piece);
    const out = path.join(tmp.dir, "listing.jpg");
    const report = await renderOutput({ master: piece, dpi: 300, title: "Harbour blue" }, DEMO_PRESETS[0]!.settings, { path: out });
    expect(report).toMatchObject({ pixelWidth: 1600, pixelHeight: 1600 });
    const meta = await sharp(out).metadata();
    expect([meta.format, meta.width, meta.height]).toEqual(["jpeg", 1600, 1600]);
    // The wall's sage shows at the corner; the piece's blue at the centre.
    const { data } = await sharp(out).extract({ left: 800, top: 800, width: 1, height: 1 }).raw().toBuffer({ resolveWithObject: true });
    expect(Math.abs(data[0]! - 60) + Math.abs(data[1]! - 110) + Math.abs(data[2]! - 150)).toBeLessThan(30);
  });
});
