import crypto from "node:crypto";

/**
 * Link tokens: 32 random bytes, sent only in the message (base64url), stored only as their
 * SHA-256. A database copy therefore holds nothing that opens an invitation or a reset.
 */
export function newToken(): { token: string; hash: string } {
  const token = crypto.randomBytes(32).toString("base64url");
  return { token, hash: hashToken(token) };
}

export function hashToken(token: string): string {
  return crypto.createHash("sha256").update(token, "utf8").digest("hex");
}
