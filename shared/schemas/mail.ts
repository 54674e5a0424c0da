import { z } from "zod";
import { oneLine } from "./text";
import { roleSchema } from "../roles";
import { emailSchema } from "./auth";
import { passwordSchema } from "./users";

/**
 * Invitations, password resets, notice choices and the development mailbox: requests and answers.
 * Tokens travel only in the body of a request (never in a URL the server logs).
 */

/** The client pages that links in messages open; the token follows `#token=`. */
export const INVITE_PAGE = "/join";
export const RESET_PAGE = "/reset-password";

/** A token as it appears in a link: 32 random bytes in base64url (43 characters). */
export const tokenSchema = z
  .string({ error: "Expected the token from the link in the message" })
  .trim()
  .regex(/^[A-Za-z0-9_-]{43}$/, { error: "This link is not complete. Open it again from the message, or copy all of it." });

export const tokenBody = z.object({ token: tokenSchema });

// ── Invitations ──────────────────────────────────────────────────────────────────────────────

export const INVITATION_STATES = ["pending", "expired"] as const;

export const invitationSchema = z.object({
  id: z.string(),
  email: z.string(),
  role: roleSchema,
  state: z.enum(INVITATION_STATES),
  invitedBy: z.string().nullable(),
  createdAt: z.string(),
  expiresAt: z.string(),
  sentAt: z.string().nullable(),
  sendCount: z.number(),
  /** Why the last message could not be handed over, if it could not. */
  sendError: z.string().nullable(),
});
export type Invitation = z.infer<typeof invitationSchema>;

export const invitationListResponse = z.object({ invitations: z.array(invitationSchema) });
export const invitationResponse = z.object({ invitation: invitationSchema });

export const createInvitationBody = z.object({ email: emailSchema, role: roleSchema });
export type CreateInvitationBody = z.infer<typeof createInvitationBody>;

/** What the accept page shows before the person sets a password. */
export const invitationPreviewResponse = z.object({
  email: z.string(),
  role: roleSchema,
  studio: z.string(),
  invitedBy: z.string().nullable(),
  expiresAt: z.string(),
});
export type InvitationPreview = z.infer<typeof invitationPreviewResponse>;

export const acceptInvitationBody = z.object({
  token: tokenSchema,
  name: z
    .string()
    .trim()
    .min(1, { error: "Enter your name" })
    .max(120, { error: "Expected a name of at most 120 characters" })
    .refine(oneLine("a name").check, oneLine("a name").message),
  password: passwordSchema,
});
export type AcceptInvitationBody = z.infer<typeof acceptInvitationBody>;

// ── Password reset ───────────────────────────────────────────────────────────────────────────

export const requestResetBody = z.object({ email: emailSchema });
export type RequestResetBody = z.infer<typeof requestResetBody>;

/** The one answer to a reset request, whether or not the address has an account. */
export const RESET_REQUESTED_MESSAGE =
  "If that address has an account here, a message with a link to choose a new password is on its way. The link works once, for a limited time.";
export const resetRequestedResponse = z.object({ message: z.string() });

export const resetPreviewResponse = z.object({ email: z.string(), expiresAt: z.string() });

export const completeResetBody = z.object({ token: tokenSchema, password: passwordSchema });
export type CompleteResetBody = z.infer<typeof completeResetBody>;

// ── Notices ──────────────────────────────────────────────────────────────────────────────────

export const NOTICE_KINDS = ["batchFinished", "intakeFinished", "scanFailed"] as const;
export type NoticeKind = (typeof NOTICE_KINDS)[number];

export const NOTICE_LABELS: Record<NoticeKind, { title: string; description: string }> = {
  batchFinished: {
    title: "A batch is finished",
    description: "When every item of a batch is made or has failed: how many, with warnings and failures.",
  },
  intakeFinished: {
    title: "An intake is finished",
    description: "When every scan of an intake has been read and split, or has failed: ready for review.",
  },
  scanFailed: {
    title: "A scan failed",
    description: "When a scan cannot be read or analysed, with the reason.",
  },
};

export const noticeChoicesSchema = z.object({
  batchFinished: z.boolean(),
  intakeFinished: z.boolean(),
  scanFailed: z.boolean(),
});
export type NoticeChoices = z.infer<typeof noticeChoicesSchema>;

export const noticeSettingsResponse = z.object({
  notices: noticeChoicesSchema,
  /** True while the person has not chosen: these are their role's defaults. */
  defaults: z.boolean(),
  /** False when this server cannot send mail at all (no SMTP settings). */
  mailEnabled: z.boolean(),
});

export const updateNoticesBody = noticeChoicesSchema.partial().refine((b) => Object.values(b).some((v) => v !== undefined), {
  error: "Expected at least one of batchFinished, intakeFinished or scanFailed",
});
export type UpdateNoticesBody = z.infer<typeof updateNoticesBody>;

// ── Development mailbox ──────────────────────────────────────────────────────────────────────

export const mailboxIdParams = z.object({
  id: z.string().regex(/^[0-9]{13}-[0-9a-f]{8}$/, { error: "Expected a message id from the mailbox list" }),
});

export const mailboxSummarySchema = z.object({
  id: z.string(),
  receivedAt: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
});
export type MailboxSummary = z.infer<typeof mailboxSummarySchema>;

export const mailboxMessageSchema = mailboxSummarySchema.extend({
  messageId: z.string().nullable(),
  text: z.string(),
  html: z.string().nullable(),
});
export type MailboxMessage = z.infer<typeof mailboxMessageSchema>;

export const mailboxListResponse = z.object({ messages: z.array(mailboxSummarySchema) });
export const mailboxMessageResponse = z.object({ message: mailboxMessageSchema });
