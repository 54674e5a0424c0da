import path from "node:path";
import type { Config } from "../../server/config";
import { ensureDatabaseExists, migrateDatabase, openDatabase } from "../../server/db";
import { ensureFirstAdmin, ensureStudio, type FirstAdmin } from "../../server/services/bootstrap";
import { startIntake } from "../../server/services/intakes";
import { ensureBuiltInRecipes } from "../../server/services/recipes";
import { ensureBuiltInPresets } from "../../server/services/presets";
import { startBoss } from "../../server/jobs/boss";
import { logger } from "../../server/logger";
import { asc, eq } from "drizzle-orm";
import { users } from "../../server/db/schema";
import { startCluster } from "./pg-cluster";
import { DEMO_INTAKES, DEMO_STUDIO_NAME, createDemoPresets, dropDemoScans } from "./demo";

/** Cluster options for this configuration (the private cluster lives under the data folder). */
export function clusterOptions(cfg: Config) {
  return { dir: path.join(cfg.dataDir, "pg"), port: cfg.dbPort };
}

/**
 * Brings the database to a working state: the private cluster running (unless DATABASE_URL points
 * elsewhere), the database created, migrations applied, the job queue's schema in place, the
 * studio and first admin created, and on a new demo studio the sample scans dropped in the inbox.
 */
export async function prepare(
  cfg: Config,
  opts: { cluster: boolean },
): Promise<{ startedCluster: boolean; admin: FirstAdmin | null; demoFiles: string[] }> {
  const startedCluster = opts.cluster ? startCluster({ ...clusterOptions(cfg), log: (l) => console.log(l) }) : false;
  await ensureDatabaseExists(cfg.databaseUrl);
  const database = openDatabase(cfg.databaseUrl, 2);
  try {
    await migrateDatabase(database.db);
    const boss = await startBoss({ url: cfg.databaseUrl, log: logger, supervise: false });
    await boss.stop({ graceful: false, wait: true });
    const admin = await ensureFirstAdmin(database.db, cfg);
    await ensureBuiltInRecipes(database.db);
    await ensureBuiltInPresets(database.db);
    const fresh = await ensureStudio(database.db, cfg, cfg.demo ? DEMO_STUDIO_NAME : "My studio", cfg.demo);
    let demoFiles: string[] = [];
    if (fresh && cfg.demo) {
      for (const name of DEMO_INTAKES) await startIntake(database.db, name);
      const [first] = await database.db
        .select({ id: users.id })
        .from(users)
        .where(eq(users.role, "admin"))
        .orderBy(asc(users.createdAt))
        .limit(1);
      if (first) await createDemoPresets(database.db, first.id);
      demoFiles = await dropDemoScans(cfg.inboxDir);
    }
    return { startedCluster, admin, demoFiles };
  } finally {
    await database.close();
  }
}
