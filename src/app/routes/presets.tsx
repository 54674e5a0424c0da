import { Link } from "react-router-dom";
import { Spinner } from "../../components/button";
import { LoadError } from "../../components/notice";
import { EmptyNote, PageHeader } from "../../components/panel";
import { paths } from "../../config/paths";
import { usePresets } from "../../features/presets/api/get-presets";
import { PresetsByKind } from "../../features/presets/components/presets-table";
import { useHasRole } from "../../lib/authorization";

export function PresetsRoute() {
  const presets = usePresets();
  const canEdit = useHasRole("operator");
  return (
    <>
      <title>Presets · Platen</title>
      <PageHeader
        title="Presets"
        description="Output recipes: how a master becomes a web copy, a print file or a mock-up. Each save is a new version."
        actions={
          canEdit && (
            <Link
              to={paths.batchNew}
              className="inline-flex h-10 items-center rounded-md bg-accent px-4 text-sm font-medium text-paper-50 hover:bg-accent-strong"
            >
              Make copies in a batch…
            </Link>
          )
        }
      />
      {presets.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Loading presets…
        </p>
      ) : presets.isError && !presets.data ? (
        <LoadError error={presets.error} onRetry={() => void presets.refetch()} />
      ) : presets.data.length === 0 ? (
        <EmptyNote>No presets yet.</EmptyNote>
      ) : (
        <PresetsByKind presets={presets.data} canEdit={canEdit} />
      )}
    </>
  );
}
