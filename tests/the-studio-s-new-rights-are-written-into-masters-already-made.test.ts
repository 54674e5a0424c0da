/**
 * An admin changes the studio's creator and copyright line; the masters (and web copies) already
 * made still carry the old ones until the admin asks for them to be written in. The real stack
 * (PostgreSQL, pg-boss, the worker, a library folder). What the files carry is read by exifr (npm):
 * XMP dc:creator and dc:rights (ISO 16684-1, Dublin Core) and the TIFF 6.0 Artist (315) and
 * Copyright (33432) fields; pixels by SHA-256 of sharp's raw samples. Names are invented.
 */
import crypto from "node:crypto";
import exifr from "exifr";
import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import type { MastersRights } from "../shared/schemas/studio";
import { approveRemaining, renderedPieces, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let viewer: supertest.Agent;
let pieces: Fragment[];

const FIRST = { creator: "Oksana Brill", copyright: "© 2026 Oksana Brill" };
const SECOND = { creator: "Brill & Moreau Studio", copyright: "© 2026 Brill & Moreau" };

/** Three pieces at 300 DPI on a pale bed (invented test data). */
const SCAN = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="500">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="60" y="80" width="300" height="320" fill="#6b2e7d"/>
    <rect x="450" y="80" width="300" height="320" fill="#35508a"/>
    <rect x="840" y="80" width="300" height="320" fill="#8a7a35"/>
  </svg>`;

interface Row {
  kind: "master" | "web";
  key: string;
  rights: { creator: string | null; copyright: string | null } | null;
}

async function rows(fragmentId: string): Promise<Row[]> {
  const { rows } = await stack.database.pool.query<Row>(
    `select kind, key, rights from outputs where fragment_id = $1 and kind in ('master', 'web') order by kind`,
    [fragmentId],
  );
  return rows;
}

/**
 * exifr hands XMP text over as it stands in the packet, entity references and all; the five
 * predefined ones (XML 1.0, section 4.6) are read here. Anything else would show as written.
 */
const xmlText = (v: unknown) =>
  typeof v === "string"
    ? v.replace(/&(amp|lt|gt|quot|apos);/g, (_m, e: string) => ({ amp: "&", lt: "<", gt: ">", quot: '"', apos: "'" })[e]!)
    : undefined;

async function carried(key: string) {
  const t = await exifr.parse(stack.libraryPath(key), { tiff: true, ifd0: true, xmp: true, mergeOutput: false } as never);
  const first = (v: unknown) => (Array.isArray(v) ? v[0] : v);
  return {
    creator: xmlText(first(t?.dc?.creator)),
    rights: xmlText(t?.dc?.rights?.value ?? t?.dc?.rights),
    title: xmlText(t?.dc?.title?.value ?? t?.dc?.title),
    artist: t?.ifd0?.Artist as string | undefined,
    copyright: t?.ifd0?.Copyright as string | undefined,
  };
}

async function pixels(key: string): Promise<string> {
  const data = await sharp(stack.libraryPath(key)).raw().toBuffer();
  return crypto.createHash("sha256").update(data).digest("hex");
}

async function studioJobs(): Promise<number> {
  const { rows } = await stack.database.pool.query<{ n: number }>(
    `select count(*)::int as n from pgboss.job where name = 'fragment-rights' and data->>'rights' = 'studio'`,
  );
  return rows[0]!.n;
}

const status = async (): Promise<MastersRights> => {
  const res = await admin.get("/api/studio/masters-rights");
  expect(res.status).toBe(200);
  return res.body.rights as MastersRights;
};

const settled = (want: { creator: string | null; copyright: string | null }) =>
  waitFor(
    "every master to carry the studio's rights",
    async () => {
      const s = await status();
      return s.behind === 0 && s.writing === 0 && s.creator === want.creator && s.copyright === want.copyright ? s : null;
    },
    60_000,
  );

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  expect((await admin.patch("/api/studio/settings").send(FIRST)).status).toBe(200);
  const { scanId, fragments } = await uploadScan(operator, { name: "three-prints.tif", svg: SCAN, compression: "lzw", pieces: 3 });
  for (const f of fragments)
    expect((await operator.patch(`/api/fragments/${f.id}`).send({ title: `Print ${f.position}` })).status).toBe(200);
  await approveRemaining(operator, scanId);
  pieces = await renderedPieces(operator, scanId, 3, 90_000);
}, 150_000);
afterAll(async () => {
  await stack?.stop();
});

describe("the studio's rights in masters already made", () => {
  it("are recorded as each render writes them, and counted as current", async () => {
    for (const p of pieces) {
      const made = await rows(p.id);
      expect(made.map((r) => r.kind)).toEqual(["master", "web"]);
      for (const r of made) expect(r.rights).toEqual(FIRST);
      expect(await carried(made[0]!.key)).toMatchObject({ creator: FIRST.creator, rights: FIRST.copyright, artist: FIRST.creator });
    }
    expect(await status()).toEqual({ ...FIRST, masters: 3, behind: 0, unknown: 0, writing: 0, failed: 0, reasons: [] });
  });

  it("are only for admins to read and write", async () => {
    expect((await operator.get("/api/studio/masters-rights")).status).toBe(403);
    expect((await viewer.get("/api/studio/masters-rights")).status).toBe(403);
    expect((await operator.post("/api/studio/masters-rights").send(FIRST)).status).toBe(403);
    expect((await stack.agent().get("/api/studio/masters-rights")).status).toBe(401);
    expect((await admin.post("/api/studio/masters-rights").send({ creator: 7 })).status).toBe(400);
    expect(await studioJobs()).toBe(0);
  });

  it("fall behind when the studio's change, and are written in on request, pixels untouched", async () => {
    const nothingBehind = await admin.post("/api/studio/masters-rights").send(FIRST);
    expect(nothingBehind.status).toBe(409);
    expect(nothingBehind.body.error.message).toMatch(/already carries/);

    expect((await admin.patch("/api/studio/settings").send(SECOND)).status).toBe(200);
    // One master made before rows recorded rights: counted behind, and as not known.
    await stack.database.pool.query(`update outputs set rights = null where fragment_id = $1 and kind = 'master'`, [pieces[2]!.id]);
    expect(await status()).toEqual({ ...SECOND, masters: 3, behind: 3, unknown: 1, writing: 0, failed: 0, reasons: [] });

    // The rights the admin saw are no longer the studio's: refused, nothing queued.
    const stale = await admin.post("/api/studio/masters-rights").send(FIRST);
    expect(stale.status).toBe(409);
    expect(stale.body.error.message).toMatch(/changed since you looked/);
    expect(await studioJobs()).toBe(0);

    const before = await Promise.all(pieces.map(async (p) => Promise.all((await rows(p.id)).map((r) => pixels(r.key)))));
    const res = await admin.post("/api/studio/masters-rights").send(SECOND);
    expect(res.status).toBe(200);
    expect(res.body.queued).toBe(3);
    expect(await studioJobs()).toBe(3);
    // Asked again at once: refused while the first is running, or because nothing is left behind.
    expect((await admin.post("/api/studio/masters-rights").send(SECOND)).status).toBe(409);

    expect(await settled(SECOND)).toEqual({ ...SECOND, masters: 3, behind: 0, unknown: 0, writing: 0, failed: 0, reasons: [] });
    for (const [i, p] of pieces.entries()) {
      const made = await rows(p.id);
      for (const r of made) {
        expect(r.rights).toEqual(SECOND);
        expect(await carried(r.key)).toMatchObject({ creator: SECOND.creator, rights: SECOND.copyright, title: `Print ${p.position}` });
      }
      // TIFF 6.0's Artist and Copyright are 7-bit ASCII: the master spells "©" as "(C)" there.
      expect(await carried(made[0]!.key)).toMatchObject({ artist: SECOND.creator, copyright: "(C) 2026 Brill & Moreau" });
      expect(await Promise.all(made.map((r) => pixels(r.key)))).toEqual(before[i]);
    }
    // Only the admin's one request is in the trail, naming how many.
    const { rows: audit } = await stack.database.pool.query<{ summary: string; after: { pieces: number } }>(
      `select summary, after from audit_events where action = 'studio.masters_rights'`,
    );
    expect(audit).toHaveLength(1);
    expect(audit[0]!.after.pieces).toBe(3);
    expect(audit[0]!.summary).toContain("3 masters");
  });

  it("a copyright line taken away is taken out of the files", async () => {
    expect((await admin.patch("/api/studio/settings").send({ copyright: "" })).status).toBe(200);
    const want = { creator: SECOND.creator, copyright: null };
    expect(await status()).toMatchObject({ ...want, behind: 3 });
    expect((await admin.post("/api/studio/masters-rights").send(want)).status).toBe(200);
    await settled(want);
    for (const p of pieces) {
      for (const r of await rows(p.id)) {
        expect(r.rights).toEqual(want);
        const now = await carried(r.key);
        expect(now.creator).toBe(SECOND.creator);
        expect(now.rights).toBeUndefined();
        expect(now.copyright).toBeUndefined();
      }
    }
  });
});
