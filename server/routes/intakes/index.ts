import { Router } from "express";
import { count, desc, eq } from "drizzle-orm";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { intakes, scans } from "../../db/schema";
import { startIntake } from "../../services/intakes";
import type { Intake } from "../../../shared/schemas/scans";
import type { AppDeps } from "../../app";

export function intakesRouter({ database }: AppDeps): Router {
  const router = Router();
  const { db } = database;
  handle(router, API.intakesList, async () => {
    const rows = await db
      .select({ intake: intakes, scanCount: count(scans.id) })
      .from(intakes)
      .leftJoin(scans, eq(scans.intakeId, intakes.id))
      .groupBy(intakes.id)
      .orderBy(desc(intakes.createdAt));
    const currentId = rows.find((r) => r.intake.closedAt == null)?.intake.id;
    const list: Intake[] = rows.map((r) => ({
      id: r.intake.id,
      name: r.intake.name,
      createdAt: r.intake.createdAt.toISOString(),
      scanCount: r.scanCount,
      current: r.intake.id === currentId,
    }));
    return { intakes: list };
  });
  handle(router, API.intakesCreate, async ({ body, res }) => {
    const row = await startIntake(db, body.name);
    res.status(201);
    const intake: Intake = { id: row.id, name: row.name, createdAt: row.createdAt.toISOString(), scanCount: 0, current: true };
    return { intake };
  });
  return router;
}
