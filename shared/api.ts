import type { ZodType } from "zod";
import type { Access } from "./roles";
import { loginBody } from "./schemas/auth";
import { changePasswordBody, renameSelfBody } from "./schemas/account";
import { auditIdParams, auditListQuery } from "./schemas/audit";
import {
  acceptInvitationBody,
  completeResetBody,
  createInvitationBody,
  mailboxIdParams,
  requestResetBody,
  tokenBody,
  updateNoticesBody,
} from "./schemas/mail";
import { createUserBody, idParams, updateUserBody } from "./schemas/users";
import { refileBody, tidyLibraryBody } from "./schemas/library";
import { deleteFragmentFilesQuery } from "./schemas/fragment-files";
import { keptCopyKeyQuery } from "./schemas/offsite";
import { createIntakeBody, scanListQuery, setResolutionBody } from "./schemas/scans";
import { updateStudioBody, writeMastersRightsBody } from "./schemas/studio";
import { applyRecipeBody, createRecipeBody, previewRecipeBody, updateRecipeBody } from "./schemas/recipe-api";
import {
  batchDownloadQuery,
  batchItemParams,
  outputPictureQuery,
  createBatchBody,
  createPresetBody,
  previewPresetBody,
  rerunBatchBody,
  updatePresetBody,
} from "./schemas/preset-api";
import {
  drawFragmentBody,
  fragmentListQuery,
  fragmentOutputParams,
  mergeFragmentsBody,
  resplitBody,
  updateFragmentBody,
} from "./schemas/fragments";

export type HttpMethod = "GET" | "POST" | "PATCH" | "DELETE";

export interface RouteSpec {
  method: HttpMethod;
  /** Express-style path with `:name` parameters, always under /api. */
  path: string;
  /** Who may call it. The server's one access middleware enforces this; unlisted routes are refused. */
  access: Access;
  /** True for routes that change data (the role matrix test walks these). */
  mutates: boolean;
  params?: ZodType;
  query?: ZodType;
  body?: ZodType;
}

function route<const S extends RouteSpec>(spec: S): S {
  return spec;
}

/**
 * Every API route, in one table: the server mounts handlers by these keys, the access middleware
 * checks roles from it, the client builds URLs from it and the tests walk it.
 */
