ALTER TABLE "fragments" ADD COLUMN "render_job_id" text;--> statement-breakpoint
ALTER TABLE "fragments" ADD COLUMN "render_claimed_at" timestamp with time zone;