import { useParams, useSearchParams } from "react-router-dom";
import { BUILT_IN_PRESETS, masterPresetSchema, mockupPresetSchema, type Preset, type PresetKind } from "../../../shared/schemas/presets";
import { Spinner } from "../../components/button";
import { NotAllowed } from "../../components/not-allowed";
import { usePreset } from "../../features/presets/api/get-preset";
import { PresetEditor } from "../../features/presets/components/preset-editor";
import { paths } from "../../config/paths";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { RecordNotLoaded } from "./not-found";

const presetNotLoaded = (error: Error, onRetry: () => void) => (
  <RecordNotLoaded
    error={error}
    onRetry={onRetry}
    title="No preset at this address"
    back={{ to: paths.presets, label: "Back to the presets" }}
  />
);

/** Where a new preset of each kind starts: the built-in ones, or the schema's defaults. */
function startFor(kind: PresetKind): Preset {
  switch (kind) {
    case "web":
      return { ...BUILT_IN_PRESETS.web!, name: "" };
    case "print":
      return { ...BUILT_IN_PRESETS["print-letter"]!, name: "" };
    case "mockup":
      return { ...mockupPresetSchema.parse({ kind: "mockup", name: "mock-up" }), name: "" };
    case "master":
      return { ...masterPresetSchema.parse({ kind: "master", name: "master" }), name: "" };
  }
}

const KINDS: readonly PresetKind[] = ["web", "print", "mockup", "master"];

export function PresetRoute() {
  const me = useSessionUser();
  const { id = "" } = useParams();
  if (!useHasRole("operator")) return <NotAllowed needed="operator" current={me.role} />;
  return <PresetPage key={id} id={id} />;
}

function PresetPage({ id }: { id: string }) {
  const preset = usePreset(id);
  if (preset.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the preset…
      </p>
    );
  }
  if (preset.isError) {
    return presetNotLoaded(preset.error, () => void preset.refetch());
  }
  return (
    <>
      <title>{`${preset.data.preset.name} · Presets · Platen`}</title>
      <PresetEditor detail={preset.data} start={preset.data.preset.settings} />
    </>
  );
}

/** A new preset: of a kind (?kind=print) or a copy of another (?from=<id>). */
export function PresetNewRoute() {
  const me = useSessionUser();
  const [params] = useSearchParams();
  if (!useHasRole("operator")) return <NotAllowed needed="operator" current={me.role} />;
  const from = params.get("from");
  const kind = KINDS.find((k) => k === params.get("kind")) ?? "web";
  return from ? <CopyPreset key={from} id={from} /> : <PresetEditor key={kind} start={startFor(kind)} />;
}

function CopyPreset({ id }: { id: string }) {
  const preset = usePreset(id);
  if (preset.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the preset to copy…
      </p>
    );
  }
  if (preset.isError) {
    return presetNotLoaded(preset.error, () => void preset.refetch());
  }
  const settings = preset.data.preset.settings;
  return (
    <>
      <title>New preset · Platen</title>
      <PresetEditor start={{ ...settings, name: `${settings.name} copy`.slice(0, 80) }} />
    </>
  );
}
