/**
 * Content sniffing from the first bytes of a file, so a wrong extension never decides the format.
 * Signatures: TIFF 6.0 Section 2 (byte order "II"/"MM" then 42), BigTIFF (43);
 * JPEG (ITU-T T.81 Annex B: SOI FF D8, then a marker FF xx); PNG (PNG spec 5.2, 8-byte signature);
 * WebP (RIFF container, "WEBP" form type at byte 8).
 */
export type ScanFormat = "tiff" | "jpeg" | "png" | "webp";

export type Sniffed = { kind: "scan"; format: ScanFormat } | { kind: "other-image"; what: string } | { kind: "not-image"; what: string };

/** How many leading bytes `sniff` wants to see. */
export const SNIFF_BYTES = 512;

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

function ascii(head: Buffer, start: number, end: number): string {
  return head.subarray(start, end).toString("latin1");
}

/**
 * Names the content of a file from its first bytes (up to SNIFF_BYTES).
 * Example: sniff(Buffer.from("hello")) → { kind: "not-image", what: "plain text" }.
 */
export function sniff(head: Buffer): Sniffed {
  const b = head;
  const at = (i: number) => b[i] ?? -1;

  // Scan formats Platen reads.
  if ((ascii(b, 0, 2) === "II" && at(2) === 42 && at(3) === 0) || (ascii(b, 0, 2) === "MM" && at(2) === 0 && at(3) === 42))
    return { kind: "scan", format: "tiff" };
  if ((ascii(b, 0, 2) === "II" && at(2) === 43 && at(3) === 0) || (ascii(b, 0, 2) === "MM" && at(2) === 0 && at(3) === 43))
    return { kind: "scan", format: "tiff" }; // BigTIFF, which libtiff reads
  if (at(0) === 0xff && at(1) === 0xd8 && at(2) === 0xff) return { kind: "scan", format: "jpeg" };
  if (b.length >= 8 && b.subarray(0, 8).equals(PNG_SIGNATURE)) return { kind: "scan", format: "png" };
  if (ascii(b, 0, 4) === "RIFF" && ascii(b, 8, 12) === "WEBP") return { kind: "scan", format: "webp" };

  // Other images: say which, so the person knows to convert rather than rescan.
  if (ascii(b, 0, 6) === "GIF87a" || ascii(b, 0, 6) === "GIF89a") return { kind: "other-image", what: "a GIF image" };
  // BMP: "BM", then at byte 14 the size of a known DIB header (12, 40, 52, 56, 64, 108 or 124).
  if (ascii(b, 0, 2) === "BM" && b.length >= 18 && BMP_DIB_SIZES.has(b.readUInt32LE(14)))
    return { kind: "other-image", what: "a BMP image" };
  if (ascii(b, 4, 8) === "ftyp") {
    const brand = ascii(b, 8, 12);
    if (/^(heic|heix|hevc|hevx|mif1|msf1)$/.test(brand)) return { kind: "other-image", what: "a HEIC/HEIF image" };
    if (/^(avif|avis)$/.test(brand)) return { kind: "other-image", what: "an AVIF image" };
    if (brand === "jp2 ") return { kind: "other-image", what: "a JPEG 2000 image" };
    if (brand === "jxl ") return { kind: "other-image", what: "a JPEG XL image" };
    if (VIDEO_BRANDS.has(brand)) return { kind: "not-image", what: "a video" };
  }
  if (ascii(b, 4, 8) === "jP  ") return { kind: "other-image", what: "a JPEG 2000 image" };
  if (at(0) === 0xff && at(1) === 0x4f && at(2) === 0xff && at(3) === 0x51) return { kind: "other-image", what: "a JPEG 2000 image" };
  if (at(0) === 0xff && at(1) === 0x0a) return { kind: "other-image", what: "a JPEG XL image" };
  if (ascii(b, 0, 4) === "8BPS") return { kind: "other-image", what: "a layered PSD document" };
  if (ascii(b, 0, 4) === "qoif") return { kind: "other-image", what: "a QOI image" };
  if (at(0) === 0 && at(1) === 0 && at(2) === 1 && at(3) === 0) return { kind: "other-image", what: "an icon (ICO) file" };

  // Not images at all.
  if (ascii(b, 0, 5) === "%PDF-") return { kind: "not-image", what: "a PDF document" };
  if (at(0) === 0x50 && at(1) === 0x4b && (at(2) === 3 || at(2) === 5 || at(2) === 7)) return { kind: "not-image", what: "a ZIP archive" };
  if (at(0) === 0x1f && at(1) === 0x8b) return { kind: "not-image", what: "a gzip archive" };
  if (ascii(b, 0, 4) === "Rar!") return { kind: "not-image", what: "a RAR archive" };
  if (ascii(b, 0, 6) === "7z\xbc\xaf\x27\x1c") return { kind: "not-image", what: "a 7-Zip archive" };
  if (ascii(b, 0, 4) === "RIFF") return { kind: "not-image", what: `a RIFF ${ascii(b, 8, 12).trim() || "container"} file` };

  const text = textKind(b);
  if (text === "svg") return { kind: "other-image", what: "an SVG drawing" };
  if (text) return { kind: "not-image", what: text };
  return { kind: "not-image", what: "data of an unknown kind" };
}

const BMP_DIB_SIZES = new Set([12, 40, 52, 56, 64, 108, 124]);

/** ISO base media brands of video files (ISO/IEC 14496-12 'ftyp'). */
const VIDEO_BRANDS = new Set(["qt  ", "isom", "iso2", "mp41", "mp42", "M4V ", "avc1"]);

/** Text has no control characters other than tab, line feed, form feed and carriage return. */
function hasControlCharacters(s: string): boolean {
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if ((c < 0x20 && c !== 0x09 && c !== 0x0a && c !== 0x0c && c !== 0x0d) || c === 0x7f) return true;
  }
  return false;
}

/** "plain text", "an HTML page", … when the bytes decode as UTF-8 text; null for binary data. */
function textKind(b: Buffer): string | null {
  if (b.length === 0) return null;
  // Cut at most 3 bytes so a multi-byte character split by the sniff window does not look binary.
  let s: string | null = null;
  for (let cut = 0; cut <= 3 && s === null; cut++) {
    try {
      s = new TextDecoder("utf-8", { fatal: true }).decode(b.subarray(0, Math.max(0, b.length - cut)));
    } catch {
      s = null;
    }
  }
  if (s === null) return null;
  if (hasControlCharacters(s)) return null;
  const t = s
    .replace(/^\ufeff/, "")
    .trimStart()
    .toLowerCase();
  if (t.includes("<svg")) return "svg";
  if (t.startsWith("<!doctype html") || t.startsWith("<html")) return "an HTML page";
  if (t.startsWith("<?xml")) return "XML text";
  if (t.startsWith("%!ps")) return "a PostScript document";
  return "plain text";
}
