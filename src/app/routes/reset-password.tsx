import { Link, useNavigate } from "react-router-dom";
import { Spinner } from "../../components/button";
import { Notice } from "../../components/notice";
import { PublicPage } from "../../components/public-page";
import { paths } from "../../config/paths";
import { useResetPreview } from "../../features/auth/api/password-reset";
import { ResetPasswordForm } from "../../features/auth/components/reset-password-form";
import { useLinkToken } from "../../lib/link-token";

/** Where a reset link lands: a new password, then signed in. */
export function ResetPasswordRoute() {
  const token = useLinkToken();
  const navigate = useNavigate();
  const preview = useResetPreview(token);
  const again = (
    <Link to={paths.forgotPassword} className="font-medium text-accent hover:underline">
      Ask for a new link
    </Link>
  );

  if (!token) {
    return (
      <PublicPage title="New password" heading="This link is not complete" below={again}>
        <Notice tone="error">Open the link again from the message, or copy its whole address into the browser.</Notice>
      </PublicPage>
    );
  }
  if (preview.isPending) {
    return (
      <PublicPage title="New password" heading="Choose a new password">
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Checking the link…
        </p>
      </PublicPage>
    );
  }
  if (preview.isError) {
    return (
      <PublicPage title="New password" heading="This link cannot be used" below={again}>
        <Notice tone="error">{preview.error.message}</Notice>
      </PublicPage>
    );
  }
  return (
    <PublicPage title="New password" heading="Choose a new password">
      <ResetPasswordForm token={token} email={preview.data.email} onDone={() => navigate("/", { replace: true })} />
    </PublicPage>
  );
}
