import { PRESET_LIMITS as L, type MockupPreset } from "../../../../shared/schemas/presets";
import { ColourInput, FieldGroup, NumberInput, Segments } from "./inputs";

type Errors = Record<string, string>;

export function MockupFields({ p, set, errors }: { p: MockupPreset; set: (p: MockupPreset) => void; errors: Errors }) {
  return (
    <>
      <FieldGroup title="Frame and mat">
        <div className="flex flex-wrap items-start gap-4">
          <NumberInput
            label="Frame width"
            unit="mm"
            limits={L.frameMm}
            value={p.frameWidthMm}
            error={errors["frameWidthMm"]}
            onChange={(frameWidthMm) => set({ ...p, frameWidthMm })}
          />
          <ColourInput
            label="Frame colour"
            value={p.frameColour}
            error={errors["frameColour"]}
            onChange={(frameColour) => set({ ...p, frameColour })}
          />
        </div>
        <div className="flex flex-wrap items-start gap-4">
          <NumberInput
            label="Mat width"
            unit="mm"
            limits={L.matMm}
            value={p.matWidthMm}
            error={errors["matWidthMm"]}
            onChange={(matWidthMm) => set({ ...p, matWidthMm })}
          />
          <ColourInput
            label="Mat colour"
            value={p.matColour}
            error={errors["matColour"]}
            onChange={(matColour) => set({ ...p, matColour })}
          />
        </div>
      </FieldGroup>
      <FieldGroup title="Wall and light">
        <ColourInput
          label="Wall colour"
          value={p.wallColour}
          error={errors["wallColour"]}
          onChange={(wallColour) => set({ ...p, wallColour })}
        />
        <div className="flex flex-wrap items-start gap-4">
          <NumberInput
            label="Light from"
            unit="°"
            step={15}
            limits={L.lightDeg}
            value={p.lightDeg}
            error={errors["lightDeg"]}
            hint="Clockwise from up; 315 = top left"
            onChange={(lightDeg) => set({ ...p, lightDeg })}
          />
          <NumberInput
            label="Shadow"
            step={0.05}
            limits={L.shadow}
            value={p.shadow}
            error={errors["shadow"]}
            hint="0 none – 1 strong"
            onChange={(shadow) => set({ ...p, shadow })}
          />
        </div>
      </FieldGroup>
      <FieldGroup title="Image">
        <div className="flex flex-wrap items-start gap-4">
          <NumberInput
            label="Width"
            unit="px"
            limits={L.pixels}
            value={p.width}
            error={errors["width"]}
            onChange={(width) => set({ ...p, width })}
          />
          <NumberInput
            label="Height"
            unit="px"
            limits={L.pixels}
            value={p.height}
            error={errors["height"]}
            onChange={(height) => set({ ...p, height })}
          />
        </div>
        <Segments
          label="Format"
          value={p.format}
          onChange={(format) => set({ ...p, format })}
          options={[
            { value: "jpeg", label: "JPEG" },
            { value: "webp", label: "WebP" },
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
      </FieldGroup>
    </>
  );
}
