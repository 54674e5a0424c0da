import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import supertest from "supertest";
import { sql } from "drizzle-orm";
import pg from "pg";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";
import type { PresetSummary } from "../shared/schemas/preset-api";

let stack: Stack;
let operator: supertest.Agent;
let viewer: supertest.Agent;
let scanId: string;
let presets: PresetSummary[];

/** Two pieces at 300 DPI (invented test data): 2.0 × 1.5 in and 1.5 × 2.0 in. */
async function scan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1300" height="800">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="600" height="450" fill="#8e44ad"/>
    <rect x="850" y="120" width="300" height="400" fill="#d35400"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

const preset = (name: string) => presets.find((p) => p.name === name)!;

async function finished(batchId: string) {
  return waitFor(
    `batch ${batchId} to finish`,
    async () => {
      const r = (await operator.get(`/api/batches/${batchId}`)).body;
      return r.batch.finishedAt ? r : null;
    },
    90_000,
  );
}

const binary = (req: supertest.Test) =>
  req.buffer(true).parse((r, cb) => {
    const chunks: Buffer[] = [];
    r.on("data", (c: Buffer) => chunks.push(c));
    r.on("end", () => cb(null, Buffer.concat(chunks)));
  });

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator");
  viewer = await userAgent(stack, "viewer");
  ({ scanId } = await approvedPieces(operator, { name: "batch-bed.tif", bytes: await scan(), pieces: 2 }));
  presets = (await viewer.get("/api/presets")).body.presets;
});
afterAll(async () => {
  await stack?.stop();
});

