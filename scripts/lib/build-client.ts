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
 * working. The newest `KEEP` finished builds are kept and older ones removed.
 *
 * Builds may run at once from several processes: vite runs unlocked, each into its own folder;
 * carrying assets over, pointing `dist` and pruning happen under a lock file. A build that started
 * before the one `dist` points at (older sources) does not replace it. Only finished builds (with
 * their list of assets) are ever pruned, so a build still being written is never removed.
 */
const KEEP = 3;
/** The list of a build's own assets (not those carried over from the build before it); not served. */
const OWN = ".own-assets.json";
/** A lock left by a process that died while holding it is taken over after this long. */
const STALE_LOCK_MS = 60_000;

export function buildClient(root: string, opts: { vite?: string; stdio?: "inherit" | "pipe" } = {}): { ok: boolean; dir: string } {
  const builds = path.join(root, ".builds");
  fs.mkdirSync(builds, { recursive: true });
  // Named by when it started, so builds compare by the age of their sources (`startedAt`).
  const id = `${Date.now()}-${process.pid}-${Math.random().toString(36).slice(2, 8)}`;
  const dir = path.join(builds, id);
  const vite = opts.vite ?? path.join(root, "node_modules", ".bin", "vite");
  const run = spawnSync(vite, ["build", "--logLevel", "warn", "--outDir", dir, "--emptyOutDir"], {
    cwd: root,
    stdio: opts.stdio ?? "inherit",
  });
  if (run.status !== 0 || !fs.existsSync(path.join(dir, "index.html"))) {
    fs.rmSync(dir, { recursive: true, force: true });
    return { ok: false, dir };
  }
  const dist = path.join(root, "dist");
  return withLock(path.join(builds, ".lock"), () => {
    const live = liveBuild(dist);
    if (live && path.dirname(live) === builds && startedAt(live) > startedAt(dir)) {
      // A build started after this one is served already: it has the newer sources.
      fs.rmSync(dir, { recursive: true, force: true });
      return { ok: true, dir: live };
    }
    carryAssetsOver(dist, dir);
    // Marked finished only now: prune never takes a folder without this list.
    fs.writeFileSync(path.join(dir, OWN), JSON.stringify(ownAssets(dir)));
    pointAt(dist, path.relative(root, dir));
    prune(builds, dir);
    return { ok: true, dir };
  });
}

/** When a build began (ms since the epoch), from its folder's name; 0 for a name of another form. */
const startedAt = (dir: string) => Number(/^(\d+)-/.exec(path.basename(dir))?.[1] ?? 0);

/** The build `dist` points at now, or null when it is no link to one (none yet, or a folder of before). */
function liveBuild(dist: string): string | null {
  try {
    const target = path.resolve(path.dirname(dist), fs.readlinkSync(dist));
    // A link to a folder removed by hand serves nothing: as good as none.
    return fs.existsSync(path.join(target, "index.html")) ? target : null;
  } catch {
    return null;
  }
}

function withLock<T>(lock: string, fn: () => T): T {
  const wait = new Int32Array(new SharedArrayBuffer(4));
  for (;;) {
    try {
      fs.closeSync(fs.openSync(lock, "wx"));
      break;
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== "EEXIST") throw err;
      const st = fs.statSync(lock, { throwIfNoEntry: false });
      if (st && Date.now() - st.mtimeMs > STALE_LOCK_MS) fs.rmSync(lock, { force: true });
      else Atomics.wait(wait, 0, 0, 50);
    }
  }
  try {
    return fn();
  } finally {
    fs.rmSync(lock, { force: true });
  }
}

/** A build's own assets: those vite wrote, before any are carried over from the previous build. */
function ownAssets(dir: string): string[] {
  const carried = new Set<string>();
  try {
    for (const name of JSON.parse(fs.readFileSync(path.join(dir, ".carried.json"), "utf8")) as string[]) carried.add(name);
  } catch {
    // Nothing carried.
  }
  return listAssets(dir).filter((n) => !carried.has(n));
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
  const carried: string[] = [];
  for (const name of names) {
    const target = path.join(to, name);
    if (path.basename(name) !== name || fs.existsSync(target)) continue;
    try {
      fs.linkSync(path.join(from, name), target);
      carried.push(name);
    } catch {
      // Gone meanwhile, or on another file system: a copy, or nothing.
      try {
        fs.copyFileSync(path.join(from, name), target);
        carried.push(name);
      } catch {
        /* the page that wanted it reloads */
      }
    }
  }
  fs.writeFileSync(path.join(next, ".carried.json"), JSON.stringify(carried));
}

/** Makes `dist` a link to `relTarget` in one step (a real `dist/` folder from before is moved aside). */
function pointAt(dist: string, relTarget: string) {
  const st = fs.lstatSync(dist, { throwIfNoEntry: false });
  if (st && !st.isSymbolicLink()) {
    // A build made before builds had folders of their own: its place is taken once, here. It is
    // marked finished (its files as its own), so it is pruned like any other.
    const aside = path.join(path.dirname(dist), ".builds", `old-${Date.now()}-${process.pid}`);
    fs.renameSync(dist, aside);
    if (!fs.existsSync(path.join(aside, OWN))) fs.writeFileSync(path.join(aside, OWN), JSON.stringify(listAssets(aside)));
  }
  const temp = `${dist}.${process.pid}.link`;
  fs.rmSync(temp, { force: true });
  fs.symlinkSync(relTarget, temp, "dir");
  fs.renameSync(temp, dist);
}

/** Removes all but the newest finished builds; never the one `dist` points at, nor one being written. */
function prune(builds: string, current: string) {
  const live = liveBuild(path.join(path.dirname(builds), "dist")) ?? current;
  const finished = fs
    .readdirSync(builds, { withFileTypes: true })
    .filter((e) => e.isDirectory())
    .flatMap((e) => {
      const full = path.join(builds, e.name);
      const mark = fs.statSync(path.join(full, OWN), { throwIfNoEntry: false });
      return mark ? [{ full, finishedAt: mark.mtimeMs }] : [];
    })
    .sort((a, b) => b.finishedAt - a.finishedAt);
  for (const [i, e] of finished.entries()) {
    if (i < KEEP || e.full === live || e.full === current) continue;
    fs.rmSync(e.full, { recursive: true, force: true });
  }
}
