-- A scan filed while its inbox file still looked unfinished points at the scan that file became
-- when it was taken in again (shown on its page, whatever state it was in then). Scans from before
-- keep the sentence that was appended to their message.
ALTER TABLE "scans" ADD COLUMN "continued_by_id" uuid;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "continued_how" text;