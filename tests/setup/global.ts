import { runPrefix, templateDb, urlFor, withAdmin } from "../helpers/db";

/** Drops this run's databases, and those of runs that started more than six hours ago. */
async function dropDatabases(mine: boolean) {
  await withAdmin(async (c) => {
    const { rows } = await c.query<{ datname: string }>("select datname from pg_database where datname like 'platen\\_t\\_%'");
    const cutoff = Date.now() / 1000 - 6 * 3600;
    for (const { datname } of rows) {
      const started = Number(datname.split("_")[2]);
      if ((mine && datname.startsWith(runPrefix())) || started < cutoff) {
        await c.query(`drop database if exists ${datname} with (force)`);
      }
    }
  });
}

/**
 * Once per run: build the template database (migrations and the job queue's schema) that every
 * test file clones its own database from; afterwards drop all of this run's databases.
 */
export default async function setup() {
  if (!process.env.PLATEN_TEST_ADMIN_URL) {
    throw new Error("Run the tests with `npm test`: it starts the private PostgreSQL cluster first.");
  }
  await dropDatabases(false);
  const template = templateDb();
  await withAdmin((c) => c.query(`create database ${template}`));
  const { overrideConfig } = await import("../../server/config");
  overrideConfig({ DATABASE_URL: urlFor(template), LOG_LEVEL: "warn" });
  const { openDatabase, migrateDatabase } = await import("../../server/db");
  const { startBoss } = await import("../../server/jobs/boss");
  const { logger } = await import("../../server/logger");
  const database = openDatabase(urlFor(template), 2);
  await migrateDatabase(database.db);
  const { ensureBuiltInRecipes } = await import("../../server/services/recipes");
  await ensureBuiltInRecipes(database.db);
  const { ensureBuiltInPresets } = await import("../../server/services/presets");
  await ensureBuiltInPresets(database.db);
  await database.close();
  const boss = await startBoss({ url: urlFor(template), log: logger, supervise: false });
  await boss.stop({ graceful: false, wait: true });
  return () => dropDatabases(true);
}
