/**
 * A piece whose master and web copy could not be made (render state 'failed') is tried again by an
 * operator, one piece or all the failed pieces of a scan at once, through the same fragment-render
 * job an approval queues. The failure is real: the scan's original is taken out of the library
 * before its pieces are approved, so the worker finds it missing; put back, the pieces render.
 * Viewers may not try again; a piece whose render has not failed is refused with a 409 that says
 * why, and a double click queues one job. The real stack (PostgreSQL, pg-boss, the worker, a
 * library folder). Names and pictures are invented.
 */
import fs from "node:fs/promises";
import { eq } from "drizzle-orm";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { scans } from "../server/db/schema";
import type { Fragment } from "../shared/schemas/fragments";
import { approveRemaining, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let operator: supertest.Agent;
let admin: supertest.Agent;
let viewer: supertest.Agent;
let scanId: string;
let pieces: Fragment[];
/** The original's file in the library, and where it is kept while it is "missing". */
let original: string;
const away = () => `${original}.away`;

const NAME = "three-labels.tif";
const MISSING = "The original of this scan is missing from the library.";

/** Three paper labels on a white lid, drawn as a 300 DPI TIFF. */
const SCAN = `<svg xmlns="http://www.w3.org/2000/svg" width="1300" height="500">
    <rect width="100%" height="100%" fill="#f7f7f4"/>
    <rect x="60" y="80" width="300" height="320" fill="#8c3b2a"/>
    <rect x="500" y="80" width="300" height="320" fill="#2c5a7a"/>
    <rect x="940" y="80" width="300" height="320" fill="#5b6b2e"/>
  </svg>`;

const fragmentOf = async (id: string) => (await operator.get(`/api/fragments/${id}`)).body.fragment as Fragment;
const renderJobs = async (fragmentId: string) =>
  Number(
    (
      await stack.database.pool.query<{ n: string }>(
        `select (select count(*) from pgboss.job where name = 'fragment-render' and data->>'fragmentId' = $1)
              + (select count(*) from pgboss.archive where name = 'fragment-render' and data->>'fragmentId' = $1) as n`,
        [fragmentId],
      )
    ).rows[0]!.n,
  );
const outputKinds = async (fragmentId: string) =>
  (
    await stack.database.pool.query<{ kind: string }>(
      "select kind from outputs where fragment_id = $1 and kind in ('master', 'web') order by kind",
      [fragmentId],
    )
  ).rows.map((r) => r.kind);
/** Waits until every piece named is in `state`; a piece that reaches the other end fails the wait at once. */
const settled = (ids: string[], state: "failed" | "done") =>
  waitFor(
    `${ids.length} renders to end ${state}`,
    async () => {
      const now = await Promise.all(ids.map(fragmentOf));
      const wrong = now.find((f) => f.renderState === (state === "done" ? "failed" : "done"));
      if (wrong) throw new Error(`fragment ${wrong.position} ended ${wrong.renderState}: ${wrong.renderError}`);
      return now.every((f) => f.renderState === state) ? now : null;
    },
    60_000,
  );

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator");
  admin = await userAgent(stack, "admin");
  viewer = await userAgent(stack, "viewer");
  ({ scanId, fragments: pieces } = await uploadScan(operator, { name: NAME, svg: SCAN, pieces: 3 }));
  const [row] = await stack.db.select({ key: scans.originalKey }).from(scans).where(eq(scans.id, scanId));
  original = stack.libraryPath(row!.key);
  // The original goes missing between the split and the render (a restore gone wrong, a disk
  // unmounted): the approval's renders fail for real, in the worker.
  await fs.rename(original, away());
  await approveRemaining(operator, scanId);
  await settled(
    pieces.map((p) => p.id),
    "failed",
  );
}, 150_000);
afterAll(async () => {
  await stack?.stop();
});

