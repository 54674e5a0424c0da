/**
 * A title edit bumps no revision, so nothing renders again; instead a small job writes the new
 * title into the master and web copy already made (worker/jobs/rights.ts). The real stack
 * (PostgreSQL, pg-boss, worker, library folder) with a 16-bit scan, so the master is 16-bit.
 * Checked against readers outside the project: sharp's raw samples (SHA-256 before and after),
 * exifr (npm) for XMP dc:title, the TIFF 6.0 ImageDescription (270) and XResolution (282), and
 * libtiff's tiffinfo (Debian libtiff-tools) for the master. The scan and names are invented.
 */
import { execFileSync } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import type { Storage } from "../server/storage/storage";
import { rewriteRightsJob } from "../worker/jobs/rights";
import { approveRemaining, renderedPieces, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let pieces: Fragment[];

const CREATOR = "Ilse Varga";
const COPYRIGHT = "© 2026 Ilse Varga";

/** Three pieces at 300 DPI on a pale bed, 16 bits a sample. */
async function scan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="500">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="60" y="80" width="300" height="320" fill="#2e7d6b"/><rect x="90" y="110" width="40" height="40" fill="#c0392b"/>
    <rect x="450" y="80" width="300" height="320" fill="#35508a"/>
    <rect x="840" y="80" width="300" height="320" fill="#8a5a35"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .toColourspace("rgb16")
    .tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

interface Files {
  master: {
    id: string;
    key: string;
    bytes: number;
    revision: number;
    recipe: string | null;
    updated: Date;
  };
  web: {
    id: string;
    key: string;
    bytes: number;
    revision: number;
    recipe: string | null;
    updated: Date;
  };
}

async function files(fragmentId: string): Promise<Files> {
  const { rows } = await stack.database.pool.query<{
    id: string;
    kind: "master" | "web";
    key: string;
    bytes: string;
    revision: number;
    recipe_version_id: string | null;
    updated_at: Date;
  }>(
    `select id, kind, key, bytes, revision, recipe_version_id, updated_at from outputs where fragment_id = $1 and kind in ('master', 'web')`,
    [fragmentId],
  );
  const of = (kind: "master" | "web") => {
    const r = rows.find((x) => x.kind === kind)!;
    return {
      id: r.id,
      key: r.key,
      bytes: Number(r.bytes),
      revision: r.revision,
      recipe: r.recipe_version_id,
      updated: r.updated_at,
    };
  };
  return { master: of("master"), web: of("web") };
}

async function pixels(key: string): Promise<string> {
  const data = await sharp(stack.libraryPath(key)).raw({ depth: "ushort" }).toBuffer();
  return crypto.createHash("sha256").update(data).digest("hex");
}

async function carried(key: string) {
  const t = await exifr.parse(stack.libraryPath(key), {
    tiff: true,
    ifd0: true,
    xmp: true,
    mergeOutput: false,
  } as never);
  return {
    xmp: t?.dc?.title?.value as string | undefined,
    description: t?.ifd0?.ImageDescription as string | undefined,
    artist: t?.ifd0?.Artist as string | undefined,
    xres: t?.ifd0?.XResolution as number | undefined,
  };
}

/** The rights jobs queued for a fragment, in any state (pg-boss's job table). */
async function rightsJobs(fragmentId: string): Promise<number> {
  const { rows } = await stack.database.pool.query<{ n: number }>(
    `select count(*)::int as n from pgboss.job where name = 'fragment-rights' and data->>'fragmentId' = $1`,
    [fragmentId],
  );
  return rows[0]!.n;
}

async function renderJobs(fragmentId: string): Promise<number> {
  const { rows } = await stack.database.pool.query<{ n: number }>(
    `select count(*)::int as n from pgboss.job where name = 'fragment-render' and data->>'fragmentId' = $1`,
    [fragmentId],
  );
  return rows[0]!.n;
}

async function jobDeps(library: Storage = stack.library) {
  return {
    database: stack.database,
    boss: stack.boss,
    library,
    config: stack.cfg,
    log: (await import("../server/logger")).logger,
  };
}

const retitle = (id: string, title: string) => operator.patch(`/api/fragments/${id}`).send({ title });

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  expect((await admin.patch("/api/studio/settings").send({ creator: CREATOR, copyright: COPYRIGHT })).status).toBe(200);
  const { scanId, fragments } = await uploadScan(operator, {
    name: "shore-bed.tif",
    bytes: await scan(),
    pieces: 3,
  });
  for (const f of fragments)
    expect((await operator.patch(`/api/fragments/${f.id}`).send({ title: `Shore ${f.position}` })).status).toBe(200);
  await approveRemaining(operator, scanId);
  pieces = await renderedPieces(operator, scanId, 3, 90_000);
}, 150_000);
afterAll(async () => {
  await stack?.stop();
});

