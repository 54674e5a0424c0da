import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

/**
 * Builds the client into a folder of its own under `.builds/`, then points `dist` at it.
 *
 * Several servers can run from one checkout (a started product, test files, a second `npm test`),
 * and all of them serve `dist/`. A build written into `dist/` itself empties it first, so every
 * page asked for meanwhile failed. Here the new build is complete before anyone sees it: `dist` is
 * a link, and a new link is renamed over it (rename(2) replaces a name in one step).
 *
 * A page loaded from the previous build still asks for its own hashed scripts as it goes; the new
 * build's folder gets links to the previous build's assets it lacks, so such a page goes on
 * working. The newest `KEEP` builds are kept and older ones removed.
 */
const KEEP = 3;
/** The list of a build's own assets (not those carried over from the build before it); not served. */
const OWN = ".own-assets.json";

export function buildClient(
  root: string,
  opts: { vite?: string; stdio?: "inherit" | "pipe" } = {},
): { ok: boolean; dir: string } {
  const builds = path.join(root, ".builds");
  fs.mkdirSync(builds, { recursive: true });
  const id = `${Date.now()}-${process.pid}-${Math.random().toString(36).slice(2, 8)}`;
  const dir = path.join(builds, id);
  const vite = opts.vite ?? path.join(root, "node_modules", ".bin", "vite");
  const run = spawnSync(vite, ["build", "--logLevel", "warn", "--outDir", dir, "--emptyOutDir"], {
    cwd: root,
    stdio: opts.stdio ?? "inherit",
  });
  if (run.status !== 0) {
    fs.rmSync(dir, { recursive: true, force: true });
    return { ok: false, dir };
  }
  const dist = path.join(root, "dist");
  fs.writeFileSync(path.join(dir, OWN), JSON.stringify(listAssets(dir)));
  carryAssetsOver(dist, dir);
  pointAt(dist, path.relative(root, dir));
  prune(builds, dir);
  return { ok: true, dir };
}

function listAssets(dir: string): string[] {
  try {
    return fs.readdirSync(path.join(dir, "assets"));
  } catch {
    return [];
  }
}

/**
 * Links the previous build's own hashed assets the new build lacks into it (hard links: no
 * copies). Only its own: what it carried from the one before is not carried again, so a page
 * outlives one rebuild, and builds do not grow.
 */
function carryAssetsOver(previous: string, next: string) {
  const from = path.join(previous, "assets");
  const to = path.join(next, "assets");
  let names: string[];
  try {
    names = JSON.parse(fs.readFileSync(path.join(previous, OWN), "utf8")) as string[];
  } catch {
    names = listAssets(previous); // A build from before the list (or none at all).
  }
  fs.mkdirSync(to, { recursive: true });
  for (const name of names) {
    const target = path.join(to, name);
    if (path.basename(name) !== name || fs.existsSync(target)) continue;
    try {
      fs.linkSync(path.join(from, name), target);
    } catch {
      // Gone meanwhile, or on another file system: a copy, or nothing.
      try {
        fs.copyFileSync(path.join(from, name), target);
      } catch {
        /* the page that wanted it reloads */
      }
    }
  }
}

/** Makes `dist` a link to `relTarget` in one step (a real `dist/` folder from before is moved aside). */
function pointAt(dist: string, relTarget: string) {
  const st = fs.lstatSync(dist, { throwIfNoEntry: false });
  if (st && !st.isSymbolicLink()) {
    // A build made before builds had folders of their own: its place is taken once, here.
    const aside = path.join(path.dirname(dist), ".builds", `old-${Date.now()}-${process.pid}`);
    fs.renameSync(dist, aside);
  }
  const temp = `${dist}.${process.pid}.link`;
  fs.rmSync(temp, { force: true });
  fs.symlinkSync(relTarget, temp, "dir");
  fs.renameSync(temp, dist);
}

/** Removes all but the newest builds; never the one `dist` points at now. */
function prune(builds: string, current: string) {
  const dist = path.join(path.dirname(builds), "dist");
  let live = current;
  try {
    live = path.resolve(path.dirname(dist), fs.readlinkSync(dist));
  } catch {
    // dist is not a link (another process is between steps): keep what we just built.
  }
  const entries = fs
    .readdirSync(builds, { withFileTypes: true })
    .filter((e) => e.isDirectory())
    .map((e) => {
      const full = path.join(builds, e.name);
      return { full, mtime: fs.statSync(full).mtimeMs };
    })
    .sort((a, b) => b.mtime - a.mtime);
  for (const [i, e] of entries.entries()) {
    if (i < KEEP || e.full === live || e.full === current) continue;
    fs.rmSync(e.full, { recursive: true, force: true });
  }
}
