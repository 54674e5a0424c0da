import { useState } from "react";
import { ROLES, ROLE_LABELS, type Role } from "../../../../shared/roles";
import type { User } from "../../../../shared/schemas/users";
import { Ago } from "../../../components/ago";
import { Button } from "../../../components/button";
import { ConfirmDialog } from "../../../components/confirm-dialog";
import { useSessionUser } from "../../../lib/authorization";
import { cn } from "../../../lib/cn";
import { toast } from "../../../lib/toast";
import { useUpdateUser } from "../api/update-user";

const SELF_NOTE = "You cannot change your own role or disable your own account. Ask another admin.";

/** Everyone with an account: change a role in place, disable (after a question) or enable. */
export function UsersTable({ users }: { users: User[] }) {
  const me = useSessionUser();
  const update = useUpdateUser();
  const [disabling, setDisabling] = useState<User | null>(null);
  const pendingId = update.isPending ? update.variables?.id : undefined;

  // A role takes effect at once (a closed list even changes with the arrow keys), so the toast
  // that says so offers the way back to the role before.
  const changeRole = (user: User, role: Role) => {
    const before = user.role;
    update.mutate(
      { id: user.id, role },
      {
        onSuccess: (u) =>
          toast.success(`${u.name} is now ${ROLE_LABELS[u.role].toLowerCase()}.`, {
            label: "Undo",
            run: () => changeRole(u, before),
          }),
      },
    );
  };

  const setDisabled = (user: User, disabled: boolean) => {
    update.mutate(
      { id: user.id, disabled },
      {
        onSuccess: (u) => {
          setDisabling(null);
          toast.success(u.disabled ? `${u.name} can no longer sign in.` : `${u.name} can sign in again.`);
        },
        onError: () => setDisabling(null),
      },
    );
  };

  return (
    <>
      <table className="w-full border-collapse text-sm">
        <caption className="sr-only">Users</caption>
        <thead>
          <tr className="border-b border-paper-300 text-left text-xs font-semibold tracking-wide text-ink-muted">
            <th scope="col" className="py-2.5 pr-3 pl-5">
              Name
            </th>
            <th scope="col" className="px-3 py-2.5">
              Role
            </th>
            <th scope="col" className="px-3 py-2.5">
              Status
            </th>
            <th scope="col" className="px-3 py-2.5 whitespace-nowrap">
              Last sign-in
            </th>
            <th scope="col" className="py-2.5 pr-5 pl-3 text-right">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {users.map((user) => {
            const self = user.id === me.id;
            const busy = pendingId === user.id;
            return (
              <tr key={user.id} className={cn("border-b border-paper-200 last:border-b-0", user.disabled && "text-ink-muted")}>
                <td className="py-3 pr-3 pl-5">
                  <span className="block font-medium text-ink">
                    {user.name}
                    {self && <span className="ml-2 rounded bg-paper-200 px-1.5 py-0.5 text-xs font-normal text-ink-soft">you</span>}
                  </span>
                  <span className="block text-xs text-ink-muted">{user.email}</span>
                </td>
                <td className="px-3 py-3">
                  <select
                    aria-label={`Role of ${user.name}`}
                    value={user.role}
                    disabled={self || busy}
                    title={self ? SELF_NOTE : undefined}
                    aria-describedby={self ? "self-note" : undefined}
                    onChange={(e) => changeRole(user, e.target.value as Role)}
                    className="h-8 w-32 rounded-md border border-paper-300 bg-white px-2.5 pr-7 text-sm text-ink hover:border-ink-faint disabled:cursor-not-allowed disabled:bg-paper-100 disabled:text-ink-muted"
                  >
                    {ROLES.map((role) => (
                      <option key={role} value={role}>
                        {ROLE_LABELS[role]}
                      </option>
                    ))}
                  </select>
                </td>
                <td className="px-3 py-3">
                  {user.disabled ? (
                    <span className="inline-flex items-center gap-1.5 rounded-full border border-brick/40 bg-brick-soft px-2 py-0.5 text-xs font-medium text-brick">
                      <span aria-hidden="true" className="size-2 rounded-full border border-brick" />
                      Disabled
                    </span>
                  ) : (
                    <span className="inline-flex items-center gap-1.5 rounded-full border border-accent/40 bg-accent-faint px-2 py-0.5 text-xs font-medium text-accent-strong">
                      <span aria-hidden="true" className="size-2 rounded-full bg-accent" />
                      Active
                    </span>
                  )}
                </td>
                <td className="px-3 py-3 text-ink-soft">
                  {user.lastSignInAt ? <Ago iso={user.lastSignInAt} /> : <span className="text-ink-muted">Never</span>}
                </td>
                <td className="py-3 pr-5 pl-3 text-right">
                  {self ? (
                    <span id="self-note" className="text-xs text-ink-muted" title={SELF_NOTE}>
                      Your own account
                      <span className="sr-only">: {SELF_NOTE}</span>
                    </span>
                  ) : user.disabled ? (
                    <Button size="sm" busy={busy} onClick={() => setDisabled(user, false)} aria-label={`Enable ${user.name}`}>
                      Enable
                    </Button>
                  ) : (
                    <Button
                      size="sm"
                      busy={busy}
                      onClick={() => setDisabling(user)}
                      aria-label={`Disable ${user.name}`}
                      className="text-brick hover:border-brick/50"
                    >
                      Disable
                    </Button>
                  )}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
      <ConfirmDialog
        open={disabling !== null}
        title={disabling ? `Disable ${disabling.name}?` : ""}
        confirmLabel="Disable account"
        busy={update.isPending}
        onConfirm={() => disabling && setDisabled(disabling, true)}
        onCancel={() => setDisabling(null)}
      >
        {disabling && (
          <p>
            {disabling.email} will no longer be able to sign in. Their scans and work stay in the library. You can enable the account again
            at any time.
          </p>
        )}
      </ConfirmDialog>
    </>
  );
}
