CREATE TABLE "rate_limit_hits" (
	"name" text NOT NULL,
	"key" text NOT NULL,
	"hits" integer NOT NULL,
	"reset_at" timestamp with time zone NOT NULL,
	CONSTRAINT "rate_limit_hits_name_key_pk" PRIMARY KEY("name","key")
);
--> statement-breakpoint
CREATE INDEX "rate_limit_hits_reset_idx" ON "rate_limit_hits" USING btree ("reset_at");