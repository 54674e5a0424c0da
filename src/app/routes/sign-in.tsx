import { useEffect, useState } from "react";
import { Navigate, useNavigate, useSearchParams } from "react-router-dom";
import { BrandMark } from "../../components/brand-mark";
import { safeNext } from "../../config/paths";
import { clearSignedOut, justSignedOut } from "../../lib/signed-out";
import { useMe } from "../../features/auth/api/get-me";
import { SignInForm } from "../../features/auth/components/sign-in-form";
import { useStudio } from "../../features/studio/api/get-studio";

export function SignInRoute() {
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const me = useMe();
  const studio = useStudio();
  const next = safeNext(params.get("next"));
  // Only right after this browser signed out: a reload or a fresh visit says nothing.
  const [signedOut] = useState(justSignedOut);
  useEffect(clearSignedOut, []);

  if (me.data) return <Navigate to={next} replace />;

  return (
    <div className="flex min-h-screen flex-col items-center justify-center px-6 py-16">
      <title>Sign in · Platen</title>
      <div className="w-full max-w-sm">
        <div className="mb-8 text-center">
          <BrandMark className="mx-auto size-10" />
          <h1 className="mt-5 text-2xl font-semibold tracking-tight text-ink">{studio.data?.name ?? "Platen"}</h1>
          <p className="mt-1 text-sm text-ink-muted">{studio.data ? "Sign in to the studio's Platen" : "Sign in to your studio"}</p>
        </div>
        {signedOut && (
          <p
            role="status"
            data-testid="signed-out"
            className="mb-4 rounded-lg border border-accent/30 bg-accent-faint px-4 py-2.5 text-center text-sm text-accent-strong"
          >
            You are signed out.
          </p>
        )}
        <div className="rounded-xl border border-paper-300 bg-paper-50 px-7 py-7 shadow-sheet">
          <SignInForm onSignedIn={() => navigate(next, { replace: true })} />
        </div>
        {params.get("next") && <p className="mt-4 text-center text-xs text-ink-muted">You will return to the page you were on.</p>}
      </div>
    </div>
  );
}
