import { INBOX_WAITING_LIMIT, type InboxWaiting, type InboxWaitingFile } from "../shared/schemas/queue";

type State = InboxWaitingFile["state"];

interface Entry {
  name: string;
  sizeBytes: number;
  /** When the watcher began waiting on the file (ms since the epoch), kept across states. */
  since: number;
  state: State;
  reason: string | null;
  until: number | null;
}

export interface WaitingListOptions {
  /** How long a file that still looks unfinished is waited for (ms), said with the list. */
  unfinishedMs: number;
  /** A growing file's size is published at most this often (ms); a new file or state at once. */
  sizeEveryMs?: number;
  /**
   * Writes the list where the Queue screen reads it (the watcher's row in `processes`); `changed`
   * is false when only sizes moved (open screens need no nudge for that: their poll shows it).
   */
  publish: (waiting: InboxWaiting, changed: boolean) => Promise<void>;
  onError: (err: unknown) => void;
}

/**
 * The files the inbox watcher holds back and why, published so that a file dropped in the inbox is
 * visible from its first byte until it is filed. Bounded: the INBOX_WAITING_LIMIT files seen most
 * recently are named (the one just dropped is the one looked for), with the count of all. A file that joins, leaves or changes state is
 * published at once (coalesced); a growing file's size at most every `sizeEveryMs`.
 */
export class WaitingList {
  private readonly files = new Map<string, Entry>();
  private readonly sizeEveryMs: number;
  private timer: NodeJS.Timeout | undefined;
  private timerSoon = false;
  private publishing: Promise<void> = Promise.resolve();
  private last = "";
  private lastShape = "";
  private closed = false;

  constructor(private readonly opts: WaitingListOptions) {
    this.sizeEveryMs = opts.sizeEveryMs ?? 2000;
  }

  has(file: string): boolean {
    return this.files.has(file);
  }

  /** Notes `file` (named `name` inside the inbox) as waited on, in `state`. */
  set(file: string, name: string, sizeBytes: number, state: State, reason: string | null = null, until: number | null = null) {
    const prev = this.files.get(file);
    this.files.set(file, { name, sizeBytes, since: prev?.since ?? Date.now(), state, reason, until });
    const same = prev && prev.name === name && prev.state === state && prev.reason === reason && prev.until === until;
    this.schedule(!same);
  }

  /** The file is no longer waited on: filed, gone, or left alone. */
  leave(file: string) {
    if (this.files.delete(file)) this.schedule(true);
  }

  /** The list as it is now, the file seen last first. */
  snapshot(): InboxWaiting {
    const all = [...this.files.values()].sort((a, b) => b.since - a.since || a.name.localeCompare(b.name));
    return {
      count: all.length,
      unfinishedMs: this.opts.unfinishedMs,
      files: all.slice(0, INBOX_WAITING_LIMIT).map((e) => ({
        name: e.name,
        sizeBytes: e.sizeBytes,
        since: new Date(e.since).toISOString(),
        state: e.state,
        reason: e.reason,
        until: e.until === null ? null : new Date(e.until).toISOString(),
      })),
    };
  }

  /** Publishes what is still unpublished and stops publishing. */
  async close() {
    this.closed = true;
    clearTimeout(this.timer);
    await this.publishing;
  }

  private schedule(soon: boolean) {
    if (this.closed) return;
    if (this.timer && (this.timerSoon || !soon)) return;
    clearTimeout(this.timer);
    this.timerSoon = soon;
    this.timer = setTimeout(
      () => {
        this.timer = undefined;
        this.publishing = this.publishing.then(() => this.publish());
      },
      soon ? 0 : this.sizeEveryMs,
    );
  }

  private async publish() {
    const now = this.snapshot();
    const text = JSON.stringify(now);
    if (text === this.last) return;
    const shape = JSON.stringify({ ...now, files: now.files.map((f) => ({ ...f, sizeBytes: 0 })) });
    try {
      await this.opts.publish(now, shape !== this.lastShape);
      this.last = text;
      this.lastShape = shape;
    } catch (err) {
      this.opts.onError(err);
      this.schedule(false);
    }
  }
}
