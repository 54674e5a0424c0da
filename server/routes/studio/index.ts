import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { studio } from "../../db/schema";
import type { Studio } from "../../../shared/schemas/studio";
import type { AppDeps } from "../../app";
import { getStudioSettings, updateStudioSettings } from "../../services/studio";
import { mastersRights, writeMastersRights } from "../../services/masters-rights";

export function studioRouter({ database, config, boss }: AppDeps): Router {
  const router = Router();
  handle(router, API.health, () => ({ ok: true }));
  handle(router, API.studio, async () => {
    const [row] = await database.db.select().from(studio).limit(1);
    const body: Studio = {
      name: row?.name ?? "Platen studio",
      defaultDpi: row?.defaultDpi ?? config.defaultDpi,
      demo: row?.demo ?? false,
    };
    return { studio: body };
  });
  handle(router, API.studioSettings, async () => ({ settings: await getStudioSettings(database.db, config) }));
  handle(router, API.studioUpdate, async ({ body }) => ({ settings: await updateStudioSettings(database.db, config, body) }));
  handle(router, API.mastersRights, async () => ({ rights: await mastersRights(database.db) }));
  handle(router, API.mastersRightsWrite, async ({ body }) => writeMastersRights({ database, boss }, body));
  return router;
}
