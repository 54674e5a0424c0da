/**
 * Links in messages. The token goes after `#`, so it never reaches a server log, a proxy or a
 * Referer header: the page reads it in the browser and sends it in a request body.
 */
import { INVITE_PAGE, RESET_PAGE } from "../../shared/schemas/mail";

export const inviteLink = (publicUrl: string, token: string) => `${publicUrl}${INVITE_PAGE}#token=${token}`;
export const resetLink = (publicUrl: string, token: string) => `${publicUrl}${RESET_PAGE}#token=${token}`;
export const pageLink = (publicUrl: string, path: string) => `${publicUrl}${path.startsWith("/") ? path : `/${path}`}`;
