/**
 * The set-up many API and browser tests share: an operator uploads a synthetic scan, the worker
 * splits it, the pieces are approved and their masters rendered. Each step checks its request's
 * status and waits with a deadline, so a set-up that goes wrong fails here and names the step; a
 * failed scan or render is thrown inside the poll, which waitFor keeps as the reason it names
 * when the deadline passes.
 *
 * ```ts
 * const { scanId, fragments } = await approvedPieces(operator, { name: "two-prints.tif", svg, pieces: 2 });
 * ```
 */
import sharp from "sharp";
import type supertest from "supertest";
import { expect } from "vitest";
import type { Fragment } from "../../shared/schemas/fragments";
import type { Scan } from "../../shared/schemas/scans";
import { waitFor } from "./stack";

/** A TIFF of an SVG drawing, its resolution recorded as `dpi` pixels per inch (default 300). */
export function svgScan(svg: string, opts: { dpi?: number; compression?: "lzw" } = {}): Promise<Buffer> {
  const { dpi = 300, compression } = opts;
  const tiff = { xres: dpi / 25.4, yres: dpi / 25.4, resolutionUnit: "inch" as const, ...(compression ? { compression } : {}) };
  return sharp(Buffer.from(svg)).tiff(tiff).toBuffer();
}

export interface ScanToUpload {
  /** The file name the upload carries; its ending names the format ("shore-bed.tif"). */
  name: string;
  /** The file's bytes; or give `svg`, drawn by svgScan at `dpi` with `compression`. */
  bytes?: Buffer;
  svg?: string;
  dpi?: number;
  compression?: "lzw";
  /** How many pieces the split must find. */
  pieces: number;
  /** How long the upload's analysis and split may take, in ms (default 45 s). */
  splitTimeoutMs?: number;
}

export interface SplitScan {
  scanId: string;
  /** The scan as the API gave it once split. */
  scan: Scan;
  /** Its fragments, sorted by position. */
  fragments: Fragment[];
}

const byPosition = (list: Fragment[]) => [...list].sort((a, b) => a.position - b.position);

const fragmentsOf = async (agent: supertest.Agent, scanId: string) =>
  (await agent.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

/** Uploads one scan and waits until it is ready with exactly `pieces` fragments proposed or kept. */
export async function uploadScan(agent: supertest.Agent, opts: ScanToUpload): Promise<SplitScan> {
  if (!opts.bytes === !opts.svg) throw new Error(`Expected either bytes or svg for ${opts.name}, not ${opts.bytes ? "both" : "neither"}`);
  const bytes = opts.bytes ?? (await svgScan(opts.svg!, { dpi: opts.dpi, compression: opts.compression }));
  const up = await agent.post("/api/scans/upload").attach("files", bytes, opts.name);
  expect(up.status, JSON.stringify(up.body)).toBe(201);
  const scanId = up.body.results[0].scanId as string;
  const scan = await waitForSplit(agent, scanId, opts.pieces, opts.splitTimeoutMs);
  return { scanId, scan, fragments: byPosition(await fragmentsOf(agent, scanId)) };
}

/** Waits until a scan already uploaded is ready with exactly `pieces` fragments; returns the scan. */
export function waitForSplit(agent: supertest.Agent, scanId: string, pieces: number, timeoutMs = 45_000): Promise<Scan> {
  return waitFor(
    `scan ${scanId} to be split into ${pieces}`,
    async () => {
      const s = (await agent.get(`/api/scans/${scanId}`)).body.scan as Scan;
      if (s.status === "failed") throw new Error(`the scan failed: ${s.error}`);
      return s.status === "ready" && s.fragments.total === pieces ? s : null;
    },
    timeoutMs,
  );
}

/** Approves every fragment of the scan still proposed; returns the scan's fragments by position. */
export async function approveRemaining(agent: supertest.Agent, scanId: string): Promise<Fragment[]> {
  const res = await agent.post(`/api/scans/${scanId}/approve-remaining`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return byPosition(res.body.fragments as Fragment[]);
}

/** Waits until the scan has exactly `pieces` fragments, each approved with its master made; by position. */
export function renderedPieces(agent: supertest.Agent, scanId: string, pieces: number, timeoutMs = 60_000): Promise<Fragment[]> {
  return waitFor(
    `the masters of ${pieces} approved pieces`,
    async () => {
      const list = await fragmentsOf(agent, scanId);
      const failed = list.filter((f) => f.renderState === "failed");
      if (failed.length) throw new Error(`a render failed: ${failed.map((f) => f.renderError).join("; ")}`);
      return list.length === pieces && list.every((f) => f.status === "approved" && f.renderState === "done") ? byPosition(list) : null;
    },
    timeoutMs,
  );
}

/**
 * Uploads a scan, waits for its split, approves every piece and (unless `render: false`) waits
 * for every master; the fragments come back by position.
 */
export async function approvedPieces(
  agent: supertest.Agent,
  opts: ScanToUpload & { render?: boolean; /** ms, default 60 s */ renderTimeoutMs?: number },
): Promise<SplitScan> {
  const split = await uploadScan(agent, opts);
  const approved = await approveRemaining(agent, split.scanId);
  const fragments = opts.render === false ? approved : await renderedPieces(agent, split.scanId, opts.pieces, opts.renderTimeoutMs);
  return { ...split, fragments };
}
