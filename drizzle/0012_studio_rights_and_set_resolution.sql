-- The studio's creator and copyright, written into every master and copy; a scan's resolution an
-- operator set by hand (the file said none, or a wrong one).
ALTER TYPE "public"."dpi_source" ADD VALUE 'set';--> statement-breakpoint
ALTER TABLE "studio" ADD COLUMN "creator" text;--> statement-breakpoint
ALTER TABLE "studio" ADD COLUMN "copyright" text;