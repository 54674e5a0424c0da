CREATE TYPE "public"."dpi_source" AS ENUM('embedded', 'assumed');--> statement-breakpoint
CREATE TYPE "public"."role" AS ENUM('viewer', 'operator', 'admin');--> statement-breakpoint
CREATE TYPE "public"."scan_source" AS ENUM('inbox', 'upload');--> statement-breakpoint
CREATE TYPE "public"."scan_status" AS ENUM('queued', 'analysing', 'ready', 'failed', 'duplicate');--> statement-breakpoint
CREATE TABLE "intakes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"closed_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "processes" (
	"id" text PRIMARY KEY NOT NULL,
	"kind" text NOT NULL,
	"host" text NOT NULL,
	"pid" integer NOT NULL,
	"folder" text,
	"last_file" text,
	"last_file_at" timestamp with time zone,
	"heartbeat_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "scans" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"intake_id" uuid NOT NULL,
	"original_name" text NOT NULL,
	"source" "scan_source" NOT NULL,
	"uploaded_by" uuid,
	"sha256" varchar(64) NOT NULL,
	"size_bytes" bigint NOT NULL,
	"original_key" text NOT NULL,
	"status" "scan_status" DEFAULT 'queued' NOT NULL,
	"stage" text,
	"progress" integer DEFAULT 0 NOT NULL,
	"error" text,
	"attempts" integer DEFAULT 0 NOT NULL,
	"duplicate_of_id" uuid,
	"width" integer,
	"height" integer,
	"format" text,
	"bit_depth" integer,
	"channels" integer,
	"colour_space" text,
	"has_icc_profile" boolean,
	"icc_description" text,
	"has_alpha" boolean,
	"dpi_x" real,
	"dpi_y" real,
	"dpi_source" "dpi_source",
	"resolution_origin" text,
	"preview_key" text,
	"thumb_key" text,
	"started_at" timestamp with time zone,
	"analysed_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "session" (
	"sid" varchar PRIMARY KEY NOT NULL,
	"sess" json NOT NULL,
	"expire" timestamp (6) NOT NULL
);
--> statement-breakpoint
CREATE TABLE "studio" (
	"id" integer PRIMARY KEY DEFAULT 1 NOT NULL,
	"name" text NOT NULL,
	"default_dpi" integer DEFAULT 300 NOT NULL,
	"demo" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "users" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"email" text NOT NULL,
	"name" text NOT NULL,
	"role" "role" NOT NULL,
	"password_hash" text NOT NULL,
	"disabled_at" timestamp with time zone,
	"last_sign_in_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_intake_id_intakes_id_fk" FOREIGN KEY ("intake_id") REFERENCES "public"."intakes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "scans_status_idx" ON "scans" USING btree ("status");--> statement-breakpoint
CREATE INDEX "scans_intake_idx" ON "scans" USING btree ("intake_id");--> statement-breakpoint
CREATE INDEX "scans_sha256_idx" ON "scans" USING btree ("sha256");--> statement-breakpoint
CREATE UNIQUE INDEX "scans_sha256_first_key" ON "scans" USING btree ("sha256") WHERE "scans"."status" <> 'duplicate';--> statement-breakpoint
CREATE INDEX "IDX_session_expire" ON "session" USING btree ("expire");--> statement-breakpoint
CREATE UNIQUE INDEX "users_email_key" ON "users" USING btree ("email");