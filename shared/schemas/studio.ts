import { z } from "zod";

export const studioSchema = z.object({
  name: z.string(),
  defaultDpi: z.number(),
  demo: z.boolean(),
});
export type Studio = z.infer<typeof studioSchema>;
export const studioResponse = z.object({ studio: studioSchema });
