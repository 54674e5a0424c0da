-- Why a scan failed, as a code (worker/pipeline/errors.ts, or "worker"): a failure the same bytes
-- always meet (empty, cut short, not an image) is not analysed again when the file arrives again.
ALTER TABLE "scans" ADD COLUMN "error_code" text;
