import passport from "passport";
import { Strategy as LocalStrategy } from "passport-local";
import type { Db } from "../db";
import { findUser, verifyPassword } from "../services/users";
import type { SessionUser } from "../../shared/schemas/auth";

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // eslint-disable-next-line @typescript-eslint/no-empty-object-type
    interface User extends SessionUser {}
  }
}

/** Configures a passport instance for this app: e-mail and password, user id in the session. */
export function createPassport(db: Db): passport.PassportStatic {
  const instance = new passport.Passport() as unknown as passport.PassportStatic;
  instance.use(
    new LocalStrategy({ usernameField: "email", passwordField: "password" }, (email, password, done) => {
      verifyPassword(db, email, password)
        .then((v) => {
          if (v.ok) return done(null, toSessionUser(v.user));
          return done(null, false, {
            message: v.reason === "disabled" ? "This account is disabled. Ask a studio admin to enable it." : "Wrong e-mail or password.",
          });
        })
        .catch(done);
    }),
  );
  instance.serializeUser((user, done) => done(null, user.id));
  instance.deserializeUser((id: string, done) => {
    findUser(db, id)
      .then((row) => done(null, row && !row.disabledAt ? toSessionUser(row) : false))
      .catch(done);
  });
  return instance;
}

function toSessionUser(row: { id: string; email: string; name: string; role: SessionUser["role"] }): SessionUser {
  return { id: row.id, email: row.email, name: row.name, role: row.role };
}
