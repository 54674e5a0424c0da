import { useCallback, useMemo } from "react";
import { useSearchParams } from "react-router-dom";
import type { BatchItem } from "../api/get-batch-report";

/** An output's state as its row shows it: a done output whose file a later run removed reads "replaced". */
export type OutputState = BatchItem["state"] | "replaced";

/** The order the states are offered in: what is made, what needs a look, then what is still to come. */
export const OUTPUT_STATES: readonly OutputState[] = ["done", "failed", "running", "queued", "cancelled", "replaced"];

export const OUTPUT_STATE_TEXT: Record<OutputState, string> = {
  queued: "Waiting",
  running: "Being made",
  done: "Done",
  failed: "Failed",
  cancelled: "Cancelled",
  replaced: "Replaced",
};

export const shownState = (o: BatchItem, replaced: ReadonlySet<string>): OutputState => (replaced.has(o.id) ? "replaced" : o.state);

/** Below this many outputs the whole table fits on a screen or two, and the bar is left out unless a filter is set. */
export const FILTER_BAR_FROM = 8;

export interface OutputFilter {
  /** A preset's name, as the batch's outputs carry it. */
  preset?: string;
  state?: OutputState;
  /** Only outputs that carry a warning (a print below its preset's minimum DPI, a caption left out…). */
  warned: boolean;
}

export interface OutputFilterCounts {
  /** Per preset of the batch (by name, in name order), counted under the state and warning choices. */
  presets: [string, number][];
  /** Per state any output of the batch has (and the one chosen), counted under the preset and warning choices. */
  states: [OutputState, number][];
  /** Outputs with a warning, under the preset and state choices. */
  warned: number;
  /** What "any preset" and "any state" would show. */
  anyPreset: number;
  anyState: number;
}

type Facet = "preset" | "state" | "warned";

function matches(o: BatchItem, f: OutputFilter, replaced: ReadonlySet<string>, skip?: Facet): boolean {
  if (skip !== "preset" && f.preset !== undefined && o.preset !== f.preset) return false;
  if (skip !== "state" && f.state !== undefined && shownState(o, replaced) !== f.state) return false;
  if (skip !== "warned" && f.warned && o.warnings.length === 0) return false;
  return true;
}

/**
 * The outputs a filter keeps, and the count beside each choice. A choice's count is what picking it
 * would show with the other choices as they are, so a count is never a promise the table breaks.
 * Example: 4 web and 4 print outputs, one print failed, "failed" chosen → presets web 0, print 1;
 * states done 7, failed 1 (a choice's own group is counted without it).
 */
export function applyOutputFilter(items: BatchItem[], filter: OutputFilter, replaced: ReadonlySet<string>) {
  const shown = items.filter((o) => matches(o, filter, replaced));
  const presetCount = new Map<string, number>();
  const stateCount = new Map<OutputState, number>();
  for (const o of items) presetCount.set(o.preset, 0);
  for (const o of items) stateCount.set(shownState(o, replaced), 0);
  if (filter.state) stateCount.set(filter.state, stateCount.get(filter.state) ?? 0);
  let warned = 0;
  let anyPreset = 0;
  let anyState = 0;
  for (const o of items) {
    if (matches(o, filter, replaced, "preset")) {
      anyPreset++;
      presetCount.set(o.preset, presetCount.get(o.preset)! + 1);
    }
    if (matches(o, filter, replaced, "state")) {
      anyState++;
      const s = shownState(o, replaced);
      stateCount.set(s, stateCount.get(s)! + 1);
    }
    if (o.warnings.length > 0 && matches(o, filter, replaced, "warned")) warned++;
  }
  const counts: OutputFilterCounts = {
    presets: [...presetCount].sort(([a], [b]) => a.localeCompare(b)),
    states: OUTPUT_STATES.filter((s) => stateCount.has(s)).map((s) => [s, stateCount.get(s)!]),
    warned,
    anyPreset,
    anyState,
  };
  return { shown, counts };
}

const PARAMS = { preset: "preset", state: "state", warned: "warnings" } as const;

/**
 * The Outputs table's filter lives in the address (?preset=…&state=…&warnings=1), so a reload, a
 * link or Back brings the same narrowed list. A preset the batch does not have is left out.
 */
export function useOutputFilter(items: BatchItem[], replaced: ReadonlySet<string>) {
  const [params, setParams] = useSearchParams();
  const presetParam = params.get(PARAMS.preset);
  const stateParam = params.get(PARAMS.state);
  const warnedParam = params.get(PARAMS.warned);
  const filter: OutputFilter = useMemo(
    () => ({
      preset: presetParam !== null && items.some((o) => o.preset === presetParam) ? presetParam : undefined,
      state: OUTPUT_STATES.find((s) => s === stateParam),
      warned: warnedParam === "1",
    }),
    [items, presetParam, stateParam, warnedParam],
  );

  const setFilter = useCallback(
    (patch: Partial<OutputFilter>) =>
      setParams(
        (current) => {
          const next = new URLSearchParams(current);
          const apply = (key: string, value: string | undefined) => (value ? next.set(key, value) : next.delete(key));
          if ("preset" in patch) apply(PARAMS.preset, patch.preset);
          if ("state" in patch) apply(PARAMS.state, patch.state);
          if ("warned" in patch) apply(PARAMS.warned, patch.warned ? "1" : undefined);
          return next;
        },
        { replace: true },
      ),
    [setParams],
  );

  const active = filter.preset !== undefined || filter.state !== undefined || filter.warned;
  const clear = useCallback(() => setFilter({ preset: undefined, state: undefined, warned: false }), [setFilter]);
  const { shown, counts } = useMemo(() => applyOutputFilter(items, filter, replaced), [items, filter, replaced]);
  return { filter, setFilter, clear, active, shown, counts };
}
