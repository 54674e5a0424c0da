import fsp from "node:fs/promises";
import path from "node:path";
import { watch, type FSWatcher } from "chokidar";
import type { IntakeDeps, KeptInboxFile } from "../server/services/intake";
import { StillChangingError, forgetKeptInboxFile, intakeFile, keptInboxFiles } from "../server/services/intake";
import { startHeartbeat } from "../server/services/processes";
import { notify } from "../server/services/events";
import { looksUnfinished } from "./pipeline/unfinished";
import { WaitingList } from "./inbox-waiting";
import { createSettler } from "./inbox-settle";

/** Names a scanner or a copy leaves while it is still writing, and hidden files: never taken in. */
export function isIgnoredName(name: string): boolean {
  const base = path.basename(name);
  return (
    base.startsWith(".") || base.startsWith("~") || base.endsWith("~") || /\.(part|partial|tmp|temp|crdownload|download|swp)$/i.test(base)
  );
}

export interface WatcherOptions {
  folder: string;
  /** How long a file must stop growing before it is taken in (ms). */
  stableMs: number;
  pollMs: number;
  /**
   * How long a file that has stopped growing but still looks unfinished (empty, or without its
   * format's end) is waited for before it is taken in as it is (ms; default 30 × stableMs).
   */
  unfinishedMs?: number;
}

/**
 * Watches the inbox: files already there and every new one, once it has stopped growing, go
 * through the same intake as uploads, one at a time. A file that cannot be taken in stays in the
 * inbox and is tried again with backoff; the watcher keeps going. A file that has stopped growing
 * but still looks unfinished (worker/pipeline/unfinished.ts: a scanner that made the file and
 * pauses before writing it) is left where it is and looked at again, until it is whole or has
 * looked unfinished for `unfinishedMs`; then it is filed as it is (to fail with its reason) but
 * left in the inbox, so a writer that comes back writes into a file still there, which is taken in
 * again, whole, when it changes. Files filed but left in the inbox (that one, and one that could
 * not be removed) are remembered in the database (inbox_kept_files), so an unchanged one is not
 * filed again after a restart; the memory goes when the file leaves the inbox.
 * Every file it holds back (still being written, looking unfinished, being filed, or tried again
 * after an error) is on its waiting list (./inbox-waiting.ts), which the Queue screen shows.
 */
