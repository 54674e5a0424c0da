import { z } from "zod";

/** Payload of the analyse job: which scan to read. */
export const analysePayload = z.object({ scanId: z.uuid() });
export type AnalysePayload = z.infer<typeof analysePayload>;
