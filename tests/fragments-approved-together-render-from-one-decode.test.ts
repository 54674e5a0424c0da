/**
 * When an operator approves several fragments of one scan at once, the first render job to start
 * claims the others waiting for their render and cuts them all from one decode of the scan; each
 * fragment's own job then finds its outputs made and completes without rendering again. Checked
 * with worker processes (one, then two) against one database and library, and with the job
 * handler itself for the interleavings a worker cannot be made to hit on demand: an edit while the
 * group renders, a fragment of the group that fails, a claim left by a worker that died.
 * The reference for the files is renderFragment, the single-fragment render, whose geometry and
 * colour are checked against the truth in fragments-render-upright-with-their-resolution.test.ts.
 */
import type { ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { eq } from "drizzle-orm";
import { killProcesses, spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { approveRemaining, renderedPieces, waitForSplit } from "./helpers/approved-pieces";
import { pieceBed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";
import type { RecipeInput } from "../shared/schemas/recipes";
import { batchItems, fragments, outputs, scans } from "../server/db/schema";
import { recipeVersionFor } from "../server/services/recipes";
import type { Storage } from "../server/storage/storage";
import { renderFragment } from "../worker/pipeline/render";
import { masterKey, renderFragmentJob, type RenderDeps } from "../worker/jobs/render";

/**
 * Pieces on each test bed: one worker, two workers, an edit mid-group, a failing piece, a dead
 * claim, a recipe applied and a claim taken over mid-group.
 */
const PIECES = [6, 8, 5, 5, 2, 4];

let stack: Stack;
let operator: supertest.Agent;
let scanIds: string[] = [];
const children: { name: string; child: ChildProcess; lines: string[]; tmp: string; decodes: Set<string> }[] = [];

/** A worker process with a temporary folder of its own, whose decoded copies of scans are watched. */
function startWorkerProcess(name: string, concurrency: number) {
  const tmp = path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), `${name}-tmp`);
  fs.mkdirSync(tmp, { recursive: true });
  const entry = { name, child: null as unknown as ChildProcess, lines: [] as string[], tmp, decodes: new Set<string>() };
  // Every decode of a whole scan makes a folder of its own here (decodeScan), removed when done.
  const watcher = fs.watch(tmp, (_event, file) => {
    if (file?.startsWith("platen-decoded-")) entry.decodes.add(file);
  });
  entry.child = spawnProcess("worker/main.ts", {
    ...stack.env,
    TMPDIR: tmp,
    PLATEN_DATA_DIR: path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), name),
    PLATEN_PROCESS: name,
    LOG_LEVEL: "info",
    PLATEN_WORKER_CONCURRENCY: String(concurrency),
  });
  entry.child.once("exit", () => watcher.close());
  let rest = "";
  entry.child.stdout!.on("data", (chunk: Buffer) => {
    const parts = (rest + chunk.toString("utf8")).split("\n");
    rest = parts.pop()!;
    entry.lines.push(...parts);
  });
  entry.child.stderr!.on("data", () => {});
  children.push(entry);
  return entry;
}

type LogLine = {
  msg?: string;
  jobId?: string;
  fragmentId?: string;
  scanId?: string;
  fragments?: number;
  queue?: string;
  proc?: string;
  time?: number;
};
function logLines(): LogLine[] {
  return children.flatMap((c) => c.lines.filter((l) => l.startsWith("{")).map((l) => JSON.parse(l) as LogLine));
}

