/**
 * Title, creator and copyright as the output files carry them, in the places readers look:
 * - XMP (ISO 16684-1) with Dublin Core: dc:title and dc:rights as language alternatives
 *   (x-default), dc:creator as an ordered list; in masters, print files (TIFF and PDF) and web copies.
 * - TIFF 6.0 Section 8 baseline fields ImageDescription (270), Artist (315), Copyright (33432)
 *   in a master's or print TIFF's IFD0 (sharp cannot write EXIF into a TIFF, so tiff-tags.ts adds them).
 * - EXIF 2.3 IFD0 tags of the same names in the web copy (JPEG APP1, WebP EXIF chunk).
 * The TIFF and EXIF fields are ASCII by their specs (asciiField: accents folded, a field whose
 * letters have no ASCII form left out); the XMP keeps the exact Unicode text.
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

/**
 * The creator and copyright of cleaned rights as an outputs row records them (null: none).
 * Example: { title: "Heron", creator: "Ana Ruiz" } → { creator: "Ana Ruiz", copyright: null }.
 */
export function recordedRights(rights: Rights): { creator: string | null; copyright: string | null } {
  return { creator: rights.creator ?? null, copyright: rights.copyright ?? null };
}

function escapeXml(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
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
    parts.push(`<dc:creator><rdf:Seq><rdf:li>${escapeXml(rights.creator)}</rdf:li></rdf:Seq></dc:creator>`);
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

/** EXIF IFD0 entries for sharp's withExif, in ASCII (see asciiField), or null when no field has text. */
export function exifIfd0(rights: Rights): Exif | null {
  const ifd0: Record<string, string> = {};
  for (const { name, text } of asciiFields(rights)) ifd0[name] = text;
  return Object.keys(ifd0).length > 0 ? { IFD0: ifd0 } : null;
}

/**
 * Signs and letters spelled out in ASCII. The letters are those canonical decomposition leaves
 * whole (they are letters of their own, not a letter with a mark); the spellings are the usual
 * ones of Latin transliteration (common practice, from memory).
 */
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
  "\u00a0": " ",
  ß: "ss",
  Æ: "AE",
  æ: "ae",
  Œ: "OE",
  œ: "oe",
  Ø: "O",
  ø: "o",
  Ł: "L",
  ł: "l",
  Đ: "D",
  đ: "d",
  Ð: "D",
  ð: "d",
  Þ: "Th",
  þ: "th",
  Ħ: "H",
  ħ: "h",
  ı: "i",
};

/** Printable ASCII (0x20–0x7E), tab, line feed or carriage return. */
const PRINTABLE_OR_SPACE = (code: number) => (code >= 0x20 && code <= 0x7e) || code === 9 || code === 10 || code === 13;

/** Combining marks (general category M), which canonical decomposition moves after their letter. */
const MARKS = /\p{M}/gu;
/** Letters and digits: a name's own characters, which must not silently go missing. */
const LETTER_OR_DIGIT = /[\p{L}\p{N}]/u;

/**
 * One character in 7-bit ASCII: spelled out (© → "(C)", ß → "ss"), or its canonical decomposition
 * (Unicode Standard Annex #15, NFD) without the combining marks (é → e, Å → A); null when neither
 * gives ASCII (a CJK or Cyrillic letter, a star).
 */
function asciiOf(ch: string): string | null {
  const spelled = ASCII_SPELLING[ch];
  if (spelled !== undefined) return spelled;
  const plain = ch.normalize("NFD").replace(MARKS, "");
  return [...plain].every((c) => PRINTABLE_OR_SPACE(c.charCodeAt(0))) ? plain : null;
}

/**
 * Text as 7-bit ASCII for a line that must show something for every character (a caption set in
 * a face that lacks one): as asciiOf, and "?" for a character with no spelling.
 * Example: "© 2025 Zoë Lind" → "(C) 2025 Zoe Lind"; "山" → "?".
 */
export function asciiSpelling(text: string): string {
  let out = "";
  for (const ch of text) out += asciiOf(ch) ?? "?";
  return out;
}

/**
 * Text for an ASCII field, which TIFF 6.0 Section 2 requires to be 7-bit (EXIF 2.3 likewise):
 * each character as asciiOf spells it; a sign with no spelling is left out. When a letter or digit
 * has no spelling (a name in CJK or Cyrillic script) the field is better absent than "??": the
 * result is undefined and the XMP (UTF-8) alone carries the text.
 * Examples: "Zoë Ångström" → "Zoe Angstrom"; "Søren ★ Holm" → "Soren Holm"; "山田花子" → undefined.
 */
export function asciiField(text: string): string | undefined {
  let out = "";
  for (const ch of text) {
    const spelled = asciiOf(ch);
    if (spelled !== null) out += spelled;
    else if (LETTER_OR_DIGIT.test(ch)) return undefined;
  }
  const tidy = out.replace(/ {2,}/g, " ").trim();
  return tidy.length > 0 ? tidy : undefined;
}

/** The rights fields that have an ASCII form, by their TIFF/EXIF names and tags. */
function asciiFields(rights: Rights): { name: keyof typeof TIFF_TAG; text: string }[] {
  const fields: { name: keyof typeof TIFF_TAG; text: string | undefined }[] = [
    { name: "ImageDescription", text: rights.title ? asciiField(rights.title) : undefined },
    { name: "Artist", text: rights.creator ? asciiField(rights.creator) : undefined },
    { name: "Copyright", text: rights.copyright ? asciiField(rights.copyright) : undefined },
  ];
  return fields.filter((f): f is { name: keyof typeof TIFF_TAG; text: string } => f.text !== undefined);
}

/** TIFF baseline text fields for a TIFF's IFD0, in ASCII (see asciiField); a field with no ASCII form is left out. */
export function tiffRightsFields(rights: Rights): TiffField[] {
  return asciiFields(rights).map(({ name, text }) => ({ tag: TIFF_TAG[name], value: text }));
}
