/**
 * A piece's title is written into the copies that carry it (a web copy keeping its title, a print
 * TIFF and its caption, a print PDF, a master copy) but a title edit makes no new revision of the
 * piece. So the title a copy carries is part of its dedupe key: after a new title, a batch run
 * again makes those copies anew with the new title, and reuses the ones that carry none (a mock-up,
 * a web copy that leaves the title out). Those keep the key they had before the title was part of
 * it, so nothing already made is invalidated needlessly.
 *
 * The real stack (PostgreSQL, pg-boss, worker, library folder); the copies read back with exifr
 * (npm) for TIFF/EXIF fields and pdf-lib's parser for the PDF's Info dictionary (ISO 32000-1
 * §14.3.3). The scan and names are invented.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import exifr from "exifr";
import { PDFDocument } from "pdf-lib";
import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let fragment: Fragment;
const presetIds = new Map<string, string>();

const CREATOR = "Ines Okafor";
const COPYRIGHT = "© 2026 Ines Okafor";

/** One piece at 300 DPI: 2 × 1.5 in. */
const SCAN = `<svg xmlns="http://www.w3.org/2000/svg" width="900" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="150" y="120" width="600" height="450" fill="#2e7d6b"/>
  </svg>`;

const A6 = { paper: { size: "a6" }, layout: { mode: "margins", top: 8, right: 8, bottom: 14, left: 8 }, printDpi: 150, minDpi: 100 };
/** The presets of the run, by name: each kind and each way of carrying (or not) the title. */
const PRESETS: Record<string, Record<string, unknown>> = {
  "shop-titled": { kind: "web", size: { mode: "longEdge", longEdge: 400 }, format: "jpeg" },
  "shop-untitled": {
    kind: "web",
    size: { mode: "longEdge", longEdge: 400 },
    format: "jpeg",
    keep: { title: false, creator: true, copyright: true, resolution: true },
  },
  wall: { kind: "mockup", width: 400, height: 400 },
  "card-captioned": { kind: "print", ...A6, caption: true, output: "tiff" },
  "card-pdf": { kind: "print", ...A6, output: "pdf" },
  archive: { kind: "master" },
};

interface Made {
  preset: string;
  outputId: string;
  key: string;
  dedupeKey: string;
}

async function run(): Promise<Made[]> {
  const res = await operator.post("/api/batches").send({ selection: { fragmentIds: [fragment.id] }, presetIds: [...presetIds.values()] });
  expect(res.status).toBe(201);
  const id = res.body.batch.id as string;
  const done = await waitFor(
    "the batch",
    async () => {
      const r = (await operator.get(`/api/batches/${id}`)).body;
      return r.batch.finishedAt ? r : null;
    },
    90_000,
  );
  expect(done.batch.counts).toMatchObject({ done: 6, failed: 0 });
  const { rows } = await stack.database.pool.query<{ preset: string; output_id: string; key: string; dedupe_key: string }>(
    `select p.name as preset, o.id as output_id, o.key, o.dedupe_key from batch_items i
       join outputs o on o.id = i.output_id join preset_versions v on v.id = i.preset_version_id join presets p on p.id = v.preset_id
      where i.batch_id = $1 order by p.name`,
    [id],
  );
  return rows.map((r) => ({ preset: r.preset, outputId: r.output_id, key: r.key, dedupeKey: r.dedupe_key }));
}

const byPreset = (made: Made[], name: string) => made.find((m) => m.preset === name)!;

async function estimateReused(): Promise<number> {
  const res = await operator
    .post("/api/batches/estimate")
    .send({ selection: { fragmentIds: [fragment.id] }, presetIds: [...presetIds.values()] });
  expect(res.status).toBe(200);
  expect(res.body.outputs).toBe(6);
  return res.body.reused as number;
}