async function fragmentsOf(scanId: string): Promise<Fragment[]> {
  return (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
}

const waitAllDone = (scanId: string, n: number) => renderedPieces(operator, scanId, n, 90_000);

/** The render jobs of these fragments, as pg-boss records them. */
async function renderJobs(ids: string[]) {
  const { rows } = await stack.database.pool.query<{
    id: string;
    state: string;
    retry_count: number;
    started_on: Date | null;
    data: { fragmentId: string; revision: number };
  }>(
    `select id, state, retry_count, started_on, data from pgboss.job where name = 'fragment-render' and data->>'fragmentId' = any($1)
     union all select id, state, retry_count, started_on, data from pgboss.archive where name = 'fragment-render' and data->>'fragmentId' = any($1)`,
    [ids],
  );
  return rows;
}

/** The single-fragment render of a fragment as it is now, with its recipe, in a folder of its own. */
async function referenceRender(fragmentId: string) {
  const [f] = await stack.db.select().from(fragments).where(eq(fragments.id, fragmentId));
  const [scan] = await stack.db.select().from(scans).where(eq(scans.id, f!.scanId));
  const recipe = await recipeVersionFor(stack.db, fragmentId);
  const dir = path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), "reference", `${fragmentId}-${f!.revision}`);
  return renderFragment(
    {
      source: stack.libraryPath(scan!.originalKey),
      geometry: { box: f!.box, angle: f!.angle, rect: f!.rect, outline: f!.outline, shape: f!.shape },
      dpi: { x: scan!.dpiX ?? stack.cfg.defaultDpi, y: scan!.dpiY ?? scan!.dpiX ?? stack.cfg.defaultDpi },
      maxPixels: stack.cfg.maxPixels,
      metadata: { title: f!.title ?? undefined },
      recipe: { recipe: { name: "recipe", steps: recipe.steps as RecipeInput["steps"] }, background: scan!.splitBackground?.rgb },
    },
    { masterPath: path.join(dir, "m.tif"), webPath: path.join(dir, f!.shape === "cutout" ? "w.webp" : "w.jpg") },
  );
}

const pixels = (file: string) => sharp(file).raw({ depth: "ushort" }).toBuffer();

/** Each fragment's master and web copy in the library are what renderFragment makes of it now. */
async function expectOutputsAsSingleRender(list: Fragment[]) {
  for (const f of list) {
    const rows = await stack.db.select().from(outputs).where(eq(outputs.fragmentId, f.id));
    const master = rows.find((o) => o.kind === "master")!;
    const web = rows.find((o) => o.kind === "web")!;
    expect(master, `master of fragment ${f.position}`).toBeTruthy();
    expect(web, `web copy of fragment ${f.position}`).toBeTruthy();
    expect([master.revision, web.revision]).toEqual([f.revision, f.revision]);
    const ref = await referenceRender(f.id);
    expect({ w: master.width, h: master.height, depth: master.bitDepth, dpi: master.dpi }).toEqual({
      w: ref.master.width,
      h: ref.master.height,
      depth: ref.master.bitDepth,
      dpi: ref.master.dpi,
    });
    expect({ w: web.width, h: web.height, format: web.format, dpi: web.dpi }).toEqual({
      w: ref.web.width,
      h: ref.web.height,
      format: ref.web.format,
      dpi: ref.web.dpi,
    });
    const stored = await sharp(stack.libraryPath(master.key)).metadata();
    expect([stored.width, stored.height]).toEqual([ref.master.width, ref.master.height]);
    const storedWeb = await sharp(stack.libraryPath(web.key)).metadata();
    expect([storedWeb.width, storedWeb.height]).toEqual([ref.web.width, ref.web.height]);
    // The same pixels as the single-fragment render of this very geometry and recipe.
    expect((await pixels(stack.libraryPath(master.key))).equals(await pixels(ref.master.path)), `pixels of master ${f.position}`).toBe(
      true,
    );
  }
}

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  operator = await userAgent(stack, "operator");
  startWorkerProcess("worker-a", 1);
  const upload = operator.post("/api/scans/upload");
  for (const [i, n] of PIECES.entries()) upload.attach("files", await pieceBed(i + 1, n), `together-${i + 1}.tif`);
  const res = await upload;
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  scanIds = (res.body.results as { scanId: string }[]).map((r) => r.scanId);
  for (const [i, id] of scanIds.entries()) await waitForSplit(operator, id, PIECES[i]!, 90_000);
}, 150_000);

afterAll(async () => {
  await killProcesses(children.map(({ child }) => child));
  await stack?.stop();
});

