import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { createPreset, getPreset, listPresets, updatePreset } from "../../services/presets";
import { previewPreset } from "../../services/preset-preview";
import type { AppDeps } from "../../app";

export function presetsRouter({ database, library }: AppDeps): Router {
  const router = Router();
  const { db } = database;
  handle(router, API.presetsList, async () => ({ presets: await listPresets(db) }));
  handle(router, API.presetsGet, ({ params }) => getPreset(db, params.id));
  handle(router, API.presetsCreate, async ({ body, user, res }) => {
    const out = await createPreset(db, user.id, body);
    res.status(201);
    return out;
  });
  handle(router, API.presetsPreview, ({ body }) => previewPreset(db, library, body));
  handle(router, API.presetsUpdate, ({ params, body, user }) => updatePreset(db, user.id, params.id, body));
  return router;
}
