import { z } from "zod";

/** What an audit row is about; the client links each to its screen where one exists. */
export const AUDIT_SUBJECT_TYPES = ["fragment", "scan", "intake", "recipe", "preset", "batch", "user", "invitation", "studio"] as const;
export const auditSubjectTypeSchema = z.enum(AUDIT_SUBJECT_TYPES);
export type AuditSubjectType = z.infer<typeof auditSubjectTypeSchema>;

/**
 * Every action the trail records, with the words the screen shows. Names are stable: filters,
 * saved links and reports depend on them, so rename a label, never a key.
 */
export const AUDIT_ACTIONS = {
  "auth.sign_in": "Signed in",
  "auth.sign_in_failed": "Failed sign-in",
  "auth.sign_out": "Signed out",
  "auth.password_reset_request": "Asked for a new-password link",
  "auth.password_reset": "Chose a new password",
  "auth.password_change": "Changed their password",
  "account.notices": "Changed which notices they get",
  "account.rename": "Changed their own name",
  "invitation.create": "Invited someone",
  "invitation.resend": "Resent an invitation",
  "invitation.revoke": "Revoked an invitation",
  "invitation.accept": "Accepted an invitation",
  "user.create": "Added a user",
  "user.role": "Changed a role",
  "user.rename": "Renamed a user",
  "user.disable": "Disabled a user",
  "user.enable": "Enabled a user",
  "intake.create": "Started an intake",
  "scan.upload": "Uploaded a scan",
  "scan.retry": "Retried a scan",
  "scan.resplit": "Split a scan again",
  "scan.resolution": "Set a scan's resolution",
  "fragment.approve": "Approved a fragment",
  "fragment.reject": "Rejected a fragment",
  "fragment.unreview": "Put a fragment back to proposed",
  "fragment.edit": "Edited a fragment",
  "fragment.reset": "Reset a fragment",
  "fragment.draw": "Drew a fragment",
  "fragment.delete_files": "Deleted a piece's master and copies",
  "fragment.merge": "Merged fragments",
  "fragment.unmerge": "Took a merge apart",
  "fragment.approve_remaining": "Approved the remaining fragments",
  "fragment.render_retry": "Tried a failed render again",
  "recipe.create": "Made a recipe",
  "recipe.version": "Saved a recipe version",
  "recipe.edit": "Renamed or described a recipe",
  "recipe.default": "Changed the studio's default recipe",
  "recipe.apply": "Applied a recipe",
  "preset.create": "Made a preset",
  "preset.version": "Saved a preset version",
  "preset.rename": "Renamed a preset",
  "batch.create": "Started a batch",
  "batch.rerun": "Ran a batch again",
  "batch.retry": "Retried a batch's failures",
  "batch.cancel": "Cancelled a batch",
  "offsite.check": "Re-checked an off-site copy",
  "offsite.copy": "Copied a master off-site again",
  "offsite.check_all": "Re-checked every off-site copy",
  "offsite.remove_kept": "Removed a kept off-site copy for good",
  "library.tidy": "Tidied away left-over library files",
  "library.refile": "Filed originals the database did not know again",
  "studio.settings": "Changed the studio's settings",
  "studio.masters_rights": "Wrote the studio's rights into masters already made",
} as const satisfies Record<string, string>;
export type AuditAction = keyof typeof AUDIT_ACTIONS;
export const AUDIT_ACTION_NAMES = Object.keys(AUDIT_ACTIONS) as AuditAction[];

/** The groups an action filter can name with `group.*`. */
export const AUDIT_ACTION_GROUPS = [...new Set(AUDIT_ACTION_NAMES.map((a) => a.split(".")[0]!))];

export const auditEventSchema = z.object({
  id: z.number(),
  at: z.string(),
  actor: z.object({
    id: z.string().nullable(),
    /** The e-mail as it was when the event happened (the address tried, for a failed sign-in). */
    email: z.string().nullable(),
    /** The account's name now, when the account exists. */
    name: z.string().nullable(),
  }),
  action: z.string(),
  subjectType: z.string(),
  subjectId: z.string().nullable(),
  summary: z.string(),
  before: z.record(z.string(), z.unknown()).nullable(),
  after: z.record(z.string(), z.unknown()).nullable(),
  ip: z.string().nullable(),
  userAgent: z.string().nullable(),
});
export type AuditEvent = z.infer<typeof auditEventSchema>;

/** One changed field, side by side. */
export const auditChangeSchema = z.object({ field: z.string(), before: z.unknown(), after: z.unknown() });
export type AuditChange = z.infer<typeof auditChangeSchema>;

export const auditDetailSchema = auditEventSchema.extend({ changes: z.array(auditChangeSchema) });
export type AuditDetail = z.infer<typeof auditDetailSchema>;

const isoTime = (name: string) =>
  z.iso.datetime({ offset: true, error: `Expected ${name} as an ISO 8601 date and time such as 2026-03-01T09:00:00Z` });

export const auditListQuery = z
  .object({
    actorId: z.uuid({ error: "Expected actorId in UUID form" }).optional(),
    /** One action (`fragment.approve`) or a group of them (`fragment.*`). */
    action: z
      .string()
      .trim()
      .regex(/^[a-z_]+(\.[a-z_]+|\.\*)$/, { error: "Expected an action such as fragment.approve, or a group such as fragment.*" })
      .optional(),
    subjectType: auditSubjectTypeSchema.optional(),
    subjectId: z.string().trim().min(1).max(100).optional(),
    from: isoTime("from").optional(),
    to: isoTime("to").optional(),
    /** Words to find in the summary or the actor's e-mail. */
    q: z.string().trim().max(200).optional(),
    /** The cursor: events older than this id (the `nextCursor` of the page before). */
    before: z.coerce.number().int().positive({ error: "Expected before to be a positive event id" }).optional(),
    limit: z.coerce.number().int().min(1).max(200).default(50),
  })
  .refine((q) => !q.from || !q.to || Date.parse(q.from) <= Date.parse(q.to), {
    error: "Expected from to be no later than to",
    path: ["from"],
  });
export type AuditListQuery = z.input<typeof auditListQuery>;

export const auditListResponse = z.object({
  events: z.array(auditEventSchema),
  /** Pass as `before` for the next (older) page; null on the last page. */
  nextCursor: z.number().nullable(),
});

export const auditIdParams = z.object({
  id: z.coerce
    .number({ error: "Expected an event id (a whole number)" })
    .int()
    .positive({ error: "Expected an event id (a whole number)" }),
});

export const auditDetailResponse = z.object({ event: auditDetailSchema });
