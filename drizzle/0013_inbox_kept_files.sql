-- Inbox files filed but still in the inbox (taken in while they still looked unfinished, or not
-- removable): remembered across watcher restarts so an unchanged one is not filed again.
CREATE TABLE "inbox_kept_files" (
	"inbox" text NOT NULL,
	"path" text NOT NULL,
	"size_bytes" bigint NOT NULL,
	"mtime_ms" double precision NOT NULL,
	"sha256" varchar(64) NOT NULL,
	"scan_id" uuid NOT NULL,
	"reason" text NOT NULL,
	"detail" text,
	"kept_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "inbox_kept_files_inbox_path_pk" PRIMARY KEY("inbox","path")
);
--> statement-breakpoint
ALTER TABLE "inbox_kept_files" ADD CONSTRAINT "inbox_kept_files_scan_id_scans_id_fk" FOREIGN KEY ("scan_id") REFERENCES "public"."scans"("id") ON DELETE cascade ON UPDATE no action;