import { Link, useNavigate } from "react-router-dom";
import { Spinner } from "../../components/button";
import { Notice } from "../../components/notice";
import { PublicPage } from "../../components/public-page";
import { paths } from "../../config/paths";
import { useInvitationPreview } from "../../features/auth/api/invitation";
import { AcceptInviteForm } from "../../features/auth/components/accept-invite-form";
import { useLinkToken } from "../../lib/link-token";

/** Where an invitation's link lands: who is invited, then name and password, then in. */
export function JoinRoute() {
  const token = useLinkToken();
  const navigate = useNavigate();
  const preview = useInvitationPreview(token);

  if (!token) {
    return (
      <PublicPage title="Invitation" heading="This link is not complete">
        <Notice tone="error">Open the invitation again from the message, or copy its whole address into the browser.</Notice>
      </PublicPage>
    );
  }
  if (preview.isPending) {
    return (
      <PublicPage title="Invitation" heading="Opening your invitation…">
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Checking the link…
        </p>
      </PublicPage>
    );
  }
  if (preview.isError) {
    return (
      <PublicPage
        title="Invitation"
        heading="This invitation cannot be used"
        below={
          <Link className="font-medium text-accent hover:underline" to={paths.signIn}>
            Go to sign-in
          </Link>
        }
      >
        <Notice tone="error">{preview.error.message}</Notice>
      </PublicPage>
    );
  }
  const invitation = preview.data;
  return (
    <PublicPage
      title={`Join ${invitation.studio}`}
      heading={`Join ${invitation.studio}`}
      subheading={
        invitation.invitedBy ? `${invitation.invitedBy} invited you to the studio's Platen` : "You are invited to the studio's Platen"
      }
    >
      <AcceptInviteForm token={token} invitation={invitation} onAccepted={() => navigate("/", { replace: true })} />
    </PublicPage>
  );
}