export async function startWatcher(deps: IntakeDeps, opts: WatcherOptions) {
  const folder = path.resolve(opts.folder);
  await fsp.mkdir(folder, { recursive: true });
  const log = deps.log.child({ folder });
  const heartbeat = startHeartbeat(deps.database.db, "watcher", { folder });
  await heartbeat.ready;
  await notify(deps.database.pool, { kind: "watcher" }).catch(() => {});

  let chain: Promise<void> = Promise.resolve();
  const inFlight = new Set<string>();
  /** Files seen again (a change) while in flight: looked at once more when done. */
  const seenAgain = new Set<string>();
  /** One pending look per file: a later one replaces it. */
  const timers = new Map<string, NodeJS.Timeout>();
  let closed = false;
  const unfinishedMs = opts.unfinishedMs ?? 30 * opts.stableMs;
  /** Files that looked unfinished: since when (or since their last change), how they were then, and why. */
  const unfinishedSince = new Map<string, { since: number; size: number; mtimeMs: number; reason?: string }>();
  /** A file's path inside the inbox, as inbox_kept_files keeps it. */
  const nameOf = (file: string) => path.relative(folder, file).split(path.sep).join("/");
  const waiting = new WaitingList({
    unfinishedMs,
    publish: async (list, changed) => {
      await heartbeat.reportWaiting(list);
      if (changed) await notify(deps.database.pool, { kind: "watcher" });
    },
    onError: (err) => log.error({ err }, "watcher: could not report the files it is waiting on"),
  });

  /**
   * Files filed but still in the inbox, as they were then (inbox_kept_files; this map mirrors this
   * inbox's rows): not taken in again while unchanged. Rows of files gone while the watcher was
   * stopped are forgotten now; chokidar reports the others as it starts.
   */
  const kept = new Map<string, KeptInboxFile>();
  for (const [name, row] of await keptInboxFiles(deps.database.db, folder)) {
    const file = path.join(folder, ...name.split("/"));
    const st = await fsp.lstat(file).catch(() => null);
    if (st?.isFile()) kept.set(file, row);
    else await forgetKeptInboxFile(deps.database.db, folder, name);
  }
  /** The file has left the inbox: its memory goes. */
  const forget = async (file: string) => {
    if (!kept.delete(file)) return;
    await forgetKeptInboxFile(deps.database.db, folder, nameOf(file)).catch((err: unknown) =>
      log.error({ err, file: nameOf(file) }, "watcher: could not forget a kept file that has left the inbox"),
    );
  };

  const later = (file: string, wait: number, attempt: number) => {
    if (closed) return;
    clearTimeout(timers.get(file));
    timers.set(
      file,
      setTimeout(() => {
        timers.delete(file);
        take(file, attempt);
      }, wait),
    );
  };
  const recheck = () => Math.max(opts.stableMs, 200);

  const take = (file: string, attempt = 1) => {
    if (closed) return;
    if (inFlight.has(file)) {
      seenAgain.add(file);
      return;
    }
    inFlight.add(file);
    const done = () => {
      inFlight.delete(file);
      // A change seen while it was in hand: looked at again once it has been still a while.
      if (seenAgain.delete(file)) later(file, recheck(), 1);
    };
    /** Out of hand, and one look at it `wait` ms from now (any change seen meanwhile included). */
    const lookAgain = (wait: number, nextAttempt: number) => {
      seenAgain.delete(file);
      inFlight.delete(file);
      later(file, wait, nextAttempt);
    };
    chain = chain.then(async () => {
      const name = nameOf(file);
      let st: Awaited<ReturnType<typeof fsp.stat>>;
      try {
        st = await fsp.stat(file);
      } catch (err) {
        unfinishedSince.delete(file);
        waiting.leave(file);
        seenAgain.delete(file);
        inFlight.delete(file);
        // Gone (not merely unreadable for a moment, as a share can be): its memory goes too.
        if ((err as NodeJS.ErrnoException).code === "ENOENT") await forget(file);
        return;
      }
      // Filed already and left here, unchanged since: nothing new to take in.
      const stayed = kept.get(file);
      if (stayed && stayed.sizeBytes === st.size && stayed.mtimeMs === st.mtimeMs) {
        log.debug({ file: name, scanId: stayed.scanId, reason: stayed.reason }, "watcher: filed before and unchanged since; left alone");
        waiting.leave(file);
        return done();
      }
      try {
        // The folder it is in must still be inside the inbox (a subfolder swapped for a link to
        // somewhere else since the file was seen stays out); the file itself is opened without
        // following a link (server/storage/files.ts).
        const [real, inbox] = await Promise.all([fsp.realpath(path.dirname(file)), fsp.realpath(folder)]);
        if (real !== inbox && !real.startsWith(inbox + path.sep)) {
          unfinishedSince.delete(file);
          waiting.leave(file);
          done();
          return log.warn({ file: name }, "watcher: leaving a file alone whose folder now leads out of the inbox");
        }
        // Looked at again after a wait: a file that changed meanwhile has a writer again (waited
        // for afresh); one that is the same is as still as the first look found it.
        const now = Date.now();
        const seen = unfinishedSince.get(file);
        if (seen && (seen.size !== st.size || seen.mtimeMs !== st.mtimeMs)) {
          unfinishedSince.set(file, { since: now, size: st.size, mtimeMs: st.mtimeMs });
          waiting.set(file, name, st.size, "writing");
          return lookAgain(recheck(), attempt);
        }
        // Unchanged since the last walk, the same verdict: a big file is not walked again and again.
        const unfinished = seen?.reason ?? (await looksUnfinished(file).catch(() => null));
        if (unfinished) {
          const since = seen?.since ?? now;
          unfinishedSince.set(file, { since, size: st.size, mtimeMs: st.mtimeMs, reason: unfinished });
          if (now - since < unfinishedMs) {
            waiting.set(file, name, st.size, "unfinished", unfinished, since + unfinishedMs);
            if (!seen)
              log.info(
                { file: name, reason: unfinished, waitMs: unfinishedMs },
                "watcher: the file looks unfinished; waiting for its writer",
              );
            return lookAgain(Math.min(recheck(), unfinishedMs - (now - since)), attempt);
          }
          log.warn(
            { file: name, reason: unfinished, waitedMs: now - since },
            "watcher: the file still looks unfinished; filing it as it is and leaving it in the inbox for its writer",
          );
        }
        unfinishedSince.delete(file);
        waiting.set(file, name, st.size, "filing");
        await heartbeat.sawFile(name);
        const r = await intakeFile(deps, {
          path: file,
          originalName: path.basename(file),
          source: "inbox",
          removeSource: true,
          inbox: { folder, path: name },
          stillUnfinished: unfinished ?? undefined,
        });
        await notify(deps.database.pool, { kind: "watcher", scanId: r.scanId });
        if (r.remembered) kept.set(file, r.remembered);
        else kept.delete(file);
        if (r.kept === "changed") seenAgain.add(file);
        waiting.leave(file);
        done();
      } catch (err) {
        if (err instanceof StillChangingError) {
          // Its writer is still at it: nothing was recorded; looked at again once it is still.
          log.info({ file: name }, "watcher: the file changed while it was copied; waiting for it to be still");
          const size = await fsp.stat(file).then(
            (x) => x.size,
            () => null,
          );
          if (size === null) waiting.leave(file);
          else waiting.set(file, name, size, "writing");
          return lookAgain(recheck(), attempt);
        }
        const wait = Math.min(60_000, 1000 * 2 ** attempt);
        waiting.set(file, name, st.size, "retrying", err instanceof Error ? err.message : String(err), Date.now() + wait);
        log.error({ err, file: name, attempt, retryInMs: wait }, "watcher: could not take in the file; it stays in the inbox");
        lookAgain(wait, attempt + 1);
      }
    });
  };

  // What arrives or changes is taken once it has been still for stableMs; meanwhile it is on the
  // waiting list as being written (unless it is one filed before and left here, unchanged).
  const settler = createSettler({
    stableMs: opts.stableMs,
    pollMs: opts.pollMs,
    onSettled: (file) => take(file),
    onChanging: (file, st) => {
      const stayed = kept.get(file);
      if (stayed && stayed.sizeBytes === st.size && stayed.mtimeMs === st.mtimeMs) return;
      if (!inFlight.has(file)) waiting.set(file, nameOf(file), st.size, "writing");
    },
  });

  // A link is never taken in, nor a linked folder looked into: whoever may write to the inbox must
  // not be able to file any other file this process can read. Said once per link.
  const linksSeen = new Set<string>();
  const isLink = (p: string, stats?: { isSymbolicLink(): boolean }) => {
    if (!stats?.isSymbolicLink()) return false;
    if (!linksSeen.has(p)) {
      linksSeen.add(p);
      log.warn({ file: path.relative(folder, p) }, "watcher: leaving a link in the inbox alone (copy the file itself in)");
    }
    return true;
  };
  const watcher: FSWatcher = watch(folder, {
    ignoreInitial: false,
    depth: 3,
    followSymlinks: false,
    ignored: (p, stats) =>
      p !== folder && (isIgnoredName(p) || isLink(p, stats) || (stats?.isFile() === false && stats?.isDirectory() === false)),
  });
  let ready = false;
  // What was there at the start is looked at at once (the look itself waits for an unfinished
  // one); what arrives or changes later, once it has stopped changing.
  watcher.on("add", (file) => (ready ? settler.seen(file) : take(file)));
  watcher.on("change", (file) => settler.seen(file));
  // Gone from the inbox: looked at once more, which finds it gone, takes it off the waiting list
  // and forgets it if it was kept.
  watcher.on("unlink", (file) => {
    settler.drop(file);
    if (kept.has(file) || (waiting.has(file) && !inFlight.has(file))) take(file);
  });
  watcher.on("error", (err) => log.error({ err }, "watcher error"));
  await new Promise<void>((resolve) => watcher.once("ready", () => resolve()));
  ready = true;
  log.info({ stableMs: opts.stableMs }, "watching the inbox");

  return {
    heartbeatId: heartbeat.id,
    /** Resolves when every file seen so far has been handled. */
    idle: () => chain,
    async close() {
      closed = true;
      timers.forEach((t) => clearTimeout(t));
      settler.close();
      await watcher.close();
      await chain;
      await waiting.close();
      await heartbeat.stop();
    },
  };
}
