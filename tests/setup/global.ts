import { TEMPLATE_DB, urlFor, withAdmin } from "../helpers/db";

/**
 * Once per run: drop what earlier runs left behind and build the template database (migrations and
 * the job queue's schema) that every test file clones its own database from.
 */
export default async function setup() {
  if (!process.env.PLATEN_TEST_ADMIN_URL) {
    throw new Error("Run the tests with `npm test`: it starts the private PostgreSQL cluster first.");
  }
  await withAdmin(async (c) => {
    const { rows } = await c.query<{ datname: string }>("select datname from pg_database where datname like 'platen_test_%'");
    for (const r of rows) await c.query(`drop database if exists ${r.datname} with (force)`);
    await c.query(`create database ${TEMPLATE_DB}`);
  });
  const { overrideConfig } = await import("../../server/config");
  overrideConfig({ DATABASE_URL: urlFor(TEMPLATE_DB), LOG_LEVEL: "warn" });
  const { openDatabase, migrateDatabase } = await import("../../server/db");
  const { startBoss } = await import("../../server/jobs/boss");
  const { logger } = await import("../../server/logger");
  const database = openDatabase(urlFor(TEMPLATE_DB), 2);
  await migrateDatabase(database.db);
  await database.close();
  const boss = await startBoss({ url: urlFor(TEMPLATE_DB), log: logger, supervise: false });
  await boss.stop({ graceful: false, wait: true });
  return async () => {
    await withAdmin(async (c) => {
      const { rows } = await c.query<{ datname: string }>("select datname from pg_database where datname like 'platen_test_%'");
      for (const r of rows) await c.query(`drop database if exists ${r.datname} with (force)`);
    });
  };
}
