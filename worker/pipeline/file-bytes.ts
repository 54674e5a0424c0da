import type { FileHandle } from "node:fs/promises";

/**
 * Reads up to `length` bytes at byte offset `position`; returns only the bytes that exist,
 * so a short result means the file ended there.
 */
export async function readAt(fh: FileHandle, position: number, length: number): Promise<Buffer> {
  const buf = Buffer.alloc(length);
  let filled = 0;
  while (filled < length) {
    const { bytesRead } = await fh.read(buf, filled, length - filled, position + filled);
    if (bytesRead === 0) break;
    filled += bytesRead;
  }
  return filled === length ? buf : buf.subarray(0, filled);
}
