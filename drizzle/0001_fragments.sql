CREATE TYPE "public"."fragment_shape" AS ENUM('rectangle', 'cutout');--> statement-breakpoint
CREATE TYPE "public"."fragment_status" AS ENUM('proposed', 'approved', 'rejected');--> statement-breakpoint
CREATE TYPE "public"."render_state" AS ENUM('none', 'queued', 'rendering', 'done', 'failed');--> statement-breakpoint
CREATE TABLE "fragments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"scan_id" uuid NOT NULL,
	"position" integer NOT NULL,
	"status" "fragment_status" DEFAULT 'proposed' NOT NULL,
	"origin" text DEFAULT 'split' NOT NULL,
	"split_run" integer DEFAULT 0 NOT NULL,
	"box" jsonb NOT NULL,
	"angle" real NOT NULL,
	"rect" jsonb NOT NULL,
	"outline" jsonb NOT NULL,
	"shape" "fragment_shape" NOT NULL,
	"area_px" real NOT NULL,
	"confidence" real DEFAULT 1 NOT NULL,
	"proposal" jsonb,
	"merged_into" uuid,
	"title" text,
	"tags" text[] DEFAULT '{}'::text[] NOT NULL,
	"notes" text,
	"reviewed_by" uuid,
	"reviewed_at" timestamp with time zone,
	"render_state" "render_state" DEFAULT 'none' NOT NULL,
	"render_error" text,
	"revision" integer DEFAULT 1 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "outputs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"fragment_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"key" text NOT NULL,
	"format" text NOT NULL,
	"width" integer NOT NULL,
	"height" integer NOT NULL,
	"bit_depth" integer NOT NULL,
	"has_alpha" boolean NOT NULL,
	"dpi" real NOT NULL,
	"bytes" bigint NOT NULL,
	"revision" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "split_background" jsonb;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "split_sensitivity" real;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "split_run" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "split_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "fragments" ADD CONSTRAINT "fragments_scan_id_scans_id_fk" FOREIGN KEY ("scan_id") REFERENCES "public"."scans"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fragments" ADD CONSTRAINT "fragments_reviewed_by_users_id_fk" FOREIGN KEY ("reviewed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "outputs" ADD CONSTRAINT "outputs_fragment_id_fragments_id_fk" FOREIGN KEY ("fragment_id") REFERENCES "public"."fragments"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "fragments_scan_idx" ON "fragments" USING btree ("scan_id");--> statement-breakpoint
CREATE INDEX "fragments_status_idx" ON "fragments" USING btree ("status");--> statement-breakpoint
CREATE UNIQUE INDEX "outputs_fragment_kind_key" ON "outputs" USING btree ("fragment_id","kind");