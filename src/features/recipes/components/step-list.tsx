import { useLayoutEffect, useRef } from "react";
import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { stepErrors, type DraftStep } from "../draft";
import { StepCard } from "./step-card";

type Focus = { element: HTMLElement } | { key: string } | null;

/**
 * The recipe's steps in the order they are applied. Moving a step keeps the keyboard focus where
 * it was (the same field or button, now in its new place); a new step gets focus.
 */
export function StepList({
  steps,
  onChange,
  onMove,
  onRemove,
  focusKey,
  onPickNeutral,
  picking,
}: {
  steps: DraftStep[];
  onChange: (key: string, step: RecipeStep) => void;
  onMove: (key: string, by: -1 | 1) => void;
  onRemove: (key: string) => void;
  /** A step to focus once it is on screen (one just added). */
  focusKey?: string | null;
  onPickNeutral: () => void;
  picking: boolean;
}) {
  const handles = useRef(new Map<string, HTMLButtonElement>());
  const pending = useRef<Focus>(null);
  const lastFocusKey = useRef<string | null>(null);

  useLayoutEffect(() => {
    if (focusKey && focusKey !== lastFocusKey.current) {
      lastFocusKey.current = focusKey;
      pending.current = { key: focusKey };
    }
    const want = pending.current;
    pending.current = null;
    if (!want) return;
    const element = "key" in want ? handles.current.get(want.key) : want.element;
    if (element && element.isConnected && document.activeElement !== element) {
      element.focus();
      if ("key" in want) element.scrollIntoView({ block: "nearest" });
    }
  }, [steps, focusKey]);

  const move = (key: string, by: -1 | 1) => {
    const active = document.activeElement;
    pending.current = active instanceof HTMLElement ? { element: active } : null;
    onMove(key, by);
  };

  const remove = (index: number) => {
    const neighbour = steps[index + 1] ?? steps[index - 1];
    pending.current = neighbour ? { key: neighbour.key } : null;
    onRemove(steps[index]!.key);
  };

  return (
    <ol className="flex flex-col gap-3" aria-label="Steps, applied from top to bottom">
      {steps.map((d, i) => (
        <StepCard
          key={d.key}
          draft={d}
          index={i}
          total={steps.length}
          errors={stepErrors(d.step)}
          handleRef={(el) => {
            if (el) handles.current.set(d.key, el);
            else handles.current.delete(d.key);
          }}
          onChange={(step) => onChange(d.key, step)}
          onMove={(by) => move(d.key, by)}
          onRemove={() => remove(i)}
          onPickNeutral={d.step.type === "whiteBalance" ? onPickNeutral : undefined}
          picking={picking}
        />
      ))}
    </ol>
  );
}
