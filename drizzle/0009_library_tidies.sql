CREATE TABLE "library_tidies" (
	"id" bigint PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "library_tidies_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 9223372036854775807 START WITH 1 CACHE 1),
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	"actor_id" uuid,
	"removed" integer NOT NULL,
	"bytes" bigint NOT NULL
);
--> statement-breakpoint
ALTER TABLE "library_tidies" ADD CONSTRAINT "library_tidies_actor_id_users_id_fk" FOREIGN KEY ("actor_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "library_tidies_at" ON "library_tidies" USING btree ("at");