import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { Button } from "../../../components/button";
import type { StepErrors } from "../draft";
import { visibleSettings, type TripleSetting } from "../steps";
import { ModeChoice } from "./mode-choice";
import { NumberSetting } from "./number-setting";

type Triple = [number, number, number];
const CHANNELS = ["Red", "Green", "Blue"] as const;

/** A value of the step by the schema's key (the settings table names them). */
const read = (step: RecipeStep, key: string): unknown => (step as Record<string, unknown>)[key];

/** Defaults a mode needs before it is valid: gains start neutral; a point waits to be picked. */
function switchMode(step: RecipeStep, key: string, value: string): RecipeStep {
  const next = { ...step, [key]: value } as RecipeStep;
  if (next.type === "whiteBalance" && value === "gains" && !next.gains) next.gains = [1, 1, 1];
  return next;
}

/** Every setting of one step in its current mode, each written back through `onChange`. */
export function StepSettings({
  step,
  errors,
  onChange,
  onPickNeutral,
  picking,
}: {
  step: RecipeStep;
  errors: StepErrors;
  onChange: (step: RecipeStep) => void;
  /** Starts picking a neutral on the preview (white balance from a point). */
  onPickNeutral?: () => void;
  picking?: boolean;
}) {
  const settings = visibleSettings(step);
  return (
    <div className="flex flex-col gap-3.5">
      {settings.map((s) => {
        if (s.kind === "mode") {
          return (
            <ModeChoice
              key={s.key}
              label={s.label}
              value={String(read(step, s.key))}
              options={s.options}
              onChange={(v) => onChange(switchMode(step, s.key, v))}
            />
          );
        }
        if (s.kind === "triple") {
          return (
            <TripleSettings
              key={s.key}
              setting={s}
              value={read(step, s.key) as Triple | undefined}
              error={errors[s.key]}
              onChange={(v) => onChange({ ...step, [s.key]: v } as RecipeStep)}
              onPickNeutral={s.key === "point" ? onPickNeutral : undefined}
              picking={picking}
            />
          );
        }
        return (
          <NumberSetting
            key={s.key}
            label={s.label}
            hint={s.hint}
            value={Number(read(step, s.key))}
            limits={s.limits}
            step={s.step}
            decimals={s.decimals}
            log={s.log}
            unit={s.unit}
            readout={s.readout}
            track={s.track}
            error={errors[s.key]}
            onChange={(v) => onChange({ ...step, [s.key]: v } as RecipeStep)}
          />
        );
      })}
      {errors.step && <p className="text-xs font-medium text-brick">{errors.step}</p>}
    </div>
  );
}

function TripleSettings({
  setting,
  value,
  error,
  onChange,
  onPickNeutral,
  picking,
}: {
  setting: TripleSetting;
  value: Triple | undefined;
  error?: string;
  onChange: (value: Triple) => void;
  onPickNeutral?: () => void;
  picking?: boolean;
}) {
  const isPoint = setting.key === "point";
  return (
    <div className="flex flex-col gap-2">
      <div className="flex items-center justify-between gap-3">
        <p className="text-sm font-medium text-ink-soft">{setting.label}</p>
        {isPoint && value && (
          <span
            className="size-6 shrink-0 rounded border border-paper-400 shadow-sm"
            style={{ backgroundColor: `rgb(${value[0]} ${value[1]} ${value[2]})` }}
            title={`Picked neutral: ${value.join(", ")}`}
            aria-hidden="true"
          />
        )}
      </div>
      {value &&
        CHANNELS.map((channel, i) => (
          <NumberSetting
            key={channel}
            label={`${channel} ${isPoint ? "" : "gain"}`.trim()}
            value={value[i]!}
            limits={setting.limits}
            step={setting.step}
            decimals={setting.decimals}
            log={!isPoint}
            onChange={(v) => {
              const next = [...value] as Triple;
              next[i] = v;
              onChange(next);
            }}
          />
        ))}
      {error ? <p className="text-xs font-medium text-brick">{error}</p> : <p className="text-xs text-ink-muted">{setting.hint}</p>}
      {onPickNeutral && (
        <div>
          <Button size="sm" variant={picking ? "primary" : "secondary"} onClick={onPickNeutral} aria-pressed={picking}>
            {picking ? "Click a neutral on the preview…" : value ? "Pick again on the preview" : "Pick on the preview"}
          </Button>
        </div>
      )}
    </div>
  );
}
