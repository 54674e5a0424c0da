/**
 * A client build never empties what servers on the same checkout are serving: it is written into a
 * folder of its own, and `dist` (a link) is pointed at it only once it is whole. A page loaded from
 * the previous build keeps its scripts for one more build, and old builds are removed.
 *
 * Real vite builds of a small page in a folder of their own (the project's vite, no plugins), so the
 * checkout's own dist is not touched.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { buildClient } from "../scripts/lib/build-client";

const vite = path.resolve("node_modules", ".bin", "vite");
let root: string;

function page(text: string) {
  fs.writeFileSync(
    path.join(root, "index.html"),
    `<!doctype html><html><body><script type="module" src="/main.js"></script></body></html>`,
  );
  fs.writeFileSync(path.join(root, "main.js"), `document.body.append(${JSON.stringify(text)});\n`);
}

/** The script the served index.html names, e.g. "assets/index-abc123.js". */
function servedScript(): string {
  const html = fs.readFileSync(path.join(root, "dist", "index.html"), "utf8");
  const m = /src="\/(assets\/[^"]+\.js)"/.exec(html);
  if (!m) throw new Error(`no script in ${html}`);
  return m[1]!;
}

const build = () => buildClient(root, { vite, stdio: "pipe" });

beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), "platen-build-"));
});
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

describe("a client build", () => {
  it("moves a dist folder of before aside and puts a link in its place", () => {
    fs.mkdirSync(path.join(root, "dist", "assets"), { recursive: true });
    fs.writeFileSync(path.join(root, "dist", "index.html"), "an older build");
    page("first");
    expect(build().ok).toBe(true);
    expect(fs.lstatSync(path.join(root, "dist")).isSymbolicLink()).toBe(true);
    expect(fs.readFileSync(path.join(root, "dist", servedScript()), "utf8")).toContain("first");
    // The older build is kept aside (pruned later like any other), not deleted under a server.
    const aside = fs.readdirSync(path.join(root, ".builds")).filter((n) => n.startsWith("old-"));
    expect(aside).toHaveLength(1);
    expect(fs.readFileSync(path.join(root, ".builds", aside[0]!, "index.html"), "utf8")).toBe("an older build");
  });

  it("leaves the served build whole until the next is complete, and keeps the last one's scripts for one build", () => {
    page("second");
    expect(build().ok).toBe(true);
    const second = servedScript();
    const servedBefore = fs.readlinkSync(path.join(root, "dist"));

    page("third");
    expect(build().ok).toBe(true);
    const third = servedScript();
    expect(third).not.toBe(second);
    expect(fs.readlinkSync(path.join(root, "dist"))).not.toBe(servedBefore);
    // The previous build's folder is untouched, and the new one also holds its script.
    expect(fs.readFileSync(path.join(root, servedBefore, second), "utf8")).toContain("second");
    expect(fs.readFileSync(path.join(root, "dist", second), "utf8")).toContain("second");
    expect(fs.readFileSync(path.join(root, "dist", third), "utf8")).toContain("third");

    page("fourth");
    expect(build().ok).toBe(true);
    // Carried for one build only: the third build's script is here, the second's no longer.
    expect(fs.existsSync(path.join(root, "dist", third))).toBe(true);
    expect(fs.existsSync(path.join(root, "dist", second))).toBe(false);
    // The list of its own assets is not among what a server serves (a dot file).
    expect(fs.readdirSync(path.join(root, "dist")).filter((n) => !n.startsWith("."))).toEqual(["assets", "index.html"]);
  });

  it("keeps the newest three builds and removes the rest", () => {
    page("fifth");
    expect(build().ok).toBe(true);
    const left = fs.readdirSync(path.join(root, ".builds"));
    expect(left).toHaveLength(3);
    expect(left).toContain(path.basename(fs.readlinkSync(path.join(root, "dist"))));
  });

  it("never prunes a build still being written, and never serves older sources over newer", () => {
    const builds = path.join(root, ".builds");
    // A build another process is writing: its folder has no list of its assets yet.
    const writing = path.join(builds, `${Date.now() - 3_600_000}-1-writing`);
    fs.mkdirSync(path.join(writing, "assets"), { recursive: true });
    // A build that started after ours and is served already (its name says when it started).
    const newer = path.join(builds, `${Date.now() + 3_600_000}-2-newer`);
    fs.mkdirSync(path.join(newer, "assets"), { recursive: true });
    fs.writeFileSync(path.join(newer, "index.html"), "the newer build");
    fs.writeFileSync(path.join(newer, ".own-assets.json"), "[]");
    fs.symlinkSync(path.relative(root, newer), path.join(root, "dist.test.link"));
    fs.renameSync(path.join(root, "dist.test.link"), path.join(root, "dist"));

    page("sixth");
    const result = build();
    expect(result.ok).toBe(true);
    expect(result.dir).toBe(newer);
    expect(fs.readFileSync(path.join(root, "dist", "index.html"), "utf8")).toBe("the newer build");
    expect(fs.existsSync(writing)).toBe(true);
    // Once the newer one is no longer served, builds go on as before, and the one being written stays.
    fs.rmSync(newer, { recursive: true });
    for (const text of ["seventh", "eighth", "ninth", "tenth"]) {
      page(text);
      expect(build().ok).toBe(true);
    }
    expect(fs.existsSync(writing)).toBe(true);
    expect(fs.readFileSync(path.join(root, "dist", servedScript()), "utf8")).toContain("tenth");
    expect(fs.readdirSync(builds).filter((n) => n !== path.basename(writing) && !n.startsWith("."))).toHaveLength(3);
    fs.rmSync(writing, { recursive: true });
  });

  it("leaves the served build as it was when a build fails", () => {
    const before = fs.readlinkSync(path.join(root, "dist"));
    const script = servedScript();
    fs.writeFileSync(path.join(root, "main.js"), "this is not ( javascript\n");
    const result = build();
    expect(result.ok).toBe(false);
    expect(fs.existsSync(result.dir)).toBe(false);
    expect(fs.readlinkSync(path.join(root, "dist"))).toBe(before);
    expect(fs.readFileSync(path.join(root, "dist", script), "utf8")).toContain("tenth");
  });
});
