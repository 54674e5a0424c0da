import { useEffect, useId, useRef, useState, type KeyboardEvent } from "react";
import { STEP_TYPES, type StepType } from "../../../../shared/schemas/recipes";
import { Button } from "../../../components/button";
import { STEP_INFO } from "../steps";
import { PlusIcon } from "./icons";

/**
 * "Add a step": a menu of the step types, each with a line on what it does. Arrow keys move,
 * Enter picks, Escape closes and gives focus back to the button.
 */
export function AddStepMenu({ onAdd, disabled }: { onAdd: (type: StepType) => void; disabled?: boolean }) {
  const id = useId();
  const [open, setOpen] = useState(false);
  const buttonRef = useRef<HTMLButtonElement>(null);
  const menuRef = useRef<HTMLDivElement>(null);
  const itemRefs = useRef<(HTMLButtonElement | null)[]>([]);

  useEffect(() => {
    if (!open) return;
    itemRefs.current[0]?.focus();
    const away = (event: PointerEvent) => {
      const target = event.target as Node;
      if (!menuRef.current?.contains(target) && !buttonRef.current?.contains(target)) setOpen(false);
    };
    document.addEventListener("pointerdown", away);
    return () => document.removeEventListener("pointerdown", away);
  }, [open]);

  const close = () => {
    setOpen(false);
    buttonRef.current?.focus();
  };

  const onKeyDown = (event: KeyboardEvent) => {
    const items = itemRefs.current.filter(Boolean) as HTMLButtonElement[];
    const at = items.indexOf(document.activeElement as HTMLButtonElement);
    const go = (i: number) => items[(i + items.length) % items.length]?.focus();
    if (event.key === "ArrowDown") go(at + 1);
    else if (event.key === "ArrowUp") go(at - 1);
    else if (event.key === "Home") go(0);
    else if (event.key === "End") go(items.length - 1);
    else if (event.key === "Escape") close();
    else if (event.key === "Tab") setOpen(false);
    else return;
    if (event.key !== "Tab") event.preventDefault();
  };

  return (
    <div className="relative">
      <Button
        ref={buttonRef}
        size="sm"
        variant="secondary"
        disabled={disabled}
        aria-haspopup="menu"
        aria-expanded={open}
        aria-controls={open ? id : undefined}
        onClick={() => setOpen((o) => !o)}
        onKeyDown={(e) => {
          if (e.key === "ArrowDown" && !open) {
            e.preventDefault();
            setOpen(true);
          }
        }}
      >
        <PlusIcon className="size-3.5" />
        Add a step
      </Button>
      {open && (
        <div
          ref={menuRef}
          id={id}
          role="menu"
          aria-label="Step types"
          onKeyDown={onKeyDown}
          className="absolute top-full right-0 z-30 mt-1.5 w-80 rounded-lg border border-paper-300 bg-white p-1 shadow-lg"
        >
          {STEP_TYPES.map((type, i) => (
            <button
              key={type}
              ref={(el) => {
                itemRefs.current[i] = el;
              }}
              type="button"
              role="menuitem"
              tabIndex={-1}
              onClick={() => {
                setOpen(false);
                onAdd(type);
              }}
              className="flex w-full flex-col items-start rounded-md px-3 py-2 text-left hover:bg-paper-100 focus-visible:bg-accent-faint focus-visible:outline-none"
            >
              <span className="text-sm font-medium text-ink">{STEP_INFO[type].label}</span>
              <span className="text-xs text-ink-muted">{STEP_INFO[type].summary}</span>
            </button>
          ))}
        </div>
      )}
    </div>
  );
}
