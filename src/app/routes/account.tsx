import { Link } from "react-router-dom";
import { ROLE_DESCRIPTIONS, ROLE_LABELS } from "../../../shared/roles";
import { PageHeader, Panel } from "../../components/panel";
import { paths } from "../../config/paths";
import { NoticeChoices } from "../../features/account/components/notice-choices";
import { useSessionUser } from "../../lib/authorization";

/** Your own account: who you are here, and which notices you get by e-mail. */
export function AccountRoute() {
  const me = useSessionUser();
  return (
    <>
      <title>Your account · Platen</title>
      <PageHeader title="Your account" description="Who you are in this studio, and what Platen tells you by e-mail." />
      <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(16rem,1fr)_minmax(0,2fr)]">
        <Panel title="You" titleId="you-title">
          <dl className="flex flex-col gap-3 text-sm">
            <div>
              <dt className="text-xs text-ink-muted">Name</dt>
              <dd className="font-medium text-ink">{me.name}</dd>
            </div>
            <div>
              <dt className="text-xs text-ink-muted">E-mail</dt>
              <dd className="text-ink">{me.email}</dd>
            </div>
            <div>
              <dt className="text-xs text-ink-muted">Role</dt>
              <dd className="text-ink">
                {ROLE_LABELS[me.role]}
                <span className="block text-xs text-ink-muted">{ROLE_DESCRIPTIONS[me.role]}</span>
              </dd>
            </div>
            <div>
              <dt className="text-xs text-ink-muted">Password</dt>
              <dd className="text-ink">
                <Link
                  to={`${paths.forgotPassword}?email=${encodeURIComponent(me.email)}`}
                  className="font-medium text-accent underline underline-offset-2 hover:text-accent-strong"
                >
                  Choose a new one by e-mail
                </Link>
                <span className="block text-xs text-ink-muted">
                  A link comes to your address; the new password signs you out everywhere else.
                </span>
              </dd>
            </div>
          </dl>
        </Panel>
        <Panel title="Notices by e-mail" titleId="notices-title">
          <NoticeChoices email={me.email} />
        </Panel>
      </div>
    </>
  );
}