export const API = {
  health: route({ method: "GET", path: "/api/health", access: "public", mutates: false }),
  login: route({ method: "POST", path: "/api/auth/login", access: "public", mutates: true, body: loginBody }),
  logout: route({ method: "POST", path: "/api/auth/logout", access: "viewer", mutates: true }),
  me: route({ method: "GET", path: "/api/auth/me", access: "viewer", mutates: false }),

  // Public: the sign-in page shows the studio's name.
  studio: route({ method: "GET", path: "/api/studio", access: "public", mutates: false }),
  studioSettings: route({ method: "GET", path: "/api/studio/settings", access: "operator", mutates: false }),
  studioUpdate: route({
    method: "PATCH",
    path: "/api/studio/settings",
    access: "admin",
    mutates: true,
    body: updateStudioBody,
  }),
  // Masters already made and the studio's creator and copyright: how many agree; write them in.
  mastersRights: route({ method: "GET", path: "/api/studio/masters-rights", access: "admin", mutates: false }),
  mastersRightsWrite: route({
    method: "POST",
    path: "/api/studio/masters-rights",
    access: "admin",
    mutates: true,
    body: writeMastersRightsBody,
  }),
  events: route({ method: "GET", path: "/api/events", access: "viewer", mutates: false }),
  queue: route({ method: "GET", path: "/api/queue", access: "viewer", mutates: false }),

  intakesList: route({ method: "GET", path: "/api/intakes", access: "viewer", mutates: false }),
  intakesCreate: route({
    method: "POST",
    path: "/api/intakes",
    access: "operator",
    mutates: true,
    body: createIntakeBody,
  }),

  scansList: route({
    method: "GET",
    path: "/api/scans",
    access: "viewer",
    mutates: false,
    query: scanListQuery,
  }),
  scansUpload: route({ method: "POST", path: "/api/scans/upload", access: "operator", mutates: true }),
  scansGet: route({ method: "GET", path: "/api/scans/:id", access: "viewer", mutates: false, params: idParams }),
  // The whole scan shows every piece on the bed, reviewed or not: operators only (viewers see
  // approved fragments, one at a time).
  scansPreview: route({
    method: "GET",
    path: "/api/scans/:id/preview",
    access: "operator",
    mutates: false,
    params: idParams,
  }),
  scansThumb: route({
    method: "GET",
    path: "/api/scans/:id/thumb",
    access: "operator",
    mutates: false,
    params: idParams,
  }),
  scansRetry: route({
    method: "POST",
    path: "/api/scans/:id/retry",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  // The DPI the scan was made at, when the file says none or a wrong one.
  scansSetResolution: route({
    method: "PATCH",
    path: "/api/scans/:id/resolution",
    access: "operator",
    mutates: true,
    params: idParams,
    body: setResolutionBody,
  }),
  // Undoes the above: the file's own figure again (or the studio's assumed one when it has none).
  scansRestoreResolution: route({
    method: "DELETE",
    path: "/api/scans/:id/resolution",
    access: "operator",
    mutates: true,
    params: idParams,
  }),

  scanFragments: route({
    method: "GET",
    path: "/api/scans/:id/fragments",
    access: "viewer",
    mutates: false,
    params: idParams,
  }),
  fragmentsDraw: route({
    method: "POST",
    path: "/api/scans/:id/fragments",
    access: "operator",
    mutates: true,
    params: idParams,
    body: drawFragmentBody,
  }),
  fragmentsApproveRemaining: route({
    method: "POST",
    path: "/api/scans/:id/approve-remaining",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  // Every approved piece of the scan whose master and web copy could not be made, queued again at once.
  scansRenderRetry: route({
    method: "POST",
    path: "/api/scans/:id/render-retry",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  scansResplit: route({
    method: "POST",
    path: "/api/scans/:id/resplit",
    access: "operator",
    mutates: true,
    params: idParams,
    body: resplitBody,
  }),
  fragmentsList: route({
    method: "GET",
    path: "/api/fragments",
    access: "viewer",
    mutates: false,
    query: fragmentListQuery,
  }),
  fragmentsGet: route({ method: "GET", path: "/api/fragments/:id", access: "viewer", mutates: false, params: idParams }),
  fragmentsUpdate: route({
    method: "PATCH",
    path: "/api/fragments/:id",
    access: "operator",
    mutates: true,
    params: idParams,
    body: updateFragmentBody,
  }),
  fragmentsReset: route({
    method: "POST",
    path: "/api/fragments/:id/reset",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  // A failed render of an approved piece, queued again (once: a piece already queued is refused).
  fragmentsRenderRetry: route({
    method: "POST",
    path: "/api/fragments/:id/render-retry",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  fragmentsMerge: route({
    method: "POST",
    path: "/api/fragments/merge",
    access: "operator",
    mutates: true,
    body: mergeFragmentsBody,
  }),
  fragmentsUnmerge: route({
    method: "POST",
    path: "/api/fragments/:id/unmerge",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  fragmentsThumb: route({
    method: "GET",
    path: "/api/fragments/:id/thumb",
    access: "viewer",
    mutates: false,
    params: idParams,
  }),
  // An admin deletes a piece's master and copies for good (asked first: the plan says what goes).
  fragmentsFilesPlan: route({ method: "GET", path: "/api/fragments/:id/files", access: "admin", mutates: false, params: idParams }),
  fragmentsFilesDelete: route({
    method: "DELETE",
    path: "/api/fragments/:id/files",
    access: "admin",
    mutates: true,
    params: idParams,
    query: deleteFragmentFilesQuery,
  }),
  fragmentsOutput: route({
    method: "GET",
    path: "/api/fragments/:id/outputs/:kind",
    access: "viewer",
    mutates: false,
    params: fragmentOutputParams,
  }),
  // A small picture of that file as it came out (after the recipe), for the approved work.
  fragmentsOutputThumb: route({
    method: "GET",
    path: "/api/fragments/:id/outputs/:kind/thumb",
    access: "viewer",
    mutates: false,
    params: fragmentOutputParams,
  }),

  recipesList: route({ method: "GET", path: "/api/recipes", access: "operator", mutates: false }),
  recipesGet: route({ method: "GET", path: "/api/recipes/:id", access: "operator", mutates: false, params: idParams }),
  recipesCreate: route({ method: "POST", path: "/api/recipes", access: "operator", mutates: true, body: createRecipeBody }),
  recipesUpdate: route({
    method: "PATCH",
    path: "/api/recipes/:id",
    access: "operator",
    mutates: true,
    params: idParams,
    body: updateRecipeBody,
  }),
  recipesApply: route({
    method: "POST",
    path: "/api/recipes/:id/apply",
    access: "operator",
    mutates: true,
    params: idParams,
    body: applyRecipeBody,
  }),
  recipesPreview: route({
    method: "POST",
    path: "/api/recipes/preview",
    access: "operator",
    // Renders a picture; changes nothing.
    mutates: false,
    body: previewRecipeBody,
  }),
  presetsList: route({ method: "GET", path: "/api/presets", access: "viewer", mutates: false }),
  presetsGet: route({ method: "GET", path: "/api/presets/:id", access: "viewer", mutates: false, params: idParams }),
  presetsCreate: route({ method: "POST", path: "/api/presets", access: "operator", mutates: true, body: createPresetBody }),
  presetsUpdate: route({
    method: "PATCH",
    path: "/api/presets/:id",
    access: "operator",
    mutates: true,
    params: idParams,
    body: updatePresetBody,
  }),
  presetsPreview: route({
    method: "POST",
    path: "/api/presets/preview",
    access: "operator",
    // Renders a picture; changes nothing.
    mutates: false,
    body: previewPresetBody,
  }),
  batchesList: route({ method: "GET", path: "/api/batches", access: "viewer", mutates: false }),
  batchesEstimate: route({
    method: "POST",
    path: "/api/batches/estimate",
    access: "operator",
    // Counts only; changes nothing.
    mutates: false,
    body: createBatchBody,
  }),
  batchesCreate: route({ method: "POST", path: "/api/batches", access: "operator", mutates: true, body: createBatchBody }),
  batchesGet: route({ method: "GET", path: "/api/batches/:id", access: "viewer", mutates: false, params: idParams }),
  batchesRetry: route({ method: "POST", path: "/api/batches/:id/retry", access: "operator", mutates: true, params: idParams }),
  batchesCancel: route({ method: "POST", path: "/api/batches/:id/cancel", access: "operator", mutates: true, params: idParams }),
  batchesRerun: route({
    method: "POST",
    path: "/api/batches/:id/rerun",
    access: "operator",
    mutates: true,
    params: idParams,
    body: rerunBatchBody,
  }),
  // One output of a batch: its file, and a small picture of it for the batch page.
  batchesItemFile: route({
    method: "GET",
    path: "/api/batches/:id/items/:itemId/file",
    access: "viewer",
    mutates: false,
    params: batchItemParams,
  }),
  batchesItemThumb: route({
    method: "GET",
    path: "/api/batches/:id/items/:itemId/thumb",
    access: "viewer",
    mutates: false,
    params: batchItemParams,
    query: outputPictureQuery,
  }),
  batchesDownload: route({
    method: "GET",
    path: "/api/batches/:id/download",
    access: "viewer",
    mutates: false,
    params: idParams,
    query: batchDownloadQuery,
  }),

  usersList: route({ method: "GET", path: "/api/users", access: "admin", mutates: false }),
  usersCreate: route({ method: "POST", path: "/api/users", access: "admin", mutates: true, body: createUserBody }),
  usersUpdate: route({
    method: "PATCH",
    path: "/api/users/:id",
    access: "admin",
    mutates: true,
    params: idParams,
    body: updateUserBody,
  }),

  // E-mail: invitations (admins), the invitee's accept page and password resets (public: the person
  // is not signed in yet; the token in the body is what admits them), notice choices (everyone).
  invitationsList: route({ method: "GET", path: "/api/invitations", access: "admin", mutates: false }),
  invitationsCreate: route({ method: "POST", path: "/api/invitations", access: "admin", mutates: true, body: createInvitationBody }),
  invitationsResend: route({ method: "POST", path: "/api/invitations/:id/resend", access: "admin", mutates: true, params: idParams }),
  invitationsRevoke: route({ method: "DELETE", path: "/api/invitations/:id", access: "admin", mutates: true, params: idParams }),
  invitationsPreview: route({
    method: "POST",
    path: "/api/invitations/preview",
    access: "public",
    // Reads who is invited; changes nothing.
    mutates: false,
    body: tokenBody,
  }),
  invitationsAccept: route({
    method: "POST",
    path: "/api/invitations/accept",
    access: "public",
    mutates: true,
    body: acceptInvitationBody,
  }),
  passwordResetRequest: route({
    method: "POST",
    path: "/api/auth/password-reset",
    access: "public",
    mutates: true,
    body: requestResetBody,
  }),
  passwordResetPreview: route({
    method: "POST",
    path: "/api/auth/password-reset/preview",
    access: "public",
    // Reads whether the link still works; changes nothing.
    mutates: false,
    body: tokenBody,
  }),
  passwordResetComplete: route({
    method: "POST",
    path: "/api/auth/password-reset/complete",
    access: "public",
    mutates: true,
    body: completeResetBody,
  }),
  noticesGet: route({ method: "GET", path: "/api/account/notices", access: "viewer", mutates: false }),
  noticesUpdate: route({ method: "PATCH", path: "/api/account/notices", access: "viewer", mutates: true, body: updateNoticesBody }),
  // Signed in, any role: a new password (the current one first; other sessions end) and one's own name.
  passwordChange: route({ method: "POST", path: "/api/account/password", access: "viewer", mutates: true, body: changePasswordBody }),
  nameUpdate: route({ method: "PATCH", path: "/api/account/name", access: "viewer", mutates: true, body: renameSelfBody }),
  // Only while mail goes to the project's local SMTP fake; 404 otherwise.
  mailboxList: route({ method: "GET", path: "/api/dev/mailbox", access: "admin", mutates: false }),
  mailboxGet: route({ method: "GET", path: "/api/dev/mailbox/:id", access: "admin", mutates: false, params: mailboxIdParams }),

  // The audit trail: read-only for admins. There is no route that edits or deletes it.
  auditList: route({ method: "GET", path: "/api/audit", access: "admin", mutates: false, query: auditListQuery }),
  auditGet: route({ method: "GET", path: "/api/audit/:id", access: "admin", mutates: false, params: auditIdParams }),

  // Off-site copy of masters (storage): status per master, a re-check and a fresh copy.
  fragmentsOffsite: route({ method: "GET", path: "/api/fragments/:id/offsite", access: "operator", mutates: false, params: idParams }),
  fragmentsOffsiteCheck: route({
    method: "POST",
    path: "/api/fragments/:id/offsite/check",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  fragmentsOffsiteCopy: route({
    method: "POST",
    path: "/api/fragments/:id/offsite/copy",
    access: "operator",
    mutates: true,
    params: idParams,
  }),
  offsiteCheckAll: route({ method: "POST", path: "/api/offsite/check", access: "admin", mutates: true }),
  // Copies kept in the off-site bucket after their piece's files were deleted: no master names them.
  offsiteKept: route({ method: "GET", path: "/api/offsite/kept", access: "admin", mutates: false }),
  offsiteKeptDownload: route({ method: "GET", path: "/api/offsite/kept/file", access: "admin", mutates: false, query: keptCopyKeyQuery }),
  offsiteKeptRemove: route({ method: "DELETE", path: "/api/offsite/kept", access: "admin", mutates: true, query: keptCopyKeyQuery }),

  // The library itself: where it is, and tidying away files nothing names any more.
  library: route({ method: "GET", path: "/api/library", access: "admin", mutates: false }),
  libraryTidy: route({ method: "POST", path: "/api/library/tidy", access: "admin", mutates: true, body: tidyLibraryBody }),
  // Files the library's originals no scan names (a database restored from an older backup) again as new scans.
  libraryRefile: route({ method: "POST", path: "/api/library/refile", access: "admin", mutates: true, body: refileBody }),
} as const satisfies Record<string, RouteSpec>;

export type RouteName = keyof typeof API;

/** Fills `:name` parameters: apiPath(API.scansGet, { id }) → "/api/scans/<id>". */
export function apiPath(spec: RouteSpec, params: Record<string, string> = {}): string {
  return spec.path.replace(/:([A-Za-z]+)/g, (_, name: string) => {
    const value = params[name];
    if (value === undefined) throw new Error(`Missing parameter ${name} for ${spec.path}`);
    return encodeURIComponent(value);
  });
}

/** Matches a concrete path against a route pattern; returns its parameters or null. */
export function matchPath(pattern: string, path: string): Record<string, string> | null {
  const a = pattern.split("/");
  const b = path.split("/");
  if (a.length !== b.length) return null;
  const params: Record<string, string> = {};
  for (let i = 0; i < a.length; i++) {
    const p = a[i]!;
    const s = b[i]!;
    if (p.startsWith(":")) {
      if (!s) return null;
      params[p.slice(1)] = decodeURIComponent(s);
    } else if (p !== s) return null;
  }
  return params;
}

/** The route a request addresses, or null when no route has that method and path. */
export function findRoute(method: string, path: string): { name: RouteName; spec: RouteSpec } | null {
  const clean = path.length > 1 && path.endsWith("/") ? path.slice(0, -1) : path;
  for (const [name, spec] of Object.entries(API) as [RouteName, RouteSpec][]) {
    if (spec.method === method && matchPath(spec.path, clean)) return { name, spec };
  }
  return null;
}
