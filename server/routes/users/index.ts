import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { createUser, listUsers, updateUser } from "../../services/users";
import { presentUser } from "../../presenters/user";
import type { AppDeps } from "../../app";

export function usersRouter({ database }: AppDeps): Router {
  const router = Router();
  const { db } = database;
  handle(router, API.usersList, async () => ({ users: (await listUsers(db)).map(presentUser) }));
  handle(router, API.usersCreate, async ({ body, res, req }) => {
    const row = await createUser(db, body);
    req.log.info({ created: row.id, role: row.role }, "user created");
    res.status(201);
    return { user: presentUser(row) };
  });
  handle(router, API.usersUpdate, async ({ params, body, user, req }) => {
    const row = await updateUser(db, user.id, params.id, body);
    req.log.info({ target: row.id, patch: body }, "user updated");
    return { user: presentUser(row) };
  });
  return router;
}
