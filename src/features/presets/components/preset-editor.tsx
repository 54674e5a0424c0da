import { useEffect, useEffectEvent, useMemo, useRef, useState, type FormEvent } from "react";
import { Link, useLocation, useNavigate } from "react-router-dom";
import { noPrintAreaProblem } from "../../../../shared/paper";
import { presetSchema, type Preset } from "../../../../shared/schemas/presets";
import { Ago } from "../../../components/ago";
import { Button } from "../../../components/button";
import { SelectField, TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { PageHeader, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useCreatePreset } from "../api/create-preset";
import type { PresetDetail } from "../api/get-preset";
import { sampleThumbUrl, useSampleFragments } from "../api/get-sample-fragments";
import { useUpdatePreset } from "../api/update-preset";
import { KIND_HINTS, KIND_LABELS, presetLine } from "../format";
import { INVENTED_PIECE, type SamplePiece } from "../print-layout";
import { MasterFields } from "./master-fields";
import { MockupFields } from "./mockup-fields";
import { MockupPicture } from "./mockup-picture";
import { RenderedPreview } from "./rendered-preview";
import { PrintFields } from "./print-fields";
import { PrintPicture } from "./print-picture";
import { WebFields } from "./web-fields";
import { WebPicture } from "./web-picture";

/** Every problem of the draft by its path ("size.longEdge"), first message each. */
function problemsOf(draft: Preset): { ok: boolean; errors: Record<string, string> } {
  const parsed = presetSchema.safeParse(draft);
  const errors: Record<string, string> = {};
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const key = issue.path.join(".");
      errors[key] ??= issue.message;
    }
  }
  // Settings each in range can still leave the paper no print area, and every output would fail:
  // said beside the print area as soon as the rest is in range (a missing name aside).
  if (draft.kind === "print" && Object.keys(errors).every((k) => k === "name")) {
    const noArea = noPrintAreaProblem(draft);
    if (noArea) errors["layout"] = `${noArea}: make the margins or the area smaller, or pick a larger paper.`;
  }
  return { ok: Object.keys(errors).length === 0, errors };
}

const fragmentName = (f: { title: string | null; scanName: string; position: number }) =>
  f.title?.trim() || `${f.scanName.replace(/\.[^.]+$/, "")} · ${f.position}`;

/**
 * The same name for the narrow "Try on" list: a select cuts its text at the right edge, which
 * would hide the end of a long scan name and the position that tell a session's pieces apart, so
 * a long name is cut in its middle instead.
 */
const shortFragmentName = (f: { title: string | null; scanName: string; position: number }, max = 22) => {
  const full = fragmentName(f);
  if (full.length <= max) return full;
  const keep = max - 1;
  const tail = Math.ceil(keep / 2);
  return `${full.slice(0, keep - tail).trimEnd()}…${full.slice(full.length - tail).trimStart()}`;
};

/**
 * One preset's settings, with a picture of what it makes beside them: the page drawn to scale for
 * print, the box for web, the framed wall for mock-ups, tried on an approved fragment. Saving new
 * settings makes a new version; a new preset opens here once saved.
 */