describe("output batches", () => {
  it("ship the built-in presets", () => {
    expect(presets.map((p) => p.name).sort()).toEqual(["print-a4", "print-letter", "square", "web"]);
    expect(preset("print-letter").settings).toMatchObject({ kind: "print" });
  });

  it("estimate, run, report printed size and effective DPI, and warn below 300 DPI", async () => {
    const body = { selection: { filter: { scanId } }, presetIds: [preset("web").id, preset("print-letter").id] };
    const est = await operator.post("/api/batches/estimate").send(body);
    expect(est.body).toMatchObject({ fragments: 2, presets: 2, outputs: 4, reused: 0 });
    expect(est.body.expectedBytes).toBeGreaterThan(0);
    const res = await operator.post("/api/batches").send(body);
    expect(res.status).toBe(201);
    const done = await finished(res.body.batch.id);
    expect(done.batch.counts).toMatchObject({ done: 4, failed: 0, total: 4 });
    const prints = done.items.filter((i: { preset: string }) => i.preset === "print-letter");
    // Letter paper at 300 DPI is 2550 × 3300 px (ANSI Letter 8.5 × 11 in).
    for (const p of prints) expect([p.pixelWidth, p.pixelHeight].sort()).toEqual([2550, 3300]);
    // A 600 px piece fitted into the 8 × 10 in print area prints at 75 DPI or so: a warning, never silent.
    expect(prints.every((p: { effectiveDpi: number; warnings: string[] }) => p.effectiveDpi < 300 && p.warnings.length > 0)).toBe(true);
    for (const p of prints)
      expect(p).toMatchObject({ presetKind: "print", printedIn: { width: expect.any(Number), height: expect.any(Number) } });
    // A web copy records a resolution in its file, but it is no printed one: no printed size, no
    // effective DPI (the worker stores the recorded DPI; the batch shows it only for prints).
    const webs = done.items.filter((i: { preset: string }) => i.preset === "web");
    expect(webs).toHaveLength(2);
    for (const w of webs) expect(w).toMatchObject({ presetKind: "web", printedIn: null, effectiveDpi: null });
    const { rows: stored } = await stack.database.pool.query(
      "select o.report from outputs o join batch_items i on i.output_id = o.id where i.batch_id = $1 and i.id = any($2::uuid[])",
      [res.body.batch.id, webs.map((w: { id: string }) => w.id)],
    );
    expect(stored.every((r: { report: { effectiveDpi?: number } }) => typeof r.report.effectiveDpi === "number")).toBe(true);
    // Not a re-run: it says so.
    expect(done.batch).toMatchObject({ rerunOf: null, replaceOld: false });
    expect(done).toMatchObject({ replaceOutcome: null, oldReplaced: null, laterRuns: [] });
  });

  it("never makes the same output twice", async () => {
    const body = { selection: { filter: { scanId } }, presetIds: [preset("web").id] };
    expect((await operator.post("/api/batches/estimate").send(body)).body.reused).toBe(2);
    const again = await finished((await operator.post("/api/batches").send(body)).body.batch.id);
    expect(again.batch.counts.done).toBe(2);
    const { rows } = await stack.database.pool.query("select count(*)::int as n from outputs where kind = 'preset'");
    expect(rows[0].n).toBe(4);
  });

  it("downloads as a streamed zip with a CSV of every output, and the listing pack carries the rights notice", async () => {
    const list = (await viewer.get("/api/batches")).body.batches;
    const first = list[list.length - 1];
    const zip = await binary(viewer.get(`/api/batches/${first.id}/download?pack=listing`));
    expect(zip.status).toBe(200);
    const buf = zip.body as Buffer;
    expect(buf.subarray(0, 2).toString()).toBe("PK");
    const text = buf.toString("latin1");
    expect(text).toContain("outputs.csv");
    expect(text).toContain("RIGHTS-NOTICE.txt");
    const plain = (await binary(viewer.get(`/api/batches/${first.id}/download`))).body as Buffer;
    expect(plain.toString("latin1")).not.toContain("RIGHTS-NOTICE.txt");
  });

  it("re-runs at a new size and keeps old outputs another batch still lists", async () => {
    // The web-only batch reused the first batch's web copies: re-running it at a new size makes new
    // ones, and the old stay, for the first batch lists them too.
    const webOnly = (await viewer.get("/api/batches")).body.batches[0];
    const edited = await operator
      .patch(`/api/presets/${preset("web").id}`)
      .send({ settings: { ...preset("web").settings, size: { mode: "longEdge", longEdge: 400 } } });
    expect(edited.body.preset.version).toBe(2);
    const rerun = await operator.post(`/api/batches/${webOnly.id}/rerun`).send({ replaceOld: true });
    expect(rerun.status).toBe(201);
    // The re-run names the batch it runs again and what it promised for the old outputs.
    expect(rerun.body.batch).toMatchObject({ rerunOf: { id: webOnly.id, name: webOnly.name }, replaceOld: true });
    const done = await finished(rerun.body.batch.id);
    expect(done.batch.counts.done).toBe(2);
    for (const i of done.items) expect(Math.max(i.pixelWidth, i.pixelHeight)).toBeLessThanOrEqual(400);
    // Every output made, so it replaced what it could; none of the old was only the old batch's.
    expect(done).toMatchObject({ replaceOutcome: "replaced", oldReplaced: 0 });
    const listed = (await viewer.get("/api/batches")).body.batches;
    expect(listed[0]).toMatchObject({ id: rerun.body.batch.id, rerunOf: { id: webOnly.id }, replaceOld: true });
    expect(listed[1]).toMatchObject({ id: webOnly.id, rerunOf: null, replaceOld: false });
    const { rows } = await stack.database.pool.query(
      "select o.key from outputs o join preset_versions v on v.id = o.preset_version_id where v.version = 1 and v.preset_id = $1",
      [preset("web").id],
    );
    expect(rows).toHaveLength(2);
    for (const r of rows) expect(await stack.library.exists(r.key)).toBe(true);
    const old = (await viewer.get(`/api/batches/${webOnly.id}`)).body;
    expect(old.items.every((i: { fileName: string | null }) => i.fileName !== null)).toBe(true);
    // The old batch knows it was run again, and by which batch.
    expect(old.laterRuns).toEqual([
      { id: rerun.body.batch.id, name: `${webOnly.name} (again)`, replaceOld: true, replaceOutcome: "replaced" },
    ]);
  });

  it("re-runs at a new size and replaces the old outputs once the new ones are made", async () => {
    // The batch just made is the only one listing its 400 px copies: a re-run at 300 px replaces them.
    const last = (await viewer.get("/api/batches")).body.batches[0];
    const { rows: oldFiles } = await stack.database.pool.query(
      "select o.key from outputs o join preset_versions v on v.id = o.preset_version_id where v.version = 2 and v.preset_id = $1",
      [preset("web").id],
    );
    expect(oldFiles.length).toBe(2);
    const edited = await operator
      .patch(`/api/presets/${preset("web").id}`)
      .send({ settings: { ...preset("web").settings, size: { mode: "longEdge", longEdge: 300 } } });
    expect(edited.body.preset.version).toBe(3);
    // A trigger of this test's own holds the removal of the old rows a while, and a connection
    // of the test's own watches: the moment the batch reads as finished, the old rows must be gone.
    await stack.db.execute(
      sql.raw("create function test_hold() returns trigger language plpgsql as $$ begin perform pg_sleep(1.5); return null; end $$"),
    );
    await stack.db.execute(sql.raw("create trigger test_hold before delete on outputs for each statement execute function test_hold()"));
    const watch = new pg.Client({ connectionString: stack.cfg.databaseUrl });
    await watch.connect();
    let rerunId = "";
    try {
      const rerun = await operator.post(`/api/batches/${last.id}/rerun`).send({ replaceOld: true });
      expect(rerun.status).toBe(201);
      rerunId = rerun.body.batch.id;
      const seen = await waitFor(
        "the re-run to read as finished",
        async () => {
          const { rows } = await watch.query(
            `select b.finished_at is not null as finished,
                  (select count(*)::int from outputs o join preset_versions v on v.id = o.preset_version_id
                    where v.version = 2 and v.preset_id = $2) as old
             from batches b where b.id = $1`,
            [rerunId, preset("web").id],
          );
          return rows[0].finished ? rows[0] : null;
        },
        90_000,
        20,
      );
      expect(seen.old).toBe(0);
    } finally {
      await watch.end();
      await stack.db.execute(sql.raw("drop trigger test_hold on outputs"));
      await stack.db.execute(sql.raw("drop function test_hold()"));
    }
    const done = await finished(rerunId);
    expect(done.batch.counts.done).toBe(2);
    for (const i of done.items) expect(Math.max(i.pixelWidth, i.pixelHeight)).toBeLessThanOrEqual(300);
    // This time both old outputs were the old batch's alone: the re-run says it replaced them.
    expect(done).toMatchObject({ replaceOutcome: "replaced", oldReplaced: 2 });
    expect(done.batch.rerunOf).toEqual({ id: last.id, name: last.name });
    // The replaced batch's items read as replaced (no file); the first batch's web copies stay.
    const replaced = (await viewer.get(`/api/batches/${last.id}`)).body;
    expect(replaced.items.every((i: { fileName: string | null }) => i.fileName === null)).toBe(true);
    const { rows } = await stack.database.pool.query(
      "select count(*)::int as n from outputs o join preset_versions v on v.id = o.preset_version_id where v.version = 1 and v.preset_id = $1",
      [preset("web").id],
    );
    expect(rows[0].n).toBe(2);
    // …and their files are gone from the library too. The worker removes them right after the
    // batch's last item commits, so the batch can read as done a moment before the files go.
    await waitFor(
      "the retired files to be removed",
      async () => {
        for (const f of oldFiles) if (await stack.library.exists(f.key)) return null;
        return true;
      },
      5_000,
    );
  });

  it("lists the same files in the zip as in its CSV, one row per output", async () => {
    const { execFileSync } = await import("node:child_process");
    const list = (await viewer.get("/api/batches")).body.batches;
    const first = list[list.length - 1];
    const detail = (await viewer.get(`/api/batches/${first.id}`)).body;
    const zipPath = path.join(stack.inbox, "batch.zip");
    await fs.writeFile(zipPath, (await binary(viewer.get(`/api/batches/${first.id}/download`))).body as Buffer);
    // Python's zipfile module as an independent reader of the archive.
    const names = JSON.parse(
      execFileSync("python3", ["-c", "import zipfile,sys,json; print(json.dumps(zipfile.ZipFile(sys.argv[1]).namelist()))", zipPath], {
        encoding: "utf8",
      }),
    ) as string[];
    const csv = execFileSync(
      "python3",
      ["-c", "import zipfile,sys; sys.stdout.write(zipfile.ZipFile(sys.argv[1]).read('outputs.csv').decode())", zipPath],
      { encoding: "utf8" },
    );
    const rows = csv.trim().split("\n");
    // Python's csv module as an independent reader of the cells (a warning may hold a comma).
    const cells = JSON.parse(
      execFileSync(
        "python3",
        [
          "-c",
          "import zipfile,sys,csv,io,json; print(json.dumps(list(csv.DictReader(io.StringIO(zipfile.ZipFile(sys.argv[1]).read('outputs.csv').decode())))))",
          zipPath,
        ],
        { encoding: "utf8" },
      ),
    ) as Record<string, string>[];
    // Printed size and effective DPI are a print's: filled for the print files, empty for the web copies.
    const printedCols = ["printed_width_in", "printed_height_in", "printed_width_cm", "printed_height_cm", "effective_dpi"];
    expect(cells.filter((c) => c.preset === "print-letter")).toHaveLength(2);
    expect(cells.filter((c) => c.preset === "web")).toHaveLength(2);
    for (const c of cells) for (const col of printedCols) expect(c[col] === "", `${c.preset} ${col}`).toBe(c.preset === "web");
    // 1 in = 2.54 cm exactly (international yard and pound agreement, 1959).
    for (const c of cells.filter((c) => c.preset === "print-letter"))
      expect(Number(c.printed_width_cm)).toBeCloseTo(Number(c.printed_width_in) * 2.54, 1);
    expect(rows[0]).toBe(
      "title,scan,fragment,preset,file,width_px,height_px,printed_width_in,printed_height_in,printed_width_cm,printed_height_cm,effective_dpi,warnings,sha256",
    );
    const files = rows.slice(1).map((r) => r.split(",")[4]);
    // The zip's entries and the CSV's rows come in the batch page's order (scan, position, preset):
    // the batch ran its presets as web, print-letter, and the page lists print-letter first.
    const pageOrder = detail.items
      .filter((i: { fileName: string | null }) => i.fileName !== null)
      .map((i: { fileName: string }) => i.fileName);
    expect(detail.items.map((i: { position: number; preset: string }) => `${i.position}:${i.preset}`)).toEqual([
      "1:print-letter",
      "1:web",
      "2:print-letter",
      "2:web",
    ]);
    expect(names.filter((n) => n !== "outputs.csv")).toEqual(pageOrder);
    expect(files).toEqual(pageOrder);
    // Re-runs of later batches left the first batch's outputs alone: all four are in its zip.
    expect(rows.length - 1).toBe(detail.items.filter((i: { fileName: string | null }) => i.fileName !== null).length);
    expect(rows.length - 1).toBe(4);
  });

  it("a failure in one output does not stop the rest, and says why", async () => {
    const list = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
    const { rows } = await stack.database.pool.query("select key from outputs where kind = 'master' and fragment_id = $1", [list[0]!.id]);
    const master = stack.libraryPath(rows[0].key);
    const saved = await fs.readFile(master);
    await fs.rm(master);
    try {
      const res = await operator.post("/api/batches").send({ selection: { filter: { scanId } }, presetIds: [preset("print-a4").id] });
      const done = await finished(res.body.batch.id);
      expect(done.batch.counts).toMatchObject({ done: 1, failed: 1, total: 2 });
      const failed = done.items.find((i: { state: string }) => i.state === "failed");
      expect(failed.fragmentId).toBe(list[0]!.id);
      expect(failed.error).toMatch(/Cannot read|does not exist|no such file/i);
      // Put the master back and retry: only the failed item runs again.
      await fs.writeFile(master, saved);
      await operator.post(`/api/batches/${res.body.batch.id}/retry`);
      const again = await finished(res.body.batch.id);
      expect(again.batch.counts).toMatchObject({ done: 2, failed: 0 });
    } finally {
      await fs.writeFile(master, saved).catch(() => {});
    }
  });

  it("names every file in the zip safely, whatever a preset or a fragment is called", async () => {
    const { execFileSync } = await import("node:child_process");
    // A preset name that climbs out of the folder the zip is unpacked into, and a fragment title
    // a spreadsheet would run as a formula.
    const made = await operator.post("/api/presets").send({
      name: "/../../../escaped",
      settings: { ...preset("web").settings, name: "/../../../escaped", size: { mode: "longEdge", longEdge: 300 } },
    });
    expect(made.status).toBe(201);
    const [first] = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
    const titled = await operator.patch(`/api/fragments/${first!.id}`).send({ title: '=HYPERLINK("http://x.example","open")' });
    expect(titled.status).toBe(200);
    const run = await operator.post("/api/batches").send({ selection: { filter: { scanId } }, presetIds: [made.body.preset.id] });
    expect(run.status).toBe(201);
    const done = await finished(run.body.batch.id);
    expect(done.batch.counts).toMatchObject({ done: 2, failed: 0 });
    const zipPath = path.join(stack.inbox, "named.zip");
    await fs.writeFile(zipPath, (await binary(viewer.get(`/api/batches/${run.body.batch.id}/download`))).body as Buffer);
    // Python's zipfile module as an independent reader of the archive.
    const names = JSON.parse(
      execFileSync("python3", ["-c", "import zipfile,sys,json; print(json.dumps(zipfile.ZipFile(sys.argv[1]).namelist()))", zipPath], {
        encoding: "utf8",
      }),
    ) as string[];
    expect(names).toHaveLength(3);
    for (const n of names) {
      expect(n, n).not.toMatch(/^[/\\]/);
      expect(n.split(/[/\\]/), n).not.toContain("..");
      expect(n, n).not.toContain("/");
    }
    expect(new Set(names).size).toBe(names.length);
    // …and Python's csv module as an independent reader of the CSV in it.
    const rows = (
      JSON.parse(
        execFileSync(
          "python3",
          [
            "-c",
            "import zipfile,sys,csv,io,json; print(json.dumps(list(csv.reader(io.StringIO(zipfile.ZipFile(sys.argv[1]).read('outputs.csv').decode())))))",
            zipPath,
          ],
          { encoding: "utf8" },
        ),
      ) as string[][]
    ).slice(1);
    // OWASP's advice on CSV injection: a cell that starts with = + - @ (or a tab or a return) is
    // prefixed with a single quote, so a spreadsheet reads it as text.
    expect(rows.map((r) => r[0])).toContain(`'=HYPERLINK("http://x.example","open")`);
    expect(rows.map((r) => r[4]).sort()).toEqual(names.filter((n) => n !== "outputs.csv").sort());
    await operator.patch(`/api/fragments/${first!.id}`).send({ title: null });
  });

  it("previews what a preset makes of a fragment: the mock-up composed, the print with its report", async () => {
    const [first] = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
    const mock = await operator
      .post("/api/presets/preview")
      .send({ fragmentId: first!.id, settings: { kind: "mockup", name: "wall", width: 1200, height: 900 }, size: 400 });
    expect(mock.status).toBe(200);
    expect(mock.body.report).toMatchObject({ pixelWidth: 1200, pixelHeight: 900 });
    const img = await sharp(Buffer.from(mock.body.image.split(",")[1], "base64")).metadata();
    expect([img.width, img.height]).toEqual([400, 300]);
    const print = await operator
      .post("/api/presets/preview")
      .send({ fragmentId: first!.id, settings: preset("print-letter").settings, size: 300 });
    // ANSI Letter at 300 DPI: 2550 × 3300 px; a 2 in piece fitted to 8 × 10 in prints far under 300 DPI.
    expect([print.body.report.pixelWidth, print.body.report.pixelHeight].sort()).toEqual([2550, 3300]);
    expect(print.body.report.warnings.length).toBeGreaterThan(0);
    const bad = await operator
      .post("/api/presets/preview")
      .send({ fragmentId: first!.id, settings: { kind: "mockup", name: "x", width: -5 } });
    expect(bad.status).toBe(400);
  });

  it("closes a batch whose close failed once, when the job is tried again", async () => {
    // A trigger of this test's own refuses the first close (a dropped connection at that moment
    // would do the same); the sequence keeps count across the rolled-back attempt.
    await stack.db.execute(sql.raw("create sequence test_close_seq"));
    await stack.db.execute(
      sql.raw(`create function test_fail_close() returns trigger language plpgsql as $$ begin
        if new.finished_at is not null and old.finished_at is null and nextval('test_close_seq') = 1 then raise exception 'close refused (test)'; end if;
        return new; end $$`),
    );
    await stack.db.execute(
      sql.raw("create trigger test_fail_close before update on batches for each row execute function test_fail_close()"),
    );
    try {
      // One item, so no other item's close can stand in for the failed one: only the retry can.
      const [one] = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
      const res = await operator.post("/api/batches").send({ selection: { fragmentIds: [one!.id] }, presetIds: [preset("square").id] });
      expect(res.status).toBe(201);
      const done = await finished(res.body.batch.id);
      expect(done.batch.counts).toMatchObject({ done: 1, failed: 0 });
      const { rows } = await stack.database.pool.query("select last_value::int as n from test_close_seq");
      expect(rows[0].n).toBeGreaterThanOrEqual(2);
    } finally {
      await stack.db.execute(sql.raw("drop trigger test_fail_close on batches"));
      await stack.db.execute(sql.raw("drop function test_fail_close()"));
      await stack.db.execute(sql.raw("drop sequence test_close_seq"));
    }
  });

  it("closes, as a worker starts, a batch left open with nothing left to do", async () => {
    // As a close that failed on a job's last attempt leaves it: every item settled, no finish time.
    const last = (await viewer.get("/api/batches")).body.batches[0];
    await stack.database.pool.query("update batches set finished_at = null where id = $1", [last.id]);
    const { closeStaleBatches } = await import("../server/services/batches");
    expect(await closeStaleBatches(stack.db)).toBe(1);
    expect((await viewer.get(`/api/batches/${last.id}`)).body.batch.finishedAt).not.toBeNull();
    expect(await closeStaleBatches(stack.db)).toBe(0);
  });

  it("cancelling stops what has not started", async () => {
    // Hold the worker back so nothing starts before the cancel: no worker runs the new jobs.
    await stack.worker!.stop(2000);
    const res = await operator
      .post("/api/batches")
      .send({ selection: { filter: { scanId } }, presetIds: [preset("square").id, preset("print-a4").id] });
    const cancelled = await operator.post(`/api/batches/${res.body.batch.id}/cancel`);
    expect(cancelled.body.batch.counts).toMatchObject({ cancelled: 4, queued: 0, total: 4 });
    expect(cancelled.body.batch.finishedAt).not.toBeNull();
    const retry = await operator.post(`/api/batches/${res.body.batch.id}/retry`);
    expect(retry.status).toBe(409);
    expect(retry.body.error.message).toBe("Nothing in this batch has failed.");
  });

  it("refuses a selection with nothing approved, and viewers cannot run batches", async () => {
    const none = await operator.post("/api/batches").send({ selection: { filter: { tag: "no-such-tag" } }, presetIds: [preset("web").id] });
    expect(none.status).toBe(400);
    expect(none.body.error.message).toBe("No approved fragment matches this selection.");
    const denied = await viewer.post("/api/batches").send({ selection: { filter: { scanId } }, presetIds: [preset("web").id] });
    expect(denied.status).toBe(403);
  });

  it("shows a viewer only the pieces still approved: one rejected after its batch leaves the viewer's list and zip", async () => {
    const { execFileSync } = await import("node:child_process");
    const list = (await viewer.get("/api/batches")).body.batches;
    const first = list[list.length - 1];
    const before = (await operator.get(`/api/batches/${first.id}`)).body;
    expect(before.items).toHaveLength(4);
    const [gone] = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
    expect((await operator.patch(`/api/fragments/${gone!.id}`).send({ status: "rejected" })).status).toBe(200);
    try {
      // Operators still see the whole batch, as it was made.
      expect((await operator.get(`/api/batches/${first.id}`)).body.items).toHaveLength(4);
      const seen = (await viewer.get(`/api/batches/${first.id}`)).body;
      expect(seen.items).toHaveLength(2);
      // …and the viewer's counts are of those rows: 2 of 2 made, not 4 of 4 over 2 rows, on the
      // batch page and in the batches list alike. The operator's stay as made.
      expect(seen.batch.counts).toMatchObject({ done: 2, total: 2 });
      const inList = (await viewer.get("/api/batches")).body.batches.find((b: { id: string }) => b.id === first.id);
      expect(inList.counts).toMatchObject({ done: 2, total: 2 });
      // The queue screen's recent batches likewise.
      const onQueue = (await viewer.get("/api/queue")).body.batches.find((b: { id: string }) => b.id === first.id);
      expect(onQueue.counts).toMatchObject({ done: 2, total: 2 });
      expect((await operator.get("/api/queue")).body.batches.find((b: { id: string }) => b.id === first.id).counts).toMatchObject({
        done: 4,
        total: 4,
      });
      expect((await operator.get(`/api/batches/${first.id}`)).body.batch.counts).toMatchObject({ done: 4, total: 4 });
      expect((await operator.get("/api/batches")).body.batches.find((b: { id: string }) => b.id === first.id).counts).toMatchObject({
        done: 4,
        total: 4,
      });
      expect(seen.items.map((i: { fragmentId: string }) => i.fragmentId)).not.toContain(gone!.id);
      // The rejected piece's own files are closed to a viewer too.
      expect((await viewer.get(`/api/fragments/${gone!.id}/outputs/master`)).status).toBe(404);
      expect((await viewer.get(`/api/fragments/${gone!.id}/thumb`)).status).toBe(404);
      // The viewer's zip holds the approved piece's two files and their CSV rows, nothing of the other.
      const zipPath = path.join(stack.inbox, "viewer.zip");
      await fs.writeFile(zipPath, (await binary(viewer.get(`/api/batches/${first.id}/download`))).body as Buffer);
      // Python's zipfile module as an independent reader of the archive.
      const names = JSON.parse(
        execFileSync("python3", ["-c", "import zipfile,sys,json; print(json.dumps(zipfile.ZipFile(sys.argv[1]).namelist()))", zipPath], {
          encoding: "utf8",
        }),
      ) as string[];
      const csv = execFileSync(
        "python3",
        ["-c", "import zipfile,sys; sys.stdout.write(zipfile.ZipFile(sys.argv[1]).read('outputs.csv').decode())", zipPath],
        { encoding: "utf8" },
      );
      const rows = csv.trim().split("\n").slice(1);
      expect(names.filter((n) => n !== "outputs.csv").sort()).toEqual(seen.items.map((i: { fileName: string }) => i.fileName).sort());
      expect(rows).toHaveLength(2);
      expect(rows.every((r) => Number(r.split(",")[2]) !== gone!.position)).toBe(true);
      // The operator's zip still holds all four.
      const all = path.join(stack.inbox, "operator.zip");
      await fs.writeFile(all, (await binary(operator.get(`/api/batches/${first.id}/download`))).body as Buffer);
      const allNames = JSON.parse(
        execFileSync("python3", ["-c", "import zipfile,sys,json; print(json.dumps(zipfile.ZipFile(sys.argv[1]).namelist()))", all], {
          encoding: "utf8",
        }),
      ) as string[];
      expect(allNames.filter((n) => n !== "outputs.csv")).toHaveLength(4);
    } finally {
      await operator.patch(`/api/fragments/${gone!.id}`).send({ status: "approved" });
    }
  });
});
