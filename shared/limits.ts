/** Defaults for limits; the running values come from configuration (server/config.ts). */
export const DEFAULT_DPI = 300;
/** 500 megapixels: a 1200 DPI scan of a full A3 bed is about 280 MP. */
export const DEFAULT_MAX_PIXELS = 500_000_000;
/** Largest upload accepted through the browser, in megabytes. */
export const DEFAULT_MAX_UPLOAD_MB = 2048;
/** Files per upload request. */
export const MAX_FILES_PER_UPLOAD = 50;
/** Long edge of the browser preview, in pixels. */
export const PREVIEW_LONG_EDGE = 1600;
/** Long edge of the list thumbnail, in pixels. */
export const THUMB_LONG_EDGE = 320;
/** Passwords: at least this many characters. */
export const MIN_PASSWORD_LENGTH = 10;
/** File types a scan may have, by the format name the analyser reports. */
export const SCAN_FORMATS = ["tiff", "jpeg", "png", "webp"] as const;
/** MIME types the upload route accepts after sniffing the content. */
export const SCAN_MIME_TYPES = ["image/tiff", "image/jpeg", "image/png", "image/webp"] as const;

/** The most of a password bcrypt reads (its key is at most 72 bytes): longer ones are refused. */
export const MAX_PASSWORD_BYTES = 72;
