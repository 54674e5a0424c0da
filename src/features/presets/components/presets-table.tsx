import { Link } from "react-router-dom";
import type { PresetSummary } from "../../../../shared/schemas/preset-api";
import { Ago } from "../../../components/ago";
import { EmptyNote, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { KIND_HINTS, KIND_LABELS, KIND_ORDER, presetLine } from "../format";

/** Presets grouped by kind (web, print, mock-up, master), each with its newest version. */
export function PresetsByKind({ presets, canEdit }: { presets: PresetSummary[]; canEdit: boolean }) {
  return (
    <div className="flex flex-col gap-6">
      {KIND_ORDER.map((kind) => {
        const list = presets.filter((p) => p.kind === kind).sort((a, b) => a.name.localeCompare(b.name));
        return (
          <Panel
            key={kind}
            title={`${KIND_LABELS[kind]} · ${KIND_HINTS[kind].toLowerCase()}`}
            titleId={`presets-${kind}`}
            bodyClassName="p-0"
            actions={
              canEdit && (
                <Link to={`${paths.presetNew}?kind=${kind}`} className="text-xs font-medium text-accent hover:underline">
                  New {KIND_LABELS[kind].toLowerCase()} preset
                </Link>
              )
            }
          >
            {list.length === 0 ? (
              <div className="px-5 py-3">
                <EmptyNote>
                  No {KIND_LABELS[kind].toLowerCase()} preset yet.
                  {kind === "master" &&
                    " Every approved piece gets its archival TIFF master anyway; a master preset makes another archival file (a PNG, another bit depth) in a batch."}
                </EmptyNote>
              </div>
            ) : (
              <table className="w-full table-fixed text-sm">
                <thead className="sr-only">
                  <tr>
                    <th scope="col">Preset</th>
                    <th scope="col">Makes</th>
                    <th scope="col">Version</th>
                    <th scope="col">Changed</th>
                  </tr>
                </thead>
                <tbody>
                  {list.map((p) => (
                    <tr key={p.id} className="border-b border-paper-200 last:border-0 hover:bg-paper-100">
                      <td className="w-64 px-5 py-2.5">
                        <div className="flex items-center gap-2">
                          {canEdit ? (
                            <Link to={paths.preset(p.id)} className="font-semibold text-ink hover:text-accent hover:underline">
                              {p.name}
                            </Link>
                          ) : (
                            <span className="font-semibold text-ink">{p.name}</span>
                          )}
                          {p.builtIn && (
                            <span className="rounded-full bg-paper-200 px-2 py-0.5 text-[11px] font-medium text-ink-soft">Built in</span>
                          )}
                        </div>
                      </td>
                      <td className="px-3 py-2.5 text-xs text-ink-soft">{presetLine(p.settings)}</td>
                      <td className="figure w-16 px-3 py-2.5 text-xs text-ink-soft">v{p.version}</td>
                      <td className="w-44 px-5 py-2.5 text-right text-xs whitespace-nowrap text-ink-muted">
                        <Ago iso={p.updatedAt} />
                        {canEdit && (
                          <Link
                            to={`${paths.presetNew}?from=${p.id}`}
                            className="ml-3 font-medium text-accent hover:underline"
                            aria-label={`Make a copy of ${p.name}`}
                          >
                            Copy…
                          </Link>
                        )}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
            )}
          </Panel>
        );
      })}
    </div>
  );
}
