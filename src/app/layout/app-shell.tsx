import type { ReactNode } from "react";
import { Link, NavLink } from "react-router-dom";
import { hasRole, ROLE_LABELS } from "../../../shared/roles";
import type { SessionUser } from "../../../shared/schemas/auth";
import { BrandMark } from "../../components/brand-mark";
import { Button } from "../../components/button";
import { paths } from "../../config/paths";
import { useLogout } from "../../features/auth/api/logout";
import { useMailbox } from "../../features/mailbox/api/mailbox";
import { useStudio } from "../../features/studio/api/get-studio";
import { cn } from "../../lib/cn";
import { LiveIndicator } from "../live-events";

interface NavItem {
  to: string;
  label: string;
  icon: ReactNode;
}

const icon = (d: string) => (
  <svg viewBox="0 0 20 20" className="size-4 shrink-0" aria-hidden="true">
    <path d={d} fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" strokeLinejoin="round" />
  </svg>
);

const QUEUE_ICON = icon("M3 5h14M3 10h10M3 15h6");
const SCANS_ICON = icon("M3.5 4.5h13v11h-13zM6 12l3-3 2.5 2.5L13 10l2 2");
const WORK_ICON = icon("M3.5 3.5h5.5v5.5H3.5zM11 3.5h5.5v5.5H11zM3.5 11h5.5v5.5H3.5zM11 11h5.5v5.5H11z");
const RECIPES_ICON = icon("M10 3.5c2.8 3.6 4.5 6 4.5 8.5a4.5 4.5 0 0 1-9 0c0-2.5 1.7-4.9 4.5-8.5ZM8 12.5a2 2 0 0 0 2 2");
const PRESETS_ICON = icon("M4 3.5h8l4 4v9H4zM12 3.5v4h4M7 11h6M7 14h4");
const BATCHES_ICON = icon("M3.5 6.5h13v10h-13zM5.5 4h9M7.5 1.5h5");
const USERS_ICON = icon(
  "M7.5 9a2.5 2.5 0 1 0 0-5 2.5 2.5 0 0 0 0 5ZM3 16c.5-2.5 2.3-4 4.5-4s4 1.5 4.5 4M13.5 9a2 2 0 1 0 0-4M14.5 12c1.4.4 2.3 1.8 2.5 4",
);

const MAILBOX_ICON = icon("M3 5.5h14v9H3zM3 6l7 5 7-5");
const AUDIT_ICON = icon("M5 3.5h10v13H5zM7.5 7h5M7.5 10h5M7.5 13h3");
const LIBRARY_ICON = icon("M3.5 4.5h4l1.5 2h7.5v9h-13zM3.5 8.5h13");
const STUDIO_ICON = icon("M3.5 16.5v-9l6.5-4 6.5 4v9zM8 16.5v-5h4v5");

