/**
 * A rights rewrite cannot write into a master whose file is missing from the library: the piece
 * stays behind, and the Studio screen's count says why instead of staying silent. A piece made
 * before Platen recorded what its files carry, whose file already agrees, gets its record filled
 * and its bytes left alone. The real stack (PostgreSQL, pg-boss, the worker, a library folder);
 * jobs are not retried here (PLATEN_JOB_RETRY_LIMIT=0), so a failure is final at once. Names are
 * invented.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import type { MastersRights } from "../shared/schemas/studio";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let pieces: Fragment[];
/** A web copy taken away in one case and put back in the next. */
let kept: { key: string; bytes: Buffer };

const FIRST = { creator: "Ilse Varga", copyright: "© 2026 Ilse Varga" };
const SECOND = { creator: "Varga Bindery", copyright: "© 2026 Varga Bindery" };

/** Two bookplates, drawn as a 300 DPI TIFF. */
const SCAN = `<svg xmlns="http://www.w3.org/2000/svg" width="900" height="450">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="60" y="70" width="300" height="300" fill="#7d3a2e"/>
    <rect x="520" y="70" width="300" height="300" fill="#2e5b7d"/>
  </svg>`;

const status = async (): Promise<MastersRights> => {
  const res = await admin.get("/api/studio/masters-rights");
  expect(res.status).toBe(200);
  return res.body.rights as MastersRights;
};
const done = () => waitFor("the rewrite to finish", async () => ((await status()).writing === 0 ? status() : null), 60_000);
const files = async (fragmentId: string) =>
  (
    await stack.database.pool.query<{ id: string; kind: string; key: string; rights: unknown; bytes: number }>(
      `select id, kind, key, rights, bytes from outputs where fragment_id = $1 and kind in ('master', 'web') order by kind`,
      [fragmentId],
    )
  ).rows;
const sha = async (key: string) =>
  crypto
    .createHash("sha256")
    .update(await fs.readFile(stack.libraryPath(key)))
    .digest("hex");

beforeAll(async () => {
  stack = await startStack({ watcher: false, env: { PLATEN_JOB_RETRY_LIMIT: "0" } });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  expect((await admin.patch("/api/studio/settings").send(FIRST)).status).toBe(200);
  ({ fragments: pieces } = await approvedPieces(operator, { name: "two-bookplates.tif", svg: SCAN, pieces: 2, renderTimeoutMs: 90_000 }));
}, 150_000);
afterAll(async () => {
  await stack?.stop();
});

describe("a rewrite that cannot write a master", () => {
  it("leaves the piece behind and says why: its master is missing from the library", async () => {
    expect((await admin.patch("/api/studio/settings").send(SECOND)).status).toBe(200);
    const [a, b] = pieces as [Fragment, Fragment];
    const lost = (await files(a.id)).find((f) => f.kind === "master")!;
    await fs.rm(stack.libraryPath(lost.key));
    expect(await status()).toMatchObject({ behind: 2, failed: 0, reasons: [] });
    const res = await admin.post("/api/studio/masters-rights").send(SECOND);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.queued).toBe(2);
    const s = await done();
    expect(s).toMatchObject({ ...SECOND, masters: 2, behind: 1, writing: 0, failed: 1 });
    expect(s.reasons).toEqual([expect.stringContaining(`"${lost.key}" is missing from the library`)]);
    // The other piece was written, and so was the web copy beside the missing master.
    for (const f of await files(b.id)) expect(f.rights).toEqual(SECOND);
    const rowsA = await files(a.id);
    expect(rowsA.find((f) => f.kind === "master")!.rights).toEqual(FIRST);
    expect(rowsA.find((f) => f.kind === "web")!.rights).toEqual(SECOND);
  });

  it("fills in the record of a file made before records were kept that already agrees, leaving its bytes alone", async () => {
    const [a, b] = pieces as [Fragment, Fragment];
    const before = await files(b.id);
    const hashes = await Promise.all(before.map((f) => sha(f.key)));
    // As a database from before records were kept has it.
    await stack.database.pool.query(`update outputs set rights = null where fragment_id = $1 and kind in ('master', 'web')`, [b.id]);
    expect(await status()).toMatchObject({ behind: 2, unknown: 1 });
    const res = await admin.post("/api/studio/masters-rights").send(SECOND);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const s = await done();
    expect(s).toMatchObject({ behind: 1, unknown: 0, failed: 1 });
    const after = await files(b.id);
    for (const f of after) expect(f.rights).toEqual(SECOND);
    expect(await Promise.all(after.map((f) => sha(f.key)))).toEqual(hashes);
    expect(after.map((f) => f.bytes)).toEqual(before.map((f) => f.bytes));
    // The piece whose master is missing is still said, from this request's own attempt.
    expect(s.reasons).toEqual([expect.stringContaining("is missing from the library")]);
    expect((await files(a.id)).find((f) => f.kind === "master")!.rights).toEqual(FIRST);
  });

  it("writes a master whose web copy is the file missing, and names the web copy", async () => {
    const [a, b] = pieces as [Fragment, Fragment];
    const third = { creator: "Varga & Holm", copyright: "© 2026 Varga & Holm" };
    expect((await admin.patch("/api/studio/settings").send(third)).status).toBe(200);
    const web = (await files(b.id)).find((f) => f.kind === "web")!;
    kept = { key: web.key, bytes: await fs.readFile(stack.libraryPath(web.key)) };
    await fs.rm(stack.libraryPath(web.key));
    expect((await admin.post("/api/studio/masters-rights").send(third)).status).toBe(200);
    const s = await done();
    expect(s).toMatchObject({ behind: 2, failed: 2 });
    expect(s.reasons).toEqual(expect.arrayContaining([expect.stringContaining(`The web copy "${web.key}" is missing from the library`)]));
    const rowsB = await files(b.id);
    expect(rowsB.find((f) => f.kind === "master")!.rights).toEqual(third);
    expect(rowsB.find((f) => f.kind === "web")!.rights).toEqual(SECOND);
    expect((await files(a.id)).find((f) => f.kind === "web")!.rights).toEqual(third);
  });

  it("keeps the reasons on the pieces, whatever the queue keeps, until a rewrite succeeds", async () => {
    const [, b] = pieces as [Fragment, Fragment];
    // The queue's own record of the failed jobs goes (as its retention does after some days).
    await stack.database.pool.query(`delete from pgboss.job where name = 'fragment-rights'`);
    expect(await status()).toMatchObject({ behind: 2, failed: 2 });
    // The web copy is back: the next rewrite writes it, and only the missing master is still said.
    await fs.writeFile(stack.libraryPath(kept.key), kept.bytes);
    const third = { creator: "Varga & Holm", copyright: "© 2026 Varga & Holm" };
    expect((await admin.post("/api/studio/masters-rights").send(third)).status).toBe(200);
    const s = await done();
    expect(s).toMatchObject({ behind: 1, failed: 1, reasons: [expect.stringContaining("The master")] });
    expect((await stack.database.pool.query(`select rights_error from fragments where id = $1`, [b.id])).rows[0]!.rights_error).toBeNull();
  });
});
