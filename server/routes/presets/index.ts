import { Router } from "express";
import { API } from "../../../shared/api";
import { noPrintAreaProblem } from "../../../shared/paper";
import type { Preset } from "../../../shared/schemas/presets";
import { badRequest } from "../../errors";
import { handle } from "../define";
import { createPreset, getPreset, listPresets, updatePreset } from "../../services/presets";
import { previewPreset } from "../../services/preset-preview";
import type { AppDeps } from "../../app";

/**
 * A print preset whose paper holds no print area (margins or an area larger than the paper) would
 * fail every output it is asked for: it is refused with the reason.
 */
function assertPrintArea(settings: Preset | undefined) {
  if (settings?.kind !== "print") return;
  const problem = noPrintAreaProblem(settings);
  if (problem) throw badRequest(`${problem}.`, "settings.layout");
}

export function presetsRouter({ database, library }: AppDeps): Router {
  const router = Router();
  const { db } = database;
  handle(router, API.presetsList, async () => ({ presets: await listPresets(db) }));
  handle(router, API.presetsGet, ({ params }) => getPreset(db, params.id));
  handle(router, API.presetsCreate, async ({ body, user, res }) => {
    assertPrintArea(body.settings);
    const out = await createPreset(db, user.id, body);
    res.status(201);
    return out;
  });
  handle(router, API.presetsPreview, ({ body }) => previewPreset(db, library, body));
  handle(router, API.presetsUpdate, ({ params, body, user }) => {
    assertPrintArea(body.settings);
    return updatePreset(db, user.id, params.id, body);
  });
  return router;
}
