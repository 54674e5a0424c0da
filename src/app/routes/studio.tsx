import { useRef, useState, type FormEvent } from "react";
import { updateStudioBody, type StudioSettings, COPYRIGHT_MAX, CREATOR_MAX } from "../../../shared/schemas/studio";
import { SET_DPI_MAX, SET_DPI_MIN } from "../../../shared/schemas/scans";
import { Ago } from "../../components/ago";
import { Button, Spinner } from "../../components/button";
import { TextField } from "../../components/field";
import { NotAllowed } from "../../components/not-allowed";
import { LoadError, Notice } from "../../components/notice";
import { PageHeader, Panel } from "../../components/panel";
import { useStudioSettings, useUpdateStudio } from "../../features/studio/api/studio-settings";
import { MastersRightsPanel } from "../../features/studio/components/masters-rights";
import { DemoMarkPanel } from "../../features/studio/components/demo-mark";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../lib/form-errors";
import { toast } from "../../lib/toast";
import { useFocusAfterRefusal } from "../../lib/use-focus-after-refusal";

export function StudioRoute() {
  const me = useSessionUser();
  const isAdmin = useHasRole("admin");
  if (!isAdmin) return <NotAllowed needed="admin" current={me.role} />;
  return <StudioPage />;
}

function StudioPage() {
  const settings = useStudioSettings();
  return (
    <>
      <title>Studio · Platen</title>
      <PageHeader
        title="Studio"
        description="The studio's name, the resolution assumed for scans that record none, and the rights every file carries."
      />
      {settings.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Loading the studio's settings…
        </p>
      ) : settings.isError ? (
        <LoadError error={settings.error} onRetry={() => void settings.refetch()} />
      ) : (
        <div className="flex flex-col gap-6">
          <DemoMarkPanel />
          <StudioForm latest={settings.data} />
        </div>
      )}
    </>
  );
}

type Field = "name" | "defaultDpi" | "creator" | "copyright";
const FIELDS = ["name", "defaultDpi", "creator", "copyright"] as const;

/** What the form holds, in the terms it compares with a saved version (trimmed, as it is sent). */
function sameAs(s: StudioSettings, form: { name: string; dpi: string; creator: string; copyright: string }): boolean {
  return (
    form.name.trim() === s.name &&
    form.dpi === String(s.defaultDpi) &&
    form.creator.trim() === (s.creator ?? "") &&
    form.copyright.trim() === (s.copyright ?? "")
  );
}

/**
 * The form starts from the saved settings. When they change elsewhere (another admin; the live
 * event reloads them), an untouched form takes the new values; one with unsaved edits keeps them
 * and says so, with a way to take the other version instead.
 */
