import { Navigate, Outlet, useLocation } from "react-router-dom";
import { paths, signInPath } from "../../config/paths";
import { justSignedOut } from "../../lib/signed-out";
import { useMe } from "../../features/auth/api/get-me";
import { SessionProvider } from "../../lib/authorization";
import { LoadError } from "../../components/notice";
import { Spinner } from "../../components/button";
import { LiveEventsProvider } from "../live-events";
import { AppShell } from "./app-shell";

/** Everything behind sign-in: asks who is signed in, and sends everyone else to sign in first. */
export function ProtectedLayout() {
  const me = useMe();
  const location = useLocation();

  if (me.isPending) {
    return (
      <div className="flex min-h-screen items-center justify-center gap-3 text-sm text-ink-muted">
        <Spinner /> Opening Platen…
      </div>
    );
  }
  if (me.isError) {
    return (
      <div className="mx-auto max-w-lg p-12">
        <LoadError error={me.error} onRetry={() => void me.refetch()} />
      </div>
    );
  }
  if (!me.data) {
    // Signed out here: to the sign-in page itself (it says so), not back to this page afterwards.
    if (justSignedOut()) return <Navigate to={paths.signIn} replace />;
    return <Navigate to={signInPath(location.pathname + location.search)} replace />;
  }
  return (
    <SessionProvider user={me.data}>
      <LiveEventsProvider>
        <AppShell user={me.data}>
          <Outlet />
        </AppShell>
      </LiveEventsProvider>
    </SessionProvider>
  );
}
