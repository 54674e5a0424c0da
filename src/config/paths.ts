/** Every screen's address in one place, so links and the router agree. */
export const paths = {
  signIn: "/sign-in",
  queue: "/queue",
  scans: "/scans",
  scan: (id: string) => `/scans/${encodeURIComponent(id)}`,
  users: "/users",
} as const;

/** The sign-in address that brings the person back to `from` afterwards. */
export function signInPath(from?: string): string {
  if (!from || from === "/" || from.startsWith(paths.signIn)) return paths.signIn;
  return `${paths.signIn}?next=${encodeURIComponent(from)}`;
}

/** A safe place to go after sign-in: only paths inside this app, never another origin. */
export function safeNext(next: string | null): string {
  if (!next || !next.startsWith("/") || next.startsWith("//") || next.startsWith(paths.signIn)) {
    return paths.queue;
  }
  return next;
}
