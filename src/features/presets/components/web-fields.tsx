import { PRESET_LIMITS as L, type WebPreset } from "../../../../shared/schemas/presets";
import { boxHeight } from "../format";
import { Check, ColourInput, FieldGroup, NumberInput, Segments } from "./inputs";

type Errors = Record<string, string>;

export function WebFields({ p, set, errors }: { p: WebPreset; set: (p: WebPreset) => void; errors: Errors }) {
  const transparent = p.background === "transparent";
  return (
    <>
      <FieldGroup title="Size">
        <Segments
          label="Sized by"
          value={p.size.mode}
          onChange={(mode) => set({ ...p, size: mode === "longEdge" ? { mode, longEdge: 2048 } : { mode, aspect: "1:1", width: 1080 } })}
          options={[
            { value: "longEdge", label: "Long edge" },
            { value: "box", label: "A fixed box" },
          ]}
        />
        {p.size.mode === "longEdge" ? (
          <NumberInput
            label="Long edge"
            unit="px"
            limits={L.pixels}
            value={p.size.longEdge}
            error={errors["size.longEdge"]}
            onChange={(v) => set({ ...p, size: { mode: "longEdge", longEdge: v } })}
          />
        ) : (
          <div className="flex flex-wrap items-start gap-4">
            <Segments
              label="Shape"
              value={p.size.aspect}
              onChange={(aspect) => p.size.mode === "box" && set({ ...p, size: { ...p.size, aspect } })}
              options={[
                { value: "1:1", label: "Square 1:1" },
                { value: "4:5", label: "Portrait 4:5" },
                { value: "16:9", label: "Landscape 16:9" },
              ]}
            />
            <NumberInput
              label="Width"
              unit="px"
              limits={L.pixels}
              value={p.size.width}
              error={errors["size.width"]}
              hint={Number.isFinite(p.size.width) ? `Height ${boxHeight(p.size.width, p.size.aspect)} px` : undefined}
              onChange={(v) => p.size.mode === "box" && set({ ...p, size: { ...p.size, width: v } })}
            />
          </div>
        )}
        {p.size.mode === "box" && (
          <Segments
            label="Fit"
            value={p.fit}
            onChange={(fit) => set({ ...p, fit })}
            options={[
              { value: "contain", label: "Whole piece, padded" },
              { value: "cover", label: "Fill the box, crop" },
            ]}
          />
        )}
        <Check
          label="Enlarge small pieces"
          checked={p.enlarge}
          onChange={(enlarge) => set({ ...p, enlarge })}
          hint="Off: a piece smaller than the size keeps its own pixels"
        />
      </FieldGroup>
      <FieldGroup title="File">
        <Segments
          label="Format"
          value={p.format}
          onChange={(format) => set({ ...p, format, background: format === "jpeg" && transparent ? "#ffffff" : p.background })}
          options={[
            { value: "jpeg", label: "JPEG" },
            { value: "webp", label: "WebP" },
            { value: "avif", label: "AVIF" },
            { value: "png", label: "PNG" },
          ]}
        />
        {p.format !== "png" && (
          <NumberInput
            label="Quality"
            limits={L.quality}
            value={p.quality}
            error={errors["quality"]}
            onChange={(quality) => set({ ...p, quality })}
          />
        )}
        <div className="flex flex-wrap items-end gap-4">
          {!transparent && (
            <ColourInput
              label="Background"
              value={p.background}
              error={errors["background"]}
              onChange={(background) => set({ ...p, background })}
            />
          )}
          <Check
            label="Transparent background"
            checked={transparent}
            onChange={(on) => set({ ...p, background: on ? "transparent" : "#ffffff" })}
            hint={p.format === "jpeg" ? "JPEG has no transparency" : "For cut-outs and padding"}
          />
        </div>
        {errors["background"] && transparent && <p className="text-[11px] font-medium text-brick">{errors["background"]}</p>}
        <Check
          label="Convert to sRGB"
          checked={p.toSrgb}
          onChange={(toSrgb) => set({ ...p, toSrgb })}
          hint="The colour space screens and browsers assume"
        />
      </FieldGroup>
      <FieldGroup title="Metadata kept">
        <div className="grid grid-cols-2 gap-2">
          {(["title", "creator", "copyright", "resolution"] as const).map((k) => (
            <Check
              key={k}
              label={k[0]!.toUpperCase() + k.slice(1)}
              checked={p.keep[k]}
              onChange={(on) => set({ ...p, keep: { ...p.keep, [k]: on } })}
            />
          ))}
        </div>
        <p className="text-[11px] text-ink-muted">Location and camera data are never copied.</p>
      </FieldGroup>
    </>
  );
}
