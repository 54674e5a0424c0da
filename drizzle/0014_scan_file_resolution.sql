-- What a scan's file itself records as its resolution, kept beside the figure in use so a scan
-- whose resolution an operator set by hand can go back to the file's (null: the file records none).
ALTER TABLE "scans" ADD COLUMN "file_dpi_x" real;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "file_dpi_y" real;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "file_resolution_origin" text;--> statement-breakpoint
UPDATE "scans" SET "file_dpi_x" = "dpi_x", "file_dpi_y" = "dpi_y", "file_resolution_origin" = "resolution_origin"
  WHERE "dpi_source"::text = 'embedded';--> statement-breakpoint
-- (Compared as text: the enum's 'set' is new in this same migration run on a fresh database.)
-- A scan set by hand before this column existed: its first "scan.resolution" audit row holds the
-- figure it had before, the file's when that was embedded.
UPDATE "scans" s SET
    "file_dpi_x" = (a."before" ->> 'dpiX')::real,
    "file_dpi_y" = (a."before" ->> 'dpiY')::real,
    "file_resolution_origin" = a."before" ->> 'resolutionOrigin'
  FROM (
    SELECT DISTINCT ON ("subject_id") "subject_id", "before"
      FROM "audit_events"
      WHERE "action" = 'scan.resolution' AND "subject_type" = 'scan'
      ORDER BY "subject_id", "id"
  ) a
  WHERE s."dpi_source"::text = 'set' AND a."subject_id" = s."id"::text AND a."before" ->> 'dpiSource' = 'embedded';