/** The frame around every signed-in page: a rail with the studio, the screens and who is here. */
export function AppShell({ user, children }: { user: SessionUser; children: ReactNode }) {
  const studio = useStudio();
  // Once signed out, the signed-in frame sends the page to sign in (ProtectedLayout).
  const logout = useLogout();
  // The development mailbox exists only while mail goes to the local fake (404 otherwise).
  const mailbox = useMailbox(hasRole(user.role, "admin"));

  const items: NavItem[] = [
    { to: paths.queue, label: "Queue", icon: QUEUE_ICON },
    { to: paths.scans, label: "Scans", icon: SCANS_ICON },
    { to: paths.work, label: "Approved work", icon: WORK_ICON },
    ...(hasRole(user.role, "operator") ? [{ to: paths.recipes, label: "Recipes", icon: RECIPES_ICON }] : []),
    ...(hasRole(user.role, "operator") ? [{ to: paths.presets, label: "Presets", icon: PRESETS_ICON }] : []),
    { to: paths.batches, label: "Batches", icon: BATCHES_ICON },
    ...(hasRole(user.role, "admin") ? [{ to: paths.users, label: "Users", icon: USERS_ICON }] : []),
    ...(hasRole(user.role, "admin") ? [{ to: paths.audit, label: "Audit trail", icon: AUDIT_ICON }] : []),
    ...(hasRole(user.role, "admin") ? [{ to: paths.library, label: "Library", icon: LIBRARY_ICON }] : []),
    ...(hasRole(user.role, "admin") ? [{ to: paths.studio, label: "Studio", icon: STUDIO_ICON }] : []),
    ...(mailbox.data ? [{ to: paths.mailbox, label: "Mailbox", icon: MAILBOX_ICON }] : []),
  ];

  const signOut = () => logout.mutate();

  return (
    <div className="flex min-h-screen">
      <a
        href="#main"
        className="sr-only focus:not-sr-only focus:fixed focus:top-3 focus:left-3 focus:z-50 focus:rounded focus:bg-white focus:px-3 focus:py-2"
      >
        Skip to content
      </a>
      <aside className="w-56 shrink-0 border-r border-paper-300 bg-paper-100">
        <div className="sticky top-0 flex h-screen flex-col">
          <div className="px-6 pt-7 pb-6">
            <div className="flex items-center gap-2.5">
              <BrandMark />
              <span className="text-xs font-semibold tracking-[0.18em] text-ink-muted uppercase">Platen</span>
            </div>
            <p className="mt-3 text-base leading-snug font-semibold text-ink" aria-label="Studio">
              {studio.data?.name ?? " "}
            </p>
            {studio.data?.demo && (
              <p className="mt-1 inline-block rounded bg-ochre-soft px-1.5 py-0.5 text-[11px] font-medium text-ochre">Demo studio</p>
            )}
          </div>
          <nav aria-label="Main" className="flex-1 px-3">
            <ul className="flex flex-col gap-0.5">
              {items.map((item) => (
                <li key={item.to}>
                  <NavLink
                    to={item.to}
                    className={({ isActive }) =>
                      cn(
                        "flex items-center gap-3 rounded-md px-3 py-2 text-sm font-medium transition-colors",
                        isActive
                          ? "bg-paper-50 text-ink shadow-sheet ring-1 ring-paper-300"
                          : "text-ink-soft hover:bg-paper-200 hover:text-ink",
                      )
                    }
                  >
                    {item.icon}
                    {item.label}
                  </NavLink>
                </li>
              ))}
            </ul>
          </nav>
          <div className="px-6 pb-2">
            <LiveIndicator />
          </div>
          <div className="border-t border-paper-300 px-6 py-5" aria-label="Signed in" role="group">
            <p className="truncate text-sm font-semibold text-ink" title={user.email}>
              {user.name}
            </p>
            <p className="mt-0.5 truncate text-xs text-ink-muted">
              <span className="font-medium text-ink-soft">{ROLE_LABELS[user.role]}</span> · {user.email}
            </p>
            <NavLink to={paths.account} className="mt-2 block text-xs font-medium text-accent hover:underline">
              Your account and notices
            </NavLink>
            <Button size="sm" variant="secondary" className="mt-3 w-full" onClick={signOut} busy={logout.isPending}>
              Sign out
            </Button>
          </div>
        </div>
      </aside>
      <main id="main" className="min-w-0 flex-1 px-8 pt-9 pb-16">
        <div className="mx-auto max-w-[1180px]">
          {user.generatedPassword && (
            <p
              role="note"
              data-testid="generated-password"
              className="mb-6 rounded-lg border border-ochre/40 bg-ochre-soft px-4 py-2.5 text-sm text-ink"
            >
              You are signed in with the password Platen generated at first start, which is also kept in a file on the server.{" "}
              <Link to={paths.account} className="font-medium text-accent underline underline-offset-2 hover:text-accent-strong">
                Choose one of your own
              </Link>
              : the kept copy is removed when you do.
            </p>
          )}
          {children}
        </div>
      </main>
    </div>
  );
}