function StudioForm({ latest }: { latest: StudioSettings }) {
  const update = useUpdateStudio();
  const [saved, setSaved] = useState(latest);
  const [name, setName] = useState(saved.name);
  const [dpi, setDpi] = useState(String(saved.defaultDpi));
  const [creator, setCreator] = useState(saved.creator ?? "");
  const [copyright, setCopyright] = useState(saved.copyright ?? "");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);

  const form = { name, dpi, creator, copyright };
  const formRef = useRef<HTMLFormElement>(null);
  // A refused save puts the caret in the first field it names, its text selected.
  const refused = useFocusAfterRefusal(formRef, update.isPending);
  const changed = !sameAs(saved, form);

  const adopt = (s: StudioSettings) => {
    setSaved(s);
    setName(s.name);
    setDpi(String(s.defaultDpi));
    setCreator(s.creator ?? "");
    setCopyright(s.copyright ?? "");
    setErrors({});
  };
  // A newer version arrived: take it when nothing here would be lost (or it is what this form saved).
  const newer = latest.updatedAt !== saved.updatedAt;
  if (newer && (!changed || sameAs(latest, form))) adopt(latest);
  const overtaken = newer && changed && !sameAs(latest, form);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const parsed = updateStudioBody.safeParse({
      name,
      defaultDpi: dpi.trim() === "" ? Number.NaN : Number(dpi),
      creator,
      copyright,
    });
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      refused();
      return;
    }
    setErrors({});
    update.mutate(parsed.data, {
      onSuccess: () => {
        toast.success("Studio settings saved. Files made from now on carry them.");
        // The save button is disabled once nothing is left to save: a person who pressed it
        // keeps their place on the line that says it is saved, not at the top of the page.
        requestAnimationFrame(() => {
          const at = document.activeElement;
          if (at === document.body || (at instanceof HTMLButtonElement && at.disabled)) savedNote.current?.focus();
        });
      },
      onError: (error) => {
        const { field, message } = serverErrorFor(error, FIELDS);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
        refused();
      },
    });
  };

  const copyrightInput = useRef<HTMLInputElement>(null);
  const savedNote = useRef<HTMLSpanElement>(null);
  // The button goes once the line starts with ©, so the typing goes on in the line itself, after
  // what was put in (otherwise the focus falls to the page and the next keys are lost).
  const insertMark = () => {
    setCopyright((c) => (c.startsWith("©") ? c : `© ${new Date().getFullYear()} ${c || creator}`.trimEnd()));
    requestAnimationFrame(() => {
      const input = copyrightInput.current;
      if (!input) return;
      input.focus();
      input.setSelectionRange(input.value.length, input.value.length);
    });
  };

  const clear = (f: Field) => errors[f] && setErrors((e) => ({ ...e, [f]: undefined }));

  return (
    <div className="flex flex-col gap-6">
      <form ref={formRef} onSubmit={submit} noValidate aria-label="Studio settings" className="flex max-w-5xl flex-col gap-6">
        {formError && <Notice tone="error">{formError}</Notice>}
        {overtaken && (
          <div
            role="status"
            className="flex flex-wrap items-center gap-x-4 gap-y-2 rounded-md border border-ochre/40 bg-ochre-soft px-3 py-2 text-sm text-ink"
          >
            <span>
              These settings were changed elsewhere <Ago iso={latest.updatedAt} />. Your edits are kept here; saving them replaces that
              version.
            </span>
            <Button type="button" size="sm" variant="quiet" onClick={() => adopt(latest)}>
              Show the other version
            </Button>
          </div>
        )}
        <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-2">
          <Panel title="The studio" titleId="studio-title">
            <div className="flex flex-col gap-4">
              <TextField
                label="Name"
                value={name}
                maxLength={80}
                onChange={(e) => {
                  setName(e.target.value);
                  clear("name");
                }}
                error={errors.name}
                hint="Shown in the rail, on the sign-in page and in e-mails."
              />
              <TextField
                label="Assumed resolution (DPI)"
                inputMode="numeric"
                value={dpi}
                onChange={(e) => {
                  setDpi(e.target.value);
                  clear("defaultDpi");
                }}
                error={errors.defaultDpi}
                className="figure max-w-40"
                hint={`Used for a scan whose file records no resolution (${SET_DPI_MIN}–${SET_DPI_MAX}); such scans are marked "assumed". Scans already read keep theirs; an operator can set one on the scan's page.`}
              />
            </div>
          </Panel>
          <Panel title="Rights in every file" titleId="rights-title">
            <div className="flex flex-col gap-4">
              <TextField
                label="Creator"
                value={creator}
                maxLength={CREATOR_MAX}
                placeholder="The artist's name"
                onChange={(e) => {
                  setCreator(e.target.value);
                  clear("creator");
                }}
                error={errors.creator}
                hint="Written as the creator (artist) of every master and copy. Leave it empty to write none."
              />
              <div className="flex flex-col gap-1.5">
                <TextField
                  ref={copyrightInput}
                  label="Copyright line"
                  value={copyright}
                  maxLength={COPYRIGHT_MAX}
                  placeholder="© 2026 Mara Ilves. All rights reserved."
                  onChange={(e) => {
                    setCopyright(e.target.value);
                    clear("copyright");
                  }}
                  error={errors.copyright}
                  hint="Written as the copyright notice of every master and copy. Leave it empty to write none."
                />
                {!copyright.startsWith("©") && (
                  <div>
                    <Button type="button" size="sm" variant="quiet" onClick={insertMark}>
                      Start with © {new Date().getFullYear()}
                    </Button>
                  </div>
                )}
              </div>
              <p className="text-xs text-ink-muted">
                Masters and print files carry these fields, with the piece's own title; web copies when their preset says so; mock-ups none.
                Masters already made keep what they were made with until their rights are written in (below); batch copies are remade when
                their batch runs again.
              </p>
            </div>
          </Panel>
        </div>
        <div className="flex items-center gap-4">
          <Button type="submit" variant="primary" busy={update.isPending} disabled={!changed}>
            Save settings
          </Button>
          <span ref={savedNote} tabIndex={-1} className="text-xs text-ink-muted outline-none" data-testid="studio-saved">
            {changed ? (
              "Not saved yet."
            ) : saved.saved ? (
              <>
                Saved <Ago iso={saved.saved.at} />
                {saved.saved.by ? ` by ${saved.saved.by}` : ""}.
              </>
            ) : (
              "Not changed since the studio was set up."
            )}
          </span>
        </div>
      </form>
      <MastersRightsPanel unsaved={form.creator.trim() !== (saved.creator ?? "") || form.copyright.trim() !== (saved.copyright ?? "")} />
    </div>
  );
}