export function PresetEditor({ detail, start }: { detail?: PresetDetail; start: Preset }) {
  const navigate = useNavigate();
  const create = useCreatePreset();
  const update = useUpdatePreset();
  const [draft, setDraft] = useState<Preset>(start);
  const [formError, setFormError] = useState<string | null>(null);
  const [sampleId, setSampleId] = useState<string>("");
  // An empty name on a fresh form is not a mistake yet: say so once the person tries to save.
  const [attempted, setAttempted] = useState(false);
  const samples = useSampleFragments();

  const { ok, errors: allErrors } = useMemo(() => problemsOf(draft), [draft]);
  const onlyName = !ok && Object.keys(allErrors).every((k) => k === "name");
  const errors: Record<string, string> =
    attempted || draft.name.trim() !== "" ? { ...allErrors } : Object.fromEntries(Object.entries(allErrors).filter(([k]) => k !== "name"));
  // The schema's words for an empty name are for the API; the form asks plainly.
  if (errors["name"] && draft.name.trim() === "") errors["name"] = "Give the preset a name.";
  const saved = detail?.preset;
  const dirty = !saved || JSON.stringify(saved.settings) !== JSON.stringify(draft);
  const busy = create.isPending || update.isPending;

  const sampleList = samples.data ?? [];
  const chosen = sampleList.find((f) => f.id === sampleId) ?? (sampleId === "" ? sampleList[0] : undefined);
  const piece: SamplePiece = chosen
    ? {
        widthPx: Math.round(chosen.rect.width),
        heightPx: Math.round(chosen.rect.height),
        dpi: chosen.dpi.x,
        // The caption's words as the worker sets them in the file: an untitled piece is named
        // after its scan's file and its number there.
        title: chosen.title ?? `${chosen.scanName} #${chosen.position}`,
        imageUrl: sampleThumbUrl(chosen),
      }
    : INVENTED_PIECE;

  // Ctrl/Cmd+S saves from anywhere on the page, as in the recipe editor: the Save button sits at
  // the top and the settings run long.
  const form = useRef<HTMLFormElement>(null);
  // Saving disables the button pressed (nothing left to save) and a new preset opens on its own
  // page: the focus goes to the form, not to the top of the document, so Tab carries on in it.
  const refocus = () =>
    requestAnimationFrame(() => {
      if (!document.activeElement || document.activeElement === document.body) form.current?.focus({ preventScroll: true });
    });
  const location = useLocation();
  const justSaved = Boolean((location.state as { saved?: boolean } | null)?.saved);
  useEffect(() => {
    if (justSaved) refocus();
    // Once, as the saved preset's page opens.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, []);
  const onKey = useEffectEvent((event: KeyboardEvent) => {
    if ((event.ctrlKey || event.metaKey) && !event.altKey && event.key.toLowerCase() === "s") {
      event.preventDefault();
      if (dirty && !busy) form.current?.requestSubmit();
    }
  });
  useEffect(() => {
    const listener = (event: KeyboardEvent) => onKey(event);
    window.addEventListener("keydown", listener);
    return () => window.removeEventListener("keydown", listener);
  }, []);

  const save = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    setAttempted(true);
    const parsed = presetSchema.safeParse(draft);
    if (!parsed.success || !ok) {
      setFormError(
        onlyName
          ? "Give the preset a name."
          : allErrors["layout"] && Object.keys(allErrors).every((k) => k === "name" || k === "layout")
            ? "The paper has no print area left: see the message under Print area."
            : "Some settings are out of range: see the messages beside them.",
      );
      return;
    }
    const onError = (error: unknown) => setFormError(serverErrorFor(error, []).message);
    if (!saved) {
      create.mutate(
        { name: parsed.data.name, settings: parsed.data },
        {
          onSuccess: (d) => {
            toast.success(`Saved ${d.preset.name} (version ${d.preset.version}).`);
            navigate(paths.preset(d.preset.id), { replace: true, state: { saved: true } });
          },
          onError,
        },
      );
    } else {
      update.mutate(
        { id: saved.id, name: parsed.data.name !== saved.name ? parsed.data.name : undefined, settings: parsed.data },
        {
          onSuccess: (d) => {
            setDraft(d.preset.settings);
            refocus();
            toast.success(`Saved ${d.preset.name}: now version ${d.preset.version}.`);
          },
          onError,
        },
      );
    }
  };

  const fields = (() => {
    switch (draft.kind) {
      case "print":
        return <PrintFields p={draft} set={setDraft} errors={errors} />;
      case "web":
        return <WebFields p={draft} set={setDraft} errors={errors} />;
      case "mockup":
        return <MockupFields p={draft} set={setDraft} errors={errors} />;
      case "master":
        return <MasterFields p={draft} set={setDraft} errors={errors} />;
    }
  })();

  const picture = (() => {
    switch (draft.kind) {
      case "print":
        return <PrintPicture preset={draft} piece={piece} />;
      case "web":
        return <WebPicture preset={draft} piece={piece} />;
      case "mockup":
        return <MockupPicture preset={draft} piece={piece} />;
      case "master":
        return (
          <p className="text-sm text-ink-soft">
            The master keeps every scanned pixel:{" "}
            <span className="figure text-ink">
              {piece.widthPx} × {piece.heightPx} px at {piece.dpi} DPI
            </span>{" "}
            for this piece.
          </p>
        );
    }
  })();

  return (
    <form ref={form} onSubmit={save} noValidate tabIndex={-1} className="outline-none" aria-label={`${KIND_LABELS[draft.kind]} preset`}>
      <PageHeader
        title={saved ? saved.name : `New ${KIND_LABELS[draft.kind].toLowerCase()} preset`}
        description={
          <>
            {KIND_HINTS[draft.kind]}.{" "}
            {saved ? `Version ${saved.version}; saving new settings makes version ${saved.version + 1}.` : "Saved as version 1."}{" "}
            <Link to={paths.presets} className="font-medium text-accent underline underline-offset-2">
              All presets
            </Link>
          </>
        }
        actions={
          <>
            {saved && dirty && (
              <Button variant="quiet" onClick={() => setDraft(saved.settings)} disabled={busy}>
                Undo changes
              </Button>
            )}
            <Button type="submit" variant="primary" busy={busy} disabled={(!ok && !onlyName) || !dirty} title="Ctrl+S">
              {saved ? "Save as new version" : "Save preset"}
            </Button>
          </>
        }
      />
      {formError && (
        <Notice tone="error" className="mb-5">
          {formError}
        </Notice>
      )}
      <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(0,1fr)_minmax(0,1.05fr)]">
        <Panel title="Settings" titleId="preset-settings">
          <div className="flex flex-col gap-4">
            <TextField
              label="Name"
              value={draft.name}
              autoComplete="off"
              error={errors["name"]}
              onChange={(e) => setDraft({ ...draft, name: e.target.value })}
            />
            {saved?.builtIn && <p className="-mt-2 text-[11px] text-ink-muted">A built-in preset: your edits are the studio's own copy.</p>}
            {fields}
          </div>
        </Panel>
        <div className="flex flex-col gap-6 lg:sticky lg:top-6">
          <Panel
            title={<span className="whitespace-nowrap">What it makes</span>}
            titleId="preset-picture"
            actions={
              <span className="flex min-w-[9rem] flex-1 items-center justify-end gap-2">
                {/* On a narrow window the words give their room to the fragment's name. */}
                <span aria-hidden="true" className="hidden text-xs whitespace-nowrap text-ink-muted xl:inline">
                  Try on
                </span>
                <SelectField
                  label={<span className="sr-only">Try on</span>}
                  value={chosen?.id ?? "invented"}
                  title={chosen ? `The piece the preset is tried on: ${fragmentName(chosen)}` : "The piece the preset is tried on"}
                  onChange={(e) => setSampleId(e.target.value)}
                  fieldClassName="w-56 min-w-[7.5rem] shrink"
                  className="h-8 text-xs"
                >
                  {sampleList.map((f) => (
                    <option key={f.id} value={f.id}>
                      {shortFragmentName(f)}
                    </option>
                  ))}
                  <option value="invented">an invented 5 × 7 in piece</option>
                </SelectField>
              </span>
            }
          >
            {picture}
            {draft.kind !== "master" && (
              <div className="mt-4 border-t border-paper-200 pt-3">
                <p className="mb-2 text-xs font-medium text-ink-soft">As rendered</p>
                <RenderedPreview
                  fragmentId={chosen && chosen.status === "approved" ? chosen.id : null}
                  settings={ok || onlyName ? (presetSchema.safeParse({ ...draft, name: draft.name || "preview" }).data ?? null) : null}
                />
              </div>
            )}
            <p className="mt-3 border-t border-paper-200 pt-2 text-[11px] text-ink-muted">
              {ok || onlyName ? presetLine(draft) : "Fix the settings marked in the form to see the summary."}
            </p>
          </Panel>
          {detail && detail.versions.length > 0 && (
            <Panel title="Versions" titleId="preset-versions">
              <ol className="flex flex-col gap-1 text-xs">
                {detail.versions.map((v) => (
                  <li key={v.id} className="flex justify-between gap-3 text-ink-soft">
                    <span className="figure font-medium text-ink">v{v.version}</span>
                    <Ago iso={v.createdAt} />
                  </li>
                ))}
              </ol>
              <p className="mt-2 text-[11px] text-ink-muted">Outputs keep pointing at the version that made them.</p>
            </Panel>
          )}
        </div>
      </div>
    </form>
  );
}
