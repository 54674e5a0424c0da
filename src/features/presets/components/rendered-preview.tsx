import type { Preset } from "../../../../shared/schemas/presets";
import { useDebounced } from "../../../lib/use-debounced";
import { usePresetPreview } from "../api/preview-preset";

/**
 * What the preset really makes of the chosen fragment, rendered on the server by the same code a
 * batch runs (the mock-up composed, the print on its page), with the report's size and warnings.
 */
export function RenderedPreview({ fragmentId, settings }: { fragmentId: string | null; settings: Preset | null }) {
  const settled = useDebounced(settings, 400);
  const preview = usePresetPreview(fragmentId, settled);
  if (!fragmentId) {
    return <p className="text-sm text-ink-muted">Choose an approved fragment to see the real output.</p>;
  }
  if (!settings) return <p className="text-sm text-ink-muted">Fix the settings marked above to see the output.</p>;
  if (preview.isError) {
    return <p className="text-sm text-brick">The output could not be made: {(preview.error as Error).message}</p>;
  }
  const data = preview.data;
  return (
    <figure className="flex flex-col gap-2" aria-busy={preview.isFetching}>
      {data?.image ? (
        <img
          src={data.image}
          alt="The output as rendered"
          className={`max-h-80 w-auto self-start rounded border border-paper-300 shadow-sheet ${preview.isFetching ? "opacity-60" : ""}`}
        />
      ) : data ? (
        <p className="text-sm text-ink-soft">A PDF is made at the exact paper size; the drawing above shows its layout.</p>
      ) : (
        <p className="text-sm text-ink-muted">Rendering…</p>
      )}
      {data && (
        <figcaption className="text-xs text-ink-muted">
          <span className="figure">
            {data.report.pixelWidth} × {data.report.pixelHeight} px
          </span>
          {data.report.effectiveDpi ? (
            <span className="figure" data-testid="preview-dpi">
              {" "}
              · {Math.round(data.report.effectiveDpi)} DPI{" "}
              {/* Only a print is printed: a web copy's figure is the resolution its file records. */}
              <span className="font-sans">{settings.kind === "print" ? "as printed" : "recorded in the file"}</span>
            </span>
          ) : null}
          <span> · made on the server in </span>
          <span className="figure">{data.ms} ms</span>
          {data.report.warnings.map((w) => (
            <span key={w} className="mt-1 block text-ochre">
              {w}
            </span>
          ))}
        </figcaption>
      )}
    </figure>
  );
}
