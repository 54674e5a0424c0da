import { NotAllowed } from "../../components/not-allowed";
import { Spinner } from "../../components/button";
import { LoadError } from "../../components/notice";
import { PageHeader, Panel } from "../../components/panel";
import { useUsers } from "../../features/users/api/get-users";
import { CreateUserForm } from "../../features/users/components/create-user-form";
import { UsersTable } from "../../features/users/components/users-table";
import { InviteForm } from "../../features/users/components/invite-form";
import { InvitationsList } from "../../features/users/components/invitations-list";
import { useHasRole, useSessionUser } from "../../lib/authorization";

export function UsersRoute() {
  const me = useSessionUser();
  const isAdmin = useHasRole("admin");
  if (!isAdmin) return <NotAllowed needed="admin" current={me.role} />;
  return <UsersPage />;
}

function UsersPage() {
  const users = useUsers();
  return (
    <>
      <title>Users · Platen</title>
      <PageHeader title="Users" description="Who can sign in to this studio, and what each of them may do." />
      <div className="grid grid-cols-1 items-start gap-6 xl:grid-cols-[minmax(0,2fr)_minmax(20rem,1fr)]">
        <div className="flex flex-col gap-6">
          <Panel title="Accounts" titleId="accounts-title" bodyClassName="p-0">
            {users.isPending ? (
              <p className="flex items-center gap-2 px-5 py-4 text-sm text-ink-muted">
                <Spinner /> Loading users…
              </p>
            ) : users.isError ? (
              <div className="p-5">
                <LoadError error={users.error} onRetry={() => void users.refetch()} />
              </div>
            ) : (
              <UsersTable users={users.data} />
            )}
          </Panel>
          <Panel title="Pending invitations" titleId="invitations-title" bodyClassName="p-0">
            <InvitationsList />
          </Panel>
        </div>
        <div className="flex flex-col gap-6">
          <Panel title="Invite someone" titleId="invite-title">
            <InviteForm />
          </Panel>
          <Panel title="Add a user with a password" titleId="add-user-title">
            <CreateUserForm />
          </Panel>
        </div>
      </div>
    </>
  );
}