describe("a title edit on a rendered piece", () => {
  it("writes the new title into its master and web copy, every pixel, its resolution and rights kept, with no new render", async () => {
    const piece = pieces[0]!;
    const before = await files(piece.id);
    expect(await carried(before.master.key)).toMatchObject({
      xmp: "Shore 1",
      description: "Shore 1",
      artist: CREATOR,
      xres: 300,
    });
    const masterPixels = await pixels(before.master.key);
    const webPixels = await pixels(before.web.key);
    const webXres = (await carried(before.web.key)).xres;
    const renders = await renderJobs(piece.id);

    const res = await retitle(piece.id, "Shore at low tide");
    expect(res.status).toBe(200);
    expect(res.body.revision ?? res.body.fragment?.revision).toBe(piece.revision);

    await waitFor("the new title in both files", async () =>
      (await carried(before.master.key)).description === "Shore at low tide" &&
      (await carried(before.web.key)).description === "Shore at low tide"
        ? true
        : null,
    );
    const after = await files(piece.id);
    expect(await carried(after.master.key)).toEqual({
      xmp: "Shore at low tide",
      description: "Shore at low tide",
      artist: CREATOR,
      xres: 300,
    });
    expect(await carried(after.web.key)).toMatchObject({
      xmp: "Shore at low tide",
      description: "Shore at low tide",
      artist: CREATOR,
      xres: webXres,
    });
    expect(await pixels(after.master.key)).toBe(masterPixels);
    expect(await pixels(after.web.key)).toBe(webPixels);
    expect((await sharp(stack.libraryPath(after.master.key)).metadata()).depth).toBe("ushort");
    const info = execFileSync("tiffinfo", [stack.libraryPath(after.master.key)], {
      encoding: "utf8",
      stdio: ["ignore", "pipe", "pipe"],
    });
    expect(info).toContain("ImageDescription: Shore at low tide");
    expect(info).toContain("Bits/Sample: 16");
    expect(info).toContain("Resolution: 300, 300 pixels/inch");
    // The same rows, same revision and recipe version; their sizes are the new files'.
    for (const kind of ["master", "web"] as const) {
      expect(after[kind]).toMatchObject({
        id: before[kind].id,
        key: before[kind].key,
        revision: before[kind].revision,
        recipe: before[kind].recipe,
      });
      expect(after[kind].bytes).toBe((await fs.stat(stack.libraryPath(after[kind].key))).size);
      expect(after[kind].updated.getTime()).toBeGreaterThan(before[kind].updated.getTime());
    }
    expect(await renderJobs(piece.id)).toBe(renders);
    // No temporary left beside the stored files.
    const left = (await fs.readdir(path.dirname(stack.libraryPath(after.master.key)))).filter((n) => n.endsWith(".tmp"));
    expect(left).toEqual([]);
  });

  it("leaves the files of a piece that is no longer approved as they are", async () => {
    const piece = pieces[1]!;
    const before = await files(piece.id);
    expect((await operator.patch(`/api/fragments/${piece.id}`).send({ status: "rejected" })).status).toBe(200);
    expect((await retitle(piece.id, "Not this one")).status).toBe(200);
    // The edit queues no rewrite (a job would be in the edit's own transaction, committed by now)…
    expect(await rightsJobs(piece.id)).toBe(0);
    // …and the job itself, asked anyway, writes nothing.
    await rewriteRightsJob(await jobDeps(), { fragmentId: piece.id }, { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 });
    expect(await carried(before.master.key)).toMatchObject({ description: "Shore 2" });
    expect(await files(piece.id)).toEqual(before);
  });

  it("never stores over a file that changed while it was being rewritten", async () => {
    const piece = pieces[2]!;
    const before = await files(piece.id);
    // Retitled without its job (as an edit racing a render would leave it), then the job runs
    // here with a library whose reads are followed by a store of the same key by someone else.
    await stack.database.pool.query(`update fragments set title = 'Shore, raced' where id = $1`, [piece.id]);
    const library: Storage = Object.create(stack.library, {
      withLocalFile: {
        value: async <T>(key: string, fn: (p: string) => Promise<T>) => {
          const r = await stack.library.withLocalFile(key, fn);
          await stack.database.pool.query(`update outputs set updated_at = now() where key = $1`, [key]);
          return r;
        },
      },
    });
    const deps = await jobDeps(library);
    await rewriteRightsJob(deps, { fragmentId: piece.id }, { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 });
    expect(await carried(before.master.key)).toMatchObject({ description: "Shore 3" });
    expect((await files(piece.id)).master.bytes).toBe(before.master.bytes);
    // Run again with the plain library, it writes the title.
    await rewriteRightsJob(
      { ...deps, library: stack.library },
      { fragmentId: piece.id },
      { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 },
    );
    expect(await carried(before.master.key)).toMatchObject({ description: "Shore, raced" });
    expect(await carried(before.web.key)).toMatchObject({ description: "Shore, raced" });
    // And once more: the files already carry it, nothing is written.
    const now = await files(piece.id);
    await rewriteRightsJob(
      { ...deps, library: stack.library },
      { fragmentId: piece.id },
      { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 },
    );
    expect(await files(piece.id)).toEqual(now);
  });

  it("is written after a render that read the old title stores its files", async () => {
    const piece = pieces[0]!;
    const { rows } = await stack.database.pool.query<{ revision: number; original_key: string }>(
      `update fragments f set revision = f.revision + 1, render_state = 'queued' from scans s where f.id = $1 and s.id = f.scan_id returning f.revision, s.original_key`,
      [piece.id],
    );
    const { revision, original_key: originalKey } = rows[0]!;
    // The edit lands while the render is under way: after it read the fragment, before it stores.
    // Written straight to the row, as an edit whose own rewrite found the render unfinished (and
    // did nothing) leaves it: only the render's store can notice the title it did not write.
    const library: Storage = Object.create(stack.library, {
      withLocalFile: {
        value: async <T>(key: string, fn: (p: string) => Promise<T>) => {
          if (key === originalKey)
            await stack.database.pool.query(`update fragments set title = 'Shore, mid-render' where id = $1`, [piece.id]);
          return stack.library.withLocalFile(key, fn);
        },
      },
    });
    const { renderFragmentJob } = await import("../worker/jobs/render");
    await renderFragmentJob(
      await jobDeps(library),
      { fragmentId: piece.id, revision },
      { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 },
    );
    const after = await files(piece.id);
    expect(after.master.revision).toBe(revision);
    await waitFor("the title the render did not have", async () =>
      (await carried(after.master.key)).xmp === "Shore, mid-render" && (await carried(after.web.key)).xmp === "Shore, mid-render"
        ? true
        : null,
    );
    expect(await carried(after.master.key)).toMatchObject({
      description: "Shore, mid-render",
      artist: CREATOR,
      xres: 300,
    });
  });

  it("keeps the creator and copyright a file carries, and writes the studio's new ones only when asked", async () => {
    const piece = pieces[2]!;
    const before = await files(piece.id);
    const masterPixels = await pixels(before.master.key);
    const { rows: all } = await stack.database.pool.query<{ n: number }>(
      `select count(*)::int as n from pgboss.job where name = 'fragment-rights'`,
    );
    expect((await admin.patch("/api/studio/settings").send({ creator: "Varga & Holm", copyright: "© 2027 Varga & Holm" })).status).toBe(
      200,
    );
    // Saving the studio's rights queues no rewrite of anything.
    const { rows: now } = await stack.database.pool.query<{ n: number }>(
      `select count(*)::int as n from pgboss.job where name = 'fragment-rights'`,
    );
    expect(now[0]!.n).toBe(all[0]!.n);
    // A title rewrite keeps what the file carries.
    await stack.database.pool.query(`update fragments set title = 'Shore, kept rights' where id = $1`, [piece.id]);
    await rewriteRightsJob(await jobDeps(), { fragmentId: piece.id }, { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 });
    expect(await carried(before.master.key)).toMatchObject({
      description: "Shore, kept rights",
      artist: CREATOR,
    });
    // Asked for the studio's rights, it writes them, with the title.
    await rewriteRightsJob(
      await jobDeps(),
      { fragmentId: piece.id, rights: "studio" },
      { jobId: crypto.randomUUID(), retryCount: 0, retryLimit: 0 },
    );
    for (const key of [before.master.key, before.web.key]) {
      expect(await carried(key)).toMatchObject({
        description: "Shore, kept rights",
        artist: "Varga & Holm",
      });
    }
    expect(await pixels(before.master.key)).toBe(masterPixels);
  });
});
