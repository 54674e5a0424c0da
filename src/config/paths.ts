import { INVITE_PAGE, RESET_PAGE } from "../../shared/schemas/mail";

/** Every screen's address in one place, so links and the router agree. */
export const paths = {
  signIn: "/sign-in",
  /** Public pages that links in messages (or the sign-in page) open. */
  forgotPassword: "/forgot-password",
  join: INVITE_PAGE,
  resetPassword: RESET_PAGE,
  /** Your own account: notices by e-mail. */
  account: "/account",
  /** The development mailbox (admins, only while mail goes to the local fake). */
  mailbox: "/mailbox",
  queue: "/queue",
  scans: "/scans",
  scan: (id: string) => `/scans/${encodeURIComponent(id)}`,
  scanReview: (id: string) => `/scans/${encodeURIComponent(id)}/review`,
  fragment: (id: string) => `/fragments/${encodeURIComponent(id)}`,
  /** Approved work: the fragments that passed review, for every role (viewers land here). */
  work: "/work",
  recipes: "/recipes",
  recipe: (id: string) => `/recipes/${encodeURIComponent(id)}`,
  /** Apply a recipe to fragments chosen on a grid. */
  recipeApply: (id: string) => `/recipes/${encodeURIComponent(id)}/apply`,
  users: "/users",
  /** Where the files are, and tidying away the left-over ones (admins). */
  library: "/library",
  /** The studio's name, assumed resolution and the rights written into files (admins). */
  studio: "/studio",
  /** The audit trail (admins); ?event= opens one event beside the list. */
  audit: "/audit",
  /** Output presets by kind, and the editor of one (a new one takes ?kind= or ?from=). */
  presets: "/presets",
  presetNew: "/presets/new",
  preset: (id: string) => `/presets/${encodeURIComponent(id)}`,
  batches: "/batches",
  /** The batch builder (?intake= and ?scan= preset its filters). */
  batchNew: "/batches/new",
  batch: (id: string) => `/batches/${encodeURIComponent(id)}`,
} as const;

/** The sign-in address that brings the person back to `from` afterwards. */
export function signInPath(from?: string): string {
  if (!from || from === "/" || from.startsWith(paths.signIn)) return paths.signIn;
  return `${paths.signIn}?next=${encodeURIComponent(from)}`;
}

/**
 * A safe place to go after sign-in: only paths inside this app, never another origin. Without one,
 * the home address, which sends each role to its own landing page.
 */
export function safeNext(next: string | null): string {
  if (!next || !next.startsWith("/") || next.startsWith("//") || next.startsWith(paths.signIn)) {
    return "/";
  }
  return next;
}
