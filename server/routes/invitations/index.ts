import { Router, type Request } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import {
  acceptInvitation,
  createInvitation,
  listInvitations,
  previewInvitation,
  resendInvitation,
  revokeInvitation,
} from "../../services/invitations";
import { presentSessionUser } from "../../presenters/user";
import type { AppDeps } from "../../app";
import type { Mailer } from "../../mail/mailer";
import type { UserRow } from "../../services/users";

/** Signs this browser in as `user` (a fresh session id, as at sign-in). */
export function signInAs(req: Request, user: UserRow): Promise<void> {
  const sessionUser = { id: user.id, email: user.email, name: user.name, role: user.role };
  return new Promise((resolve, reject) => req.logIn(sessionUser, (err) => (err ? reject(err) : resolve())));
}

export function invitationsRouter(deps: AppDeps & { mailer: Mailer }): Router {
  const router = Router();
  const { db } = deps.database;
  const svc = { db, mailer: deps.mailer, config: deps.config, log: deps.log };

  handle(router, API.invitationsList, async () => ({ invitations: await listInvitations(db) }));
  handle(router, API.invitationsCreate, async ({ body, user, req, res }) => {
    const invitation = await createInvitation({ ...svc, log: req.log }, user, body);
    req.log.info({ invitation: invitation.id, role: invitation.role, sent: !invitation.sendError }, "invitation created");
    res.status(201);
    return { invitation };
  });
  handle(router, API.invitationsResend, async ({ params, req }) => {
    const invitation = await resendInvitation({ ...svc, log: req.log }, params.id);
    req.log.info({ invitation: invitation.id, sent: !invitation.sendError }, "invitation resent");
    return { invitation };
  });
  handle(router, API.invitationsRevoke, async ({ params, req, res }) => {
    await revokeInvitation(db, params.id);
    req.log.info({ invitation: params.id }, "invitation revoked");
    res.status(204).end();
  });
  handle(router, API.invitationsPreview, async ({ body }) => previewInvitation(db, body.token));
  handle(router, API.invitationsAccept, async ({ body, req, res }) => {
    const user = await acceptInvitation(db, deps.config, body);
    await signInAs(req, user);
    req.log.info({ user: user.id, role: user.role }, "invitation accepted");
    res.status(201);
    return { user: presentSessionUser(user) };
  });
  return router;
}
