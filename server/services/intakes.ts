import { and, desc, eq, isNull, ne } from "drizzle-orm";
import type { Db } from "../db";
import { intakes } from "../db/schema";
import { recordAudit } from "./audit";

/** Default name of an intake opened automatically: "Intake 1 Dec 2026". */
export function defaultIntakeName(now = new Date()): string {
  return `Intake ${now.toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric", timeZone: "UTC" })}`;
}

/** The newest open intake, opening one when none is open. */
export async function currentIntake(db: Db): Promise<typeof intakes.$inferSelect> {
  const [open] = await db.select().from(intakes).where(isNull(intakes.closedAt)).orderBy(desc(intakes.createdAt)).limit(1);
  if (open) return open;
  const [created] = await db.insert(intakes).values({ name: defaultIntakeName() }).returning();
  return created!;
}

/** Starts a new scanning session: closes the open intakes and opens one with this name. */
export async function startIntake(db: Db, name: string): Promise<typeof intakes.$inferSelect> {
  return db.transaction(async (tx) => {
    const [created] = await tx.insert(intakes).values({ name }).returning();
    const closed = await tx
      .update(intakes)
      .set({ closedAt: new Date(), updatedAt: new Date() })
      .where(and(isNull(intakes.closedAt), ne(intakes.id, created!.id)))
      .returning({ id: intakes.id, name: intakes.name });
    await recordAudit(tx, {
      action: "intake.create",
      subjectType: "intake",
      subjectId: created!.id,
      summary: `Started the intake "${name}"${closed.length ? `, closing ${closed.map((c) => `"${c.name}"`).join(", ")}` : ""}`,
      after: { name, closed: closed.map((c) => c.id) },
    });
    return created!;
  });
}

export async function findIntake(db: Db, id: string) {
  const [row] = await db.select().from(intakes).where(eq(intakes.id, id));
  return row ?? null;
}
