import { PAPER_NAMES, PLACEMENTS, type Placement } from "../../../../shared/paper";
import { PRESET_LIMITS as L, type PrintPreset } from "../../../../shared/schemas/presets";
import { SelectField } from "../../../components/field";
import { cn } from "../../../lib/cn";
import { paperLabel } from "../format";
import { Check, FieldGroup, NumberInput, Segments } from "./inputs";

type Errors = Record<string, string>;

/** The nine placements laid out as they sit on the page. */
const PLACEMENT_GRID: Placement[] = ["top-left", "top", "top-right", "left", "centre", "right", "bottom-left", "bottom", "bottom-right"];

export function PrintFields({ p, set, errors }: { p: PrintPreset; set: (p: PrintPreset) => void; errors: Errors }) {
  const scale = p.scale;
  return (
    <>
      <FieldGroup title="Paper">
        <div className="flex flex-wrap items-start gap-4">
          <SelectField
            label="Paper"
            value={p.paper.size}
            fieldClassName="w-44"
            onChange={(e) => {
              const size = e.target.value as PrintPreset["paper"]["size"];
              set({
                ...p,
                paper: size === "custom" ? { size, widthMm: p.paper.widthMm ?? 210, heightMm: p.paper.heightMm ?? 297 } : { size },
              });
            }}
          >
            {PAPER_NAMES.map((n) => (
              <option key={n} value={n}>
                {paperLabel(n)}
              </option>
            ))}
          </SelectField>
          {p.paper.size === "custom" && (
            <>
              <NumberInput
                label="Width"
                unit="mm"
                limits={L.customPaperMm}
                value={p.paper.widthMm ?? Number.NaN}
                error={errors["paper.widthMm"]}
                onChange={(v) => set({ ...p, paper: { ...p.paper, widthMm: v } })}
              />
              <NumberInput
                label="Height"
                unit="mm"
                limits={L.customPaperMm}
                value={p.paper.heightMm ?? Number.NaN}
                error={errors["paper.heightMm"]}
                onChange={(v) => set({ ...p, paper: { ...p.paper, heightMm: v } })}
              />
            </>
          )}
        </div>
        <Segments
          label="Orientation"
          value={p.orientation}
          onChange={(orientation) => set({ ...p, orientation })}
          options={[
            { value: "auto", label: "Follow the piece" },
            { value: "portrait", label: "Portrait" },
            { value: "landscape", label: "Landscape" },
          ]}
        />
      </FieldGroup>
      <FieldGroup title="Print area">
        <Segments
          label="Set by"
          value={p.layout.mode}
          onChange={(mode) =>
            set({
              ...p,
              layout: mode === "area" ? { mode, widthIn: 8, heightIn: 10 } : { mode, top: 10, right: 10, bottom: 10, left: 10 },
            })
          }
          options={[
            { value: "area", label: "A size, centred" },
            { value: "margins", label: "Margins" },
          ]}
        />
        {p.layout.mode === "area" ? (
          <div className="flex flex-wrap gap-4">
            <NumberInput
              label="Width"
              unit="in"
              step={0.25}
              limits={L.areaIn}
              value={p.layout.widthIn}
              error={errors["layout.widthIn"]}
              onChange={(v) => p.layout.mode === "area" && set({ ...p, layout: { ...p.layout, widthIn: v } })}
            />
            <NumberInput
              label="Height"
              unit="in"
              step={0.25}
              limits={L.areaIn}
              value={p.layout.heightIn}
              error={errors["layout.heightIn"]}
              onChange={(v) => p.layout.mode === "area" && set({ ...p, layout: { ...p.layout, heightIn: v } })}
            />
          </div>
        ) : (
          <div className="flex flex-wrap gap-4">
            {(["top", "right", "bottom", "left"] as const).map((side) => (
              <NumberInput
                key={side}
                label={side[0]!.toUpperCase() + side.slice(1)}
                unit="mm"
                limits={L.marginMm}
                value={p.layout.mode === "margins" ? p.layout[side] : 0}
                error={errors[`layout.${side}`]}
                onChange={(v) => p.layout.mode === "margins" && set({ ...p, layout: { ...p.layout, [side]: v } })}
              />
            ))}
          </div>
        )}
        {errors["layout"] && (
          <p role="alert" className="text-[11px] font-medium text-brick" data-testid="print-area-error">
            {errors["layout"]}
          </p>
        )}
      </FieldGroup>
      <FieldGroup title="The piece on the page">
        <Segments
          label="Scale"
          value={scale.mode}
          onChange={(mode) => set({ ...p, scale: mode === "exact" ? { mode, widthIn: 6 } : { mode } })}
          options={[
            { value: "fit", label: "Fit", title: "The whole piece, as large as the print area allows" },
            { value: "fill", label: "Fill", title: "The print area covered; the overflow is cropped" },
            { value: "exact", label: "Exact size", title: "A printed width or height in inches" },
          ]}
          hint={
            scale.mode === "fit"
              ? "The whole piece, as large as the print area allows."
              : scale.mode === "fill"
                ? "The print area covered; what overflows is cropped."
                : "A printed width or height; the other follows the piece's shape."
          }
        />
        {scale.mode === "exact" && (
          <div className="flex flex-wrap items-start gap-4">
            <Segments
              label="Exact"
              value={scale.widthIn !== undefined ? "width" : "height"}
              onChange={(side) =>
                set({
                  ...p,
                  scale:
                    side === "width" ? { mode: "exact", widthIn: scale.heightIn ?? 6 } : { mode: "exact", heightIn: scale.widthIn ?? 6 },
                })
              }
              options={[
                { value: "width", label: "Width" },
                { value: "height", label: "Height" },
              ]}
            />
            <NumberInput
              label={scale.widthIn !== undefined ? "Printed width" : "Printed height"}
              unit="in"
              step={0.25}
              limits={L.exactIn}
              value={scale.widthIn ?? scale.heightIn ?? Number.NaN}
              error={errors["scale.widthIn"] ?? errors["scale.heightIn"] ?? errors["scale"]}
              onChange={(v) =>
                set({ ...p, scale: scale.widthIn !== undefined ? { mode: "exact", widthIn: v } : { mode: "exact", heightIn: v } })
              }
            />
          </div>
        )}
        <div className="flex flex-col gap-1">
          <span className="text-xs font-medium text-ink-soft" id="placement-label">
            Placement in the print area
          </span>
          <div
            role="radiogroup"
            aria-labelledby="placement-label"
            className="grid w-fit grid-cols-3 gap-1 rounded-md border border-paper-300 bg-white p-1"
          >
            {PLACEMENT_GRID.map((pl) => (
              <button
                key={pl}
                type="button"
                role="radio"
                aria-checked={p.placement === pl}
                aria-label={pl.replace("-", " ")}
                title={pl.replace("-", " ")}
                onClick={() => set({ ...p, placement: pl })}
                className={cn(
                  "flex size-7 items-center justify-center rounded",
                  p.placement === pl ? "bg-accent text-white" : "text-ink-muted hover:bg-paper-200",
                )}
              >
                <span className="size-2 rounded-sm bg-current" />
              </button>
            ))}
          </div>
          {!PLACEMENTS.includes(p.placement) && <p className="text-[11px] text-brick">Unknown placement</p>}
        </div>
        <div className="flex flex-wrap gap-6">
          <Check
            label="Crop marks"
            checked={p.cropMarks}
            onChange={(cropMarks) => set({ ...p, cropMarks })}
            hint="Short lines outside the print area's corners, for trimming"
          />
          <Check
            label="Caption line"
            checked={p.caption}
            onChange={(caption) => set({ ...p, caption })}
            hint="Title and printed size under the piece"
          />
        </div>
      </FieldGroup>
      <FieldGroup title="Resolution and file">
        <div className="flex flex-wrap gap-4">
          <NumberInput
            label="Print DPI"
            unit="DPI"
            limits={L.printDpi}
            value={p.printDpi}
            error={errors["printDpi"]}
            onChange={(printDpi) => set({ ...p, printDpi })}
            hint="The file's pixels per inch (300 is usual)"
          />
          <NumberInput
            label="Warn below"
            unit="DPI"
            limits={L.minDpi}
            value={p.minDpi}
            error={errors["minDpi"]}
            onChange={(minDpi) => set({ ...p, minDpi })}
            hint="Effective resolution; 300 is common practice"
          />
        </div>
        <Segments
          label="Output"
          value={p.output}
          onChange={(output) => set({ ...p, output })}
          options={[
            { value: "tiff", label: "TIFF" },
            { value: "pdf", label: "PDF (exact paper size)" },
          ]}
        />
      </FieldGroup>
    </>
  );
}