describe("fragments approved together, one worker", () => {
  it("are rendered from one decode of the scan, and their own jobs complete without rendering again", async () => {
    const worker = children[0]!;
    const scanId = scanIds[0]!;
    worker.decodes.clear();
    // The worker's split kept the scan decoded (a TIFF, decoded in full for its analysis).
    const [row] = await stack.db.select({ sha256: scans.sha256 }).from(scans).where(eq(scans.id, scanId));
    const copy = path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), worker.name, "decoded", `${row!.sha256}.1.v`);
    expect(fs.existsSync(copy), "the split's decoded copy").toBe(true);
    await approveRemaining(operator, scanId);
    const list = await waitAllDone(scanId, PIECES[0]!);
    const ids = list.map((f) => f.id);

    // (a) every fragment has its master and web copy, as the single-fragment render makes them.
    await expectOutputsAsSingleRender(list);

    // (b) the scan was not decoded again: the group cut every fragment from the split's decoded
    // copy (no decode of its own in the worker's temporary folder), in one group line naming all
    // the fragments; with every fragment rendered, the copy is gone.
    expect(worker.decodes.size).toBe(0);
    expect(fs.existsSync(copy), "the decoded copy after the last render").toBe(false);
    const groups = logLines().filter((l) => l.msg === "render: group done" && l.scanId === scanId);
    expect(groups.map((g) => g.fragments)).toEqual([PIECES[0]]);

    // (c) each fragment's own job completed, once, and the ones that started after the group
    // rendered nothing: the outputs are older than every one of those jobs.
    const jobs = await waitFor(
      "every render job to be recorded complete",
      async () => {
        const rows = await renderJobs(ids);
        return rows.length === ids.length && rows.every((r) => r.state === "completed") ? rows : null;
      },
      30_000,
    );
    expect(jobs.every((j) => j.retry_count === 0)).toBe(true);
    const outs = await stack.db.select().from(outputs).where(eq(outputs.kind, "master"));
    const newest = Math.max(...outs.filter((o) => ids.includes(o.fragmentId)).map((o) => o.updatedAt.getTime()));
    const groupJob = logLines().find((l) => l.msg === "render: group done" && l.scanId === scanId)!.jobId;
    const siblings = jobs.filter((j) => j.id !== groupJob);
    expect(siblings).toHaveLength(ids.length - 1);
    for (const j of siblings)
      expect(j.started_on!.getTime(), `job of ${j.data.fragmentId} started after the group`).toBeGreaterThan(newest);
    const renders = logLines().filter((l) => l.msg === "render: done" && ids.includes(l.fragmentId!));
    expect(renders.map((l) => l.fragmentId).sort()).toEqual([...ids].sort());
    const done = logLines().filter((l) => l.msg === "job done" && l.queue === "fragment-render" && jobs.some((j) => j.id === l.jobId));
    expect(done).toHaveLength(ids.length);
  });
});

describe("fragments approved together, two worker processes", () => {
  it("render every fragment exactly once", async () => {
    const b = startWorkerProcess("worker-b", 2);
    await waitFor(
      "both workers to report in",
      async () => {
        const { rows } = await stack.database.pool.query(
          "select count(*)::int as n from processes where kind = 'worker' and heartbeat_at > now() - interval '15 seconds'",
        );
        return rows[0].n === 2 ? true : null;
      },
      60_000,
    );
    for (const c of children) c.decodes.clear();
    const scanId = scanIds[1]!;
    await approveRemaining(operator, scanId);
    const list = await waitAllDone(scanId, PIECES[1]!);
    const ids = list.map((f) => f.id);
    await expectOutputsAsSingleRender(list);
    const jobs = await waitFor(
      "every render job to be recorded complete",
      async () => {
        const rows = await renderJobs(ids);
        return rows.length === ids.length && rows.every((r) => r.state === "completed") ? rows : null;
      },
      30_000,
    );
    expect(jobs.every((j) => j.retry_count === 0)).toBe(true);
    // No fragment rendered twice, by either process; the groups together hold every fragment once.
    const renders = logLines().filter((l) => l.msg === "render: done" && ids.includes(l.fragmentId!));
    expect(renders.map((l) => l.fragmentId).sort()).toEqual([...ids].sort());
    const groups = logLines().filter((l) => l.msg === "render: group done" && l.scanId === scanId);
    expect(groups.reduce((n, g) => n + g.fragments!, 0)).toBe(ids.length);
    // At most one decoded copy per group, and fewer groups than fragments.
    const decodes = children.reduce((n, c) => n + c.decodes.size, 0);
    expect(decodes).toBeLessThanOrEqual(groups.length);
    expect(groups.length).toBeLessThan(ids.length);
    // Each job was run once, by one process.
    const done = logLines().filter((l) => l.msg === "job done" && l.queue === "fragment-render" && jobs.some((j) => j.id === l.jobId));
    expect(done.map((l) => l.jobId).sort()).toEqual(jobs.map((j) => j.id).sort());
    expect(b.child.exitCode).toBeNull();
  });
});

