CREATE TABLE "preset_versions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"preset_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"settings" jsonb NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "presets" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"kind" text NOT NULL,
	"built_in" boolean DEFAULT false NOT NULL,
	"archived_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
DROP INDEX "outputs_fragment_kind_key";--> statement-breakpoint
ALTER TABLE "batch_items" ADD COLUMN "preset_version_id" uuid;--> statement-breakpoint
ALTER TABLE "batch_items" ADD COLUMN "output_id" uuid;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "rerun_of" uuid;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "replace_old" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "outputs" ADD COLUMN "preset_version_id" uuid;--> statement-breakpoint
ALTER TABLE "outputs" ADD COLUMN "dedupe_key" text;--> statement-breakpoint
ALTER TABLE "outputs" ADD COLUMN "report" jsonb;--> statement-breakpoint
ALTER TABLE "preset_versions" ADD CONSTRAINT "preset_versions_preset_id_presets_id_fk" FOREIGN KEY ("preset_id") REFERENCES "public"."presets"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "preset_versions" ADD CONSTRAINT "preset_versions_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "preset_versions_preset_version_key" ON "preset_versions" USING btree ("preset_id","version");--> statement-breakpoint
CREATE UNIQUE INDEX "presets_name_key" ON "presets" USING btree (lower("name"));--> statement-breakpoint
CREATE UNIQUE INDEX "outputs_dedupe_key" ON "outputs" USING btree ("dedupe_key");--> statement-breakpoint
CREATE UNIQUE INDEX "outputs_fragment_kind_key" ON "outputs" USING btree ("fragment_id","kind") WHERE "outputs"."kind" in ('master', 'web');