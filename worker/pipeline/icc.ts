/**
 * The description of an ICC profile, from its 'desc' tag.
 * ICC.1:2010 (ISO 15076-1), the tag table (section 7.3, number from memory): at byte 128 a
 * 4-byte tag count, then 12-byte entries (signature, offset, size). The profileDescriptionTag
 * 'desc' holds, in version 4 profiles, a multiLocalizedUnicodeType ('mluc': records of language,
 * country, length, offset; UTF-16BE text); version 2 profiles (ICC.1:2001-04) use
 * textDescriptionType ('desc': 4-byte ASCII count including the NUL, then the ASCII text).
 */

const HEADER_SIZE = 128;

/** Trailing NULs dropped, other control characters turned into spaces, outer spaces trimmed. */
function clean(text: string): string | null {
  let end = text.length;
  while (end > 0 && text.charCodeAt(end - 1) === 0) end--;
  let out = "";
  for (const ch of text.slice(0, end)) out += ch.charCodeAt(0) < 0x20 ? " " : ch;
  const t = out.trim();
  return t.length > 0 ? t : null;
}

/**
 * The profile's description, or null when the tag is missing or malformed.
 * Example: the sRGB profile sharp embeds → "sRGB".
 */
export function iccDescription(profile: Buffer | undefined | null): string | null {
  if (!profile || profile.length < HEADER_SIZE + 4) return null;
  if (profile.toString("latin1", 36, 40) !== "acsp") return null; // profile file signature (7.2.9)
  const count = profile.readUInt32BE(HEADER_SIZE);
  for (let i = 0; i < count; i++) {
    const entry = HEADER_SIZE + 4 + i * 12;
    if (entry + 12 > profile.length) return null;
    if (profile.toString("latin1", entry, entry + 4) !== "desc") continue;
    const offset = profile.readUInt32BE(entry + 4);
    const size = profile.readUInt32BE(entry + 8);
    if (offset + size > profile.length || size < 12) return null;
    return readText(profile.subarray(offset, offset + size));
  }
  return null;
}

function readText(tag: Buffer): string | null {
  const type = tag.toString("latin1", 0, 4);
  if (type === "desc") {
    const n = tag.readUInt32BE(8); // ASCII count, including the terminating NUL
    if (12 + n > tag.length) return null;
    return clean(tag.toString("latin1", 12, 12 + n));
  }
  if (type === "mluc") {
    if (tag.length < 16) return null;
    const records = tag.readUInt32BE(8);
    const recordSize = tag.readUInt32BE(12);
    if (recordSize < 12) return null;
    let chosen: { length: number; offset: number } | null = null;
    for (let r = 0; r < records; r++) {
      const at = 16 + r * recordSize;
      if (at + 12 > tag.length) break;
      const lang = tag.toString("latin1", at, at + 2);
      const rec = { length: tag.readUInt32BE(at + 4), offset: tag.readUInt32BE(at + 8) };
      if (!chosen || lang === "en") chosen = rec;
      if (lang === "en") break;
    }
    if (!chosen || chosen.offset + chosen.length > tag.length) return null;
    return clean(utf16be(tag.subarray(chosen.offset, chosen.offset + chosen.length)));
  }
  return null;
}

function utf16be(bytes: Buffer): string {
  const swapped = Buffer.from(bytes.subarray(0, bytes.length - (bytes.length % 2)));
  swapped.swap16();
  return swapped.toString("utf16le");
}
