import { useQueryClient } from "@tanstack/react-query";
import { ROLE_DESCRIPTIONS, ROLE_LABELS } from "../../../shared/roles";
import { PageHeader, Panel } from "../../components/panel";
import { paths } from "../../config/paths";
import { ChangePasswordForm } from "../../features/account/components/change-password-form";
import { NoticeChoices } from "../../features/account/components/notice-choices";
import { OwnName } from "../../features/account/components/own-name";
import { meQueryOptions } from "../../features/auth/api/get-me";
import type { SessionUser } from "../../../shared/schemas/auth";
import { useSessionUser } from "../../lib/authorization";

/** Your own account: who you are here, your password, and which notices you get by e-mail. */
export function AccountRoute() {
  const me = useSessionUser();
  const queryClient = useQueryClient();
  // The rail and every screen read the signed-in person from this one query.
  const signedInAs = (user: SessionUser) => queryClient.setQueryData(meQueryOptions().queryKey, user);
  return (
    <>
      <title>Your account · Platen</title>
      <PageHeader title="Your account" description="Who you are in this studio, your password, and what Platen tells you by e-mail." />
      <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(16rem,1fr)_minmax(0,2fr)]">
        <Panel title="You" titleId="you-title">
          <dl className="flex flex-col gap-3 text-sm">
            <div>
              <dt className="text-xs text-ink-muted">Name</dt>
              <dd>
                <OwnName name={me.name} onRenamed={signedInAs} />
              </dd>
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
          </dl>
        </Panel>
        <div className="flex flex-col gap-6">
          <Panel title="Password" titleId="password-title">
            <ChangePasswordForm
              email={me.email}
              forgotHref={`${paths.forgotPassword}?email=${encodeURIComponent(me.email)}`}
              onChanged={signedInAs}
            />
          </Panel>
          <Panel title="Notices by e-mail" titleId="notices-title">
            <NoticeChoices email={me.email} />
          </Panel>
        </div>
      </div>
    </>
  );
}