describe("trying a failed render again", () => {
  it("the failed pieces say why, and a viewer may not try them again", async () => {
    for (const p of pieces) expect(await fragmentOf(p.id)).toMatchObject({ renderState: "failed", renderError: MISSING });
    const before = await renderJobs(pieces[0]!.id);
    for (const url of [`/api/fragments/${pieces[0]!.id}/render-retry`, `/api/scans/${scanId}/render-retry`]) {
      const res = await viewer.post(url);
      expect(res.status, url).toBe(403);
      expect(res.body.error.code).toBe("forbidden");
      expect(res.body.error.message).toMatch(/^Your role \(viewer\) does not allow this/);
    }
    expect(await renderJobs(pieces[0]!.id)).toBe(before);
    expect((await fragmentOf(pieces[0]!.id)).renderState).toBe("failed");
  });

  it("tried again while the original is still missing, the render fails again with the same reason", async () => {
    const piece = pieces[0]!;
    const res = await operator.post(`/api/fragments/${piece.id}/render-retry`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.fragment).toMatchObject({ id: piece.id, renderError: null });
    expect(["queued", "rendering", "failed"]).toContain(res.body.fragment.renderState);
    expect(await renderJobs(piece.id)).toBe(2);
    const [again] = await settled([piece.id], "failed");
    expect(again!.renderError).toBe(MISSING);
    expect(await outputKinds(piece.id)).toEqual([]);
  });

  it("once the original is back, one piece tried again renders; a double click queues it once", async () => {
    await fs.rename(away(), original);
    const piece = pieces[0]!;
    const jobs = await renderJobs(piece.id);
    // Two clicks at once: one is queued, the other finds it no longer failed.
    const both = await Promise.all([1, 2].map(() => admin.post(`/api/fragments/${piece.id}/render-retry`)));
    expect(both.map((r) => r.status).sort()).toEqual([200, 409]);
    const refused = both.find((r) => r.status === 409)!;
    expect(refused.body.error.code).toBe("conflict");
    expect(refused.body.error.message).toMatch(
      /^The render of fragment 1 of three-labels\.tif has not failed: (its render is already queued and waiting for a worker|it is being rendered right now|its master and web copy are already made), so there is nothing to try again\.$/,
    );
    expect(await renderJobs(piece.id)).toBe(jobs + 1);
    const [done] = await settled([piece.id], "done");
    expect(done!.renderError).toBeNull();
    expect(await outputKinds(piece.id)).toEqual(["master", "web"]);
    // The others were not touched by it.
    for (const p of pieces.slice(1)) expect((await fragmentOf(p.id)).renderState).toBe("failed");
  });

  it("the scan's other failed pieces are tried again all at once, and a second ask finds none failed", async () => {
    const rest = pieces.slice(1).map((p) => p.id);
    const jobs = await Promise.all(rest.map(renderJobs));
    const res = await operator.post(`/api/scans/${scanId}/render-retry`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.queued).toBe(2);
    expect((res.body.fragments as Fragment[]).map((f) => f.id).sort()).toEqual(pieces.map((p) => p.id).sort());
    const again = await operator.post(`/api/scans/${scanId}/render-retry`);
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe("No approved piece of three-labels.tif has a failed render, so there is nothing to try again.");
    expect(await Promise.all(rest.map(renderJobs))).toEqual(jobs.map((n) => n + 1));
    await settled(rest, "done");
    for (const id of rest) expect(await outputKinds(id)).toEqual(["master", "web"]);
  });

  it("a piece whose render has not failed, or that is not approved, is refused with a 409 that says why", async () => {
    const [first, , third] = pieces as [Fragment, Fragment, Fragment];
    let res = await operator.post(`/api/fragments/${first.id}/render-retry`);
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({
      code: "conflict",
      message:
        "The render of fragment 1 of three-labels.tif has not failed: its master and web copy are already made, so there is nothing to try again.",
    });
    expect((await operator.patch(`/api/fragments/${third.id}`).send({ status: "rejected" })).status).toBe(200);
    res = await operator.post(`/api/fragments/${third.id}/render-retry`);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe("Only an approved piece is rendered; fragment 3 of three-labels.tif is rejected.");
    res = await operator.post("/api/fragments/00000000-0000-4000-8000-000000000000/render-retry");
    expect(res.status).toBe(404);
    expect(res.body.error.message).toBe("That fragment was not found.");
  });
});