describe("the render job's group, driven step by step", () => {
  /** Calls into the render job with a library that counts what is stored and can step in. */
  let puts: Map<string, number>;
  let onPut: ((key: string) => Promise<void>) | null = null;
  let deps: RenderDeps;

  beforeAll(async () => {
    // From here the test runs the render jobs itself: the worker processes stop.
    for (const { child } of children) if (child.exitCode === null) child.kill("SIGTERM");
    await Promise.all(children.map(({ child }) => (child.exitCode !== null ? null : new Promise((r) => child.once("exit", r)))));
    puts = new Map();
    const library = stack.library;
    const counting: Storage = Object.create(library, {
      put: {
        value: async (key: string, ...rest: unknown[]) => {
          puts.set(key, (puts.get(key) ?? 0) + 1);
          if (onPut) await onPut(key);
          return (library.put as (...a: unknown[]) => unknown).call(library, key, ...rest);
        },
      },
    });
    deps = {
      database: stack.database,
      boss: stack.boss,
      library: counting,
      offsite: null,
      config: stack.cfg,
      log: (await import("../server/logger")).logger.child({ test: true }),
    };
  }, 60_000);

  /** The queued render job (id and payload) of a fragment at a revision. */
  async function jobOf(fragmentId: string, revision: number) {
    const { rows } = await stack.database.pool.query<{ id: string; data: unknown }>(
      "select id, data from pgboss.job where name = 'fragment-render' and data->>'fragmentId' = $1 and (data->>'revision')::int = $2",
      [fragmentId, revision],
    );
    expect(rows, `render job of ${fragmentId} at revision ${revision}`).toHaveLength(1);
    return rows[0]!;
  }
  const run = async (fragmentId: string, revision: number) => {
    const job = await jobOf(fragmentId, revision);
    return renderFragmentJob(deps, job.data, { jobId: job.id, retryCount: 0, retryLimit: 2 });
  };
  const row = async (id: string) => (await stack.db.select().from(fragments).where(eq(fragments.id, id)))[0]!;

  it("(e) fragments edited while the group renders end with outputs of their newest revision; a sibling's job waits for the group", async () => {
    const scanId = scanIds[2]!;
    await approveRemaining(operator, scanId);
    const list = (await fragmentsOf(scanId)).sort((a, b) => a.position - b.position);
    const [first, second, , fourth, fifth] = list as [Fragment, Fragment, Fragment, Fragment, Fragment];
    let siblingJob: Promise<void> | undefined;
    const turn = async (f: Fragment) => {
      const edited = await operator.patch(`/api/fragments/${f.id}`).send({ angle: f.angle + 3 });
      expect(edited.status, JSON.stringify(edited.body)).toBe(200);
      expect((await row(f.id)).revision).toBe(f.revision + 1);
    };
    // While the group stores its first fragment, still to cut the others: an operator turns the
    // fourth (whose newest render then runs to the end at once) and the fifth (whose newest render
    // waits in the queue), and the second fragment's own job starts.
    onPut = async (key) => {
      if (key !== masterKey(first.id)) return;
      onPut = null;
      await turn(fourth);
      await run(fourth.id, fourth.revision + 1);
      await turn(fifth);
      siblingJob = run(second.id, second.revision);
    };
    await run(first.id, first.revision);
    expect(siblingJob).toBeDefined();
    await siblingJob;
    // The group made nothing of the older revisions it had claimed.
    expect(puts.get(masterKey(fourth.id))).toBe(1);
    expect(puts.get(masterKey(fifth.id)) ?? 0).toBe(0);
    expect((await row(fifth.id)).renderState).toBe("queued");
    await run(fifth.id, fifth.revision + 1);
    // The older revisions' jobs change nothing.
    for (const f of list) await run(f.id, f.revision);

    for (const f of [fourth, fifth]) {
      const now = await row(f.id);
      expect([now.revision, now.renderState]).toEqual([f.revision + 1, "done"]);
      const outs = await stack.db.select().from(outputs).where(eq(outputs.fragmentId, f.id));
      expect(outs.map((o) => o.revision)).toEqual([now.revision, now.revision]);
    }
    // Every fragment stored once: the edited ones only by their newest render, the second only by
    // the group (its own job waited and found it made), the rest by the group.
    for (const f of list) expect(puts.get(masterKey(f.id)), `masters stored for fragment ${f.position}`).toBe(1);
    await expectOutputsAsSingleRender(await waitAllDone(scanId, list.length));
  });

  it("a fragment of the group that fails goes back to its own job, which reports it; the others are rendered", async () => {
    const scanId = scanIds[3]!;
    const list = (await fragmentsOf(scanId)).sort((a, b) => a.position - b.position);
    const bad = list[2]!;
    // A rectangle far off the scan: the render refuses it (bad geometry), whoever renders it.
    const [b] = await stack.db.select().from(fragments).where(eq(fragments.id, bad.id));
    await stack.db
      .update(fragments)
      .set({ box: { ...b!.box, x: b!.box.x + 100_000 } })
      .where(eq(fragments.id, bad.id));
    await approveRemaining(operator, scanId);
    await run(list[0]!.id, list[0]!.revision);
    for (const f of list.filter((f) => f.id !== bad.id)) expect((await row(f.id)).renderState, `fragment ${f.position}`).toBe("done");
    const back = await row(bad.id);
    expect([back.renderState, back.renderJobId, back.renderError]).toEqual(["queued", null, null]);
    expect(await stack.db.select().from(outputs).where(eq(outputs.fragmentId, bad.id))).toEqual([]);
    // Its own job renders it alone and records why it cannot be made.
    await run(bad.id, bad.revision);
    const failed = await row(bad.id);
    expect(failed.renderState).toBe("failed");
    expect(failed.renderError).toMatch(/outside|scan/i);
  });

  it("a claim left by a worker that died is taken over once it is older than the queue's expiry", async () => {
    const scanId = scanIds[4]!;
    await approveRemaining(operator, scanId);
    const list = (await fragmentsOf(scanId)).sort((a, b) => a.position - b.position);
    const dead = randomUUID();
    const old = new Date(Date.now() - (stack.cfg.jobExpireSeconds + 60) * 1000);
    for (const f of list)
      await stack.db
        .update(fragments)
        .set({ renderState: "rendering", renderJobId: dead, renderClaimedAt: old })
        .where(eq(fragments.id, f.id));
    await run(list[1]!.id, list[1]!.revision);
    expect((await row(list[1]!.id)).renderState).toBe("done");
    // The other stays with the dead claim until its own job comes for it.
    expect((await row(list[0]!.id)).renderJobId).toBe(dead);
    await run(list[0]!.id, list[0]!.revision);
    await expectOutputsAsSingleRender(await waitAllDone(scanId, list.length));
  });

  it("a fragment given another recipe, or taken over by another job, while the group renders it is not stored by the group", async () => {
    const scanId = scanIds[5]!;
    await approveRemaining(operator, scanId);
    const list = (await fragmentsOf(scanId)).sort((a, b) => a.position - b.position);
    const [first, second, third, fourth] = list as [Fragment, Fragment, Fragment, Fragment];
    const created = await operator
      .post("/api/recipes")
      .send({ name: "Muted for the group", steps: [{ type: "saturation", saturation: -0.6 }] });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const other = randomUUID();
    // The group cuts the next fragment while it stores this one: when the first is stored, the
    // second is already cut (with the recipe it had); when the third is, the fourth is.
    onPut = async (key) => {
      if (key === masterKey(first.id)) {
        const applied = await operator.post(`/api/recipes/${created.body.recipe.id}/apply`).send({ fragmentIds: [second.id] });
        expect(applied.status, JSON.stringify(applied.body)).toBe(200);
      } else if (key === masterKey(third.id)) {
        onPut = null;
        await stack.db
          .update(fragments)
          .set({ renderState: "rendering", renderJobId: other, renderClaimedAt: new Date() })
          .where(eq(fragments.id, fourth.id));
      }
    };
    await run(first.id, first.revision);
    expect(onPut).toBeNull();
    for (const f of [first, third]) expect(puts.get(masterKey(f.id)), `masters stored for fragment ${f.position}`).toBe(1);
    // Neither the old recipe's second nor the other job's fourth was stored by the group.
    expect(puts.get(masterKey(second.id)) ?? 0).toBe(0);
    expect(puts.get(masterKey(fourth.id)) ?? 0).toBe(0);
    expect((await row(second.id)).renderState).toBe("queued");
    expect([(await row(fourth.id)).renderState, (await row(fourth.id)).renderJobId]).toEqual(["rendering", other]);

    // The second's jobs (its approval's and the batch's) make it with its new recipe.
    const { rows: jobs } = await stack.database.pool.query<{ id: string; data: unknown }>(
      "select id, data from pgboss.job where name = 'fragment-render' and data->>'fragmentId' = $1 order by created_on",
      [second.id],
    );
    expect(jobs).toHaveLength(2);
    for (const j of jobs) await renderFragmentJob(deps, j.data, { jobId: j.id, retryCount: 0, retryLimit: 2 });
    const recipe = await recipeVersionFor(stack.db, second.id);
    expect(recipe.recipeId).toBe(created.body.recipe.id);
    const outs = await stack.db.select().from(outputs).where(eq(outputs.fragmentId, second.id));
    expect(outs.filter((o) => o.kind !== "preset").map((o) => o.recipeVersionId)).toEqual([recipe.id, recipe.id]);
    expect(puts.get(masterKey(second.id))).toBe(1);
    // The other job's claim grows old (it died): the fourth's own job takes it over.
    await stack.db
      .update(fragments)
      .set({ renderClaimedAt: new Date(Date.now() - (stack.cfg.jobExpireSeconds + 60) * 1000) })
      .where(eq(fragments.id, fourth.id));
    await run(fourth.id, fourth.revision);
    await expectOutputsAsSingleRender(await waitAllDone(scanId, list.length));
  });
  it("a batch item whose last attempt ends in an error is settled as failed, not left running", async () => {
    const scanId = scanIds[5]!;
    const [piece] = (await fragmentsOf(scanId)).sort((a, b) => a.position - b.position);
    const created = await operator
      .post("/api/recipes")
      .send({ name: "Warm for the stop", steps: [{ type: "saturation", saturation: 0.2 }] });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    expect((await operator.post(`/api/recipes/${created.body.recipe.id}/apply`).send({ fragmentIds: [piece!.id] })).status).toBe(200);
    const { rows } = await stack.database.pool.query<{ id: string; data: { batchItemId?: string } }>(
      "select id, data from pgboss.job where name = 'fragment-render' and data->>'fragmentId' = $1 and data ? 'batchItemId' order by created_on desc limit 1",
      [piece!.id],
    );
    const job = rows[0]!;
    // Another job holds a live claim on it, and the worker is stopping: the wait is cut short.
    await stack.db
      .update(fragments)
      .set({ renderState: "rendering", renderJobId: randomUUID(), renderClaimedAt: new Date() })
      .where(eq(fragments.id, piece!.id));
    const stop = new AbortController();
    stop.abort();
    // With a queue to go back to, the waiting job hands itself back whole: no error, no attempt
    // spent, the item not failed, and a new job with the same data.
    await renderFragmentJob(deps, job.data, { jobId: job.id, retryCount: 2, retryLimit: 2, signal: stop.signal, stopAsked: stop.signal });
    const [waiting] = await stack.db.select().from(batchItems).where(eq(batchItems.id, job.data.batchItemId!));
    expect(waiting!.state).not.toBe("failed");
    const copies = await stack.database.pool.query(
      "select id from pgboss.job where name = 'fragment-render' and data = $1::jsonb and id <> $2",
      [JSON.stringify(job.data), job.id],
    );
    expect(copies.rows).toHaveLength(1);
    await stack.database.pool.query("delete from pgboss.job where id = $1", [copies.rows[0].id]);
    // Without one (a handler run on its own), the stop ends the last attempt in an error, and
    // its batch item is settled as failed rather than left running.
    await expect(
      renderFragmentJob({ ...deps, boss: undefined }, job.data, { jobId: job.id, retryCount: 2, retryLimit: 2, signal: stop.signal }),
    ).rejects.toThrow(/stopping/);
    const [item] = await stack.db.select().from(batchItems).where(eq(batchItems.id, job.data.batchItemId!));
    expect(item).toMatchObject({ state: "failed" });
    expect(item!.error).toMatch(/stopping/);
  });
});