/** The title each copy carries, read from its file. */
async function titlesIn(made: Made[]): Promise<Record<string, string | undefined>> {
  const out: Record<string, string | undefined> = {};
  for (const m of made) {
    const file = stack.libraryPath(m.key);
    if (m.key.endsWith(".pdf")) {
      out[m.preset] = (await PDFDocument.load(await fs.readFile(file), { updateMetadata: false })).getTitle();
    } else {
      const tags = await exifr.parse(file, { tiff: true, ifd0: true, xmp: false, pick: ["ImageDescription"] } as never);
      out[m.preset] = tags?.ImageDescription;
    }
  }
  return out;
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin");
  operator = await userAgent(stack, "operator");
  expect((await admin.patch("/api/studio/settings").send({ creator: CREATOR, copyright: COPYRIGHT })).status).toBe(200);
  fragment = (await approvedPieces(operator, { name: "heron-bed.tif", svg: SCAN, compression: "lzw", pieces: 1 })).fragments[0]!;
  for (const [name, settings] of Object.entries(PRESETS)) {
    const res = await operator.post("/api/presets").send({ name, settings: { ...settings, name } });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    presetIds.set(name, (res.body.preset?.id ?? res.body.id) as string);
  }
  expect(presetIds.size).toBe(6);
});
afterAll(async () => {
  await stack?.stop();
});

describe("a piece's new title", () => {
  let first: Made[];

  it("is written into the copies that carry a title", async () => {
    first = await run();
    expect(await titlesIn(first)).toEqual({
      archive: "heron-bed.tif #1",
      "card-captioned": "heron-bed.tif #1",
      "card-pdf": "heron-bed.tif #1",
      "shop-titled": "heron-bed.tif #1",
      "shop-untitled": undefined,
      // A mock-up carries no metadata of any kind.
      wall: undefined,
    });
    expect(await estimateReused()).toBe(6);
  });

  it("leaves the keys of copies that carry no title as they were before titles were part of them", async () => {
    // The key as it was made before: fragment, revision, recipe version, preset version, and the
    // creator and copyright (SHA-256 of the JSON pair, 16 hex digits) when the copy carries them.
    const { rows } = await stack.database.pool.query<{ preset: string; base: string }>(
      `select p.name as preset, o.fragment_id || ':r' || o.revision || ':' || coalesce(o.recipe_version_id::text, 'none') || ':' || o.preset_version_id as base
         from outputs o join preset_versions v on v.id = o.preset_version_id join presets p on p.id = v.preset_id where o.id = any($1::uuid[])`,
      [first.map((m) => m.outputId)],
    );
    const base = (name: string) => rows.find((r) => r.preset === name)!.base;
    const rights = crypto
      .createHash("sha256")
      .update(JSON.stringify([CREATOR, COPYRIGHT]))
      .digest("hex")
      .slice(0, 16);
    expect(byPreset(first, "wall").dedupeKey).toBe(base("wall"));
    expect(byPreset(first, "shop-untitled").dedupeKey).toBe(`${base("shop-untitled")}:c${rights}`);
    expect(byPreset(first, "shop-titled").dedupeKey).toMatch(new RegExp(`^${base("shop-titled")}:c${rights}:t[0-9a-f]{16}$`));
  });

  it("remakes the copies that carry it, with the new title, and reuses the rest", async () => {
    const res = await operator.patch(`/api/fragments/${fragment.id}`).send({ title: "Heron at dusk" });
    expect(res.status).toBe(200);
    // A title edit is no new revision: the master is not rendered again.
    expect(res.body.revision ?? res.body.fragment?.revision).toBe(fragment.revision);
    expect(await estimateReused()).toBe(2);
    const second = await run();
    for (const name of ["wall", "shop-untitled"]) expect(byPreset(second, name).outputId).toBe(byPreset(first, name).outputId);
    for (const name of ["archive", "card-captioned", "card-pdf", "shop-titled"]) {
      expect(byPreset(second, name).outputId).not.toBe(byPreset(first, name).outputId);
    }
    expect(await titlesIn(second)).toEqual({
      archive: "Heron at dusk",
      "card-captioned": "Heron at dusk",
      "card-pdf": "Heron at dusk",
      "shop-titled": "Heron at dusk",
      "shop-untitled": undefined,
      wall: undefined,
    });
    // The print's caption is drawn anew too: the page differs from the first one's.
    const pixels = async (m: Made) => (await sharp(stack.libraryPath(m.key)).raw().toBuffer()).toString("base64");
    expect(await pixels(byPreset(second, "card-captioned"))).not.toBe(await pixels(byPreset(first, "card-captioned")));
    // The same title again reuses all six.
    expect(await estimateReused()).toBe(6);
  });
});
