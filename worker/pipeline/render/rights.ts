/**
 * Title, creator and copyright as the output files carry them, in the places readers look:
 * - XMP (ISO 16684-1) with Dublin Core: dc:title and dc:rights as language alternatives
 *   (x-default), dc:creator as an ordered list; in the master TIFF and the web copy.
 * - TIFF 6.0 Section 8 baseline fields ImageDescription (270), Artist (315), Copyright (33432)
 *   in the master's IFD0 (sharp cannot write EXIF into a TIFF, so tiff-tags.ts adds them).
 * - EXIF 2.3 IFD0 tags of the same names in the web copy (JPEG APP1, WebP EXIF chunk).
 * The TIFF and EXIF fields are ASCII by their specs; the XMP keeps the exact Unicode text.
 */
import type { Exif } from "sharp";
import { TIFF_TAG, type TiffField } from "./tiff-tags";

/** The namespace of the packet's outer element, as the XMP specification (ISO 16684-1) fixes it. */
const XMP_META_NS = Buffer.from("61646f62653a6e733a6d6574612f", "hex").toString("latin1");

export interface Rights {
  title?: string;
  creator?: string;
  copyright?: string;
}

/** Longest text kept per field; longer is cut (a title is not an essay; EXIF readers choke on huge fields). */
export const RIGHTS_MAX_CHARS = 2000;

/** Trimmed, control characters removed, cut to RIGHTS_MAX_CHARS; empty becomes undefined. */
function clean(text: string | undefined): string | undefined {
  if (typeof text !== "string") return undefined;
  // eslint-disable-next-line no-control-regex
  const t = text.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/g, "").trim();
  return t.length > 0 ? t.slice(0, RIGHTS_MAX_CHARS) : undefined;
}

/** The fields that have text, cleaned. Example: { title: "  Blue gull " } → { title: "Blue gull" }. */
export function cleanRights(rights: Rights | undefined): Rights {
  const out: Rights = {};
  const title = clean(rights?.title);
  const creator = clean(rights?.creator);
  const copyright = clean(rights?.copyright);
  if (title) out.title = title;
  if (creator) out.creator = creator;
  if (copyright) out.copyright = copyright;
  return out;
}

function escapeXml(text: string): string {
  return text
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;");
}

function alt(name: string, text: string): string {
  return `<dc:${name}><rdf:Alt><rdf:li xml:lang="x-default">${escapeXml(text)}</rdf:li></rdf:Alt></dc:${name}>`;
}

/**
 * An XMP packet with the Dublin Core fields that have text, or null when none has.
 * Example: { creator: "Ana Ruiz" } → `<?xpacket …?>…<dc:creator><rdf:Seq><rdf:li>Ana Ruiz</rdf:li></rdf:Seq></dc:creator>…`.
 */
export function xmpPacket(rights: Rights): string | null {
  const parts: string[] = [];
  if (rights.title) parts.push(alt("title", rights.title));
  if (rights.creator) {
    parts.push(
      `<dc:creator><rdf:Seq><rdf:li>${escapeXml(rights.creator)}</rdf:li></rdf:Seq></dc:creator>`,
    );
  }
  if (rights.copyright) parts.push(alt("rights", rights.copyright));
  if (parts.length === 0) return null;
  return (
    `<?xpacket begin="\ufeff" id="W5M0MpCehiHzreSzNTczkc9d"?>` +
    `<x:xmpmeta xmlns:x="${XMP_META_NS}"><rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#">` +
    `<rdf:Description rdf:about="" xmlns:dc="http://purl.org/dc/elements/1.1/">${parts.join("")}</rdf:Description>` +
    `</rdf:RDF></x:xmpmeta><?xpacket end="w"?>`
  );
}

/** EXIF IFD0 entries for sharp's withExif, in ASCII (see asciiSpelling), or null when no field has text. */
export function exifIfd0(rights: Rights): Exif | null {
  const ifd0: Record<string, string> = {};
  if (rights.title) ifd0.ImageDescription = asciiSpelling(rights.title);
  if (rights.creator) ifd0.Artist = asciiSpelling(rights.creator);
  if (rights.copyright) ifd0.Copyright = asciiSpelling(rights.copyright);
  return Object.keys(ifd0).length > 0 ? { IFD0: ifd0 } : null;
}

const ASCII_SPELLING: Record<string, string> = {
  "©": "(C)",
  "®": "(R)",
  "™": "TM",
  "–": "-",
  "—": "-",
  "‘": "'",
  "’": "'",
  "“": '"',
  "”": '"',
  "…": "...",
};

/** Printable ASCII (0x20–0x7E), tab, line feed or carriage return. */
const PRINTABLE_OR_SPACE = (code: number) =>
  (code >= 0x20 && code <= 0x7e) || code === 9 || code === 10 || code === 13;

/**
 * Text as 7-bit ASCII, which TIFF 6.0 Section 2 requires of ASCII fields (EXIF 2.3 likewise):
 * accents dropped (é → e), a few signs spelled out (© → "(C)"), anything else "?". The exact
 * text stays in the XMP. Example: "© 2025 Zoë Lind" → "(C) 2025 Zoe Lind".
 */
export function asciiSpelling(text: string): string {
  let out = "";
  for (const ch of text) {
    const spelled = ASCII_SPELLING[ch];
    if (spelled !== undefined) {
      out += spelled;
      continue;
    }
    // Canonical decomposition, then drop the combining marks (U+0300–U+036F).
    const plain = ch.normalize("NFD").replace(/[\u0300-\u036f]/g, "");
    out += [...plain].every((c) => PRINTABLE_OR_SPACE(c.charCodeAt(0))) ? plain : "?";
  }
  return out;
}

/** TIFF baseline text fields for the master's IFD0, in ASCII (see asciiSpelling). */
export function tiffRightsFields(rights: Rights): TiffField[] {
  const fields: TiffField[] = [];
  if (rights.title)
    fields.push({ tag: TIFF_TAG.ImageDescription, value: asciiSpelling(rights.title) });
  if (rights.creator) fields.push({ tag: TIFF_TAG.Artist, value: asciiSpelling(rights.creator) });
  if (rights.copyright)
    fields.push({ tag: TIFF_TAG.Copyright, value: asciiSpelling(rights.copyright) });
  return fields;
}
