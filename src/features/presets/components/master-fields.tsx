import type { MasterPreset } from "../../../../shared/schemas/presets";
import { Check, FieldGroup, Segments } from "./inputs";

type Errors = Record<string, string>;

export function MasterFields({ p, set, errors }: { p: MasterPreset; set: (p: MasterPreset) => void; errors: Errors }) {
  const compression = p.compression ?? "default";
  return (
    <>
      <FieldGroup title="File">
        <Segments
          label="Format"
          value={p.format}
          onChange={(format) => set({ ...p, format, compression: format === "png" && p.compression === "lzw" ? undefined : p.compression })}
          options={[
            { value: "tiff", label: "TIFF" },
            { value: "png", label: "PNG" },
          ]}
        />
        <Segments
          label="Bit depth"
          value={String(p.bitDepth) as "8" | "16" | "source"}
          onChange={(v) => set({ ...p, bitDepth: v === "source" ? "source" : (Number(v) as 8 | 16) })}
          options={[
            { value: "source", label: "As scanned" },
            { value: "8", label: "8-bit" },
            { value: "16", label: "16-bit" },
          ]}
        />
        <Segments
          label="Compression"
          value={compression}
          onChange={(v) => set({ ...p, compression: v === "default" ? undefined : v })}
          options={[
            { value: "default", label: p.format === "tiff" ? "Default (LZW)" : "Default (Deflate)" },
            ...(p.format === "tiff" ? [{ value: "lzw" as const, label: "LZW" }] : []),
            { value: "deflate", label: "Deflate" },
            { value: "none", label: "None" },
          ]}
        />
        {errors["compression"] && <p className="text-[11px] font-medium text-brick">{errors["compression"]}</p>}
      </FieldGroup>
      <FieldGroup title="Kept in the file">
        <Check
          label="Transparency"
          checked={p.keepAlpha}
          onChange={(keepAlpha) => set({ ...p, keepAlpha })}
          hint="Cut-outs keep their shape"
        />
        <Check
          label="Resolution"
          checked={p.embedResolution}
          onChange={(embedResolution) => set({ ...p, embedResolution })}
          hint="The scanned DPI, so printed sizes stay true"
        />
      </FieldGroup>
    </>
  );
}
