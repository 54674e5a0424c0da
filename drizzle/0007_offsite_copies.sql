CREATE TABLE "offsite_copies" (
	"output_id" uuid PRIMARY KEY NOT NULL,
	"key" text NOT NULL,
	"status" text DEFAULT 'pending' NOT NULL,
	"message" text,
	"sha256" text,
	"attempts" integer DEFAULT 0 NOT NULL,
	"copied_at" timestamp with time zone,
	"checked_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "offsite_copies" ADD CONSTRAINT "offsite_copies_output_id_outputs_id_fk" FOREIGN KEY ("output_id") REFERENCES "public"."outputs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "offsite_copies_status" ON "offsite_copies" USING btree ("status");