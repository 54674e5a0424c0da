import fs from "node:fs";
import path from "node:path";
import express from "express";
import session from "express-session";
import connectPgSimple from "connect-pg-simple";
import helmet from "helmet";
import type PgBoss from "pg-boss";
import type { Config } from "./config";
import type { Database } from "./db";
import type { Storage } from "./storage/storage";
import type { S3Storage } from "./storage/s3";
import type { Logger } from "./logger";
import type { Hub } from "./services/hub";
import { createPassport } from "./auth/passport";
import { requestContext } from "./middleware/request-context";
import { accessControl, sameOriginWrites } from "./middleware/access";
import { errorHandler } from "./middleware/errors";
import { AppError } from "./errors";
import { authRouter } from "./routes/auth";
import { scansRouter } from "./routes/scans";
import { usersRouter } from "./routes/users";
import { auditRouter } from "./routes/audit";
import { queueRouter } from "./routes/queue";
import { intakesRouter } from "./routes/intakes";
import { studioRouter } from "./routes/studio";
import { eventsRouter } from "./routes/events";
import { fragmentsRouter } from "./routes/fragments";
import { recipesRouter } from "./routes/recipes";
import { presetsRouter } from "./routes/presets";
import { batchesRouter } from "./routes/batches";
import { offsiteRouter } from "./routes/offsite";
import { libraryRouter } from "./routes/library";
import { invitationsRouter } from "./routes/invitations";
import { accountRouter } from "./routes/account";
import { mailboxRouter } from "./routes/mailbox";
import { createMailer, type Mailer } from "./mail/mailer";

export interface AppDeps {
  config: Config;
  database: Database;
  boss: PgBoss;
  /** The library: originals, previews, masters and outputs (a local folder or a bucket). */
  library: Storage;
  /** The off-site bucket masters are copied to, when configured. */
  offsite?: S3Storage | null;
  log: Logger;
  hub: Hub;
  sessionSecret: string;
  /** Sends invitations and password resets; made from the configuration when not given. */
  mailer?: Mailer;
  /** How often an open event stream re-checks its session, ms (15 s unless a test asks sooner). */
  liveCheckMs?: number;
}

/** The HTTP app: security headers, sessions in PostgreSQL, one access check, the API, the client. */
export function createApp(deps: AppDeps): express.Express {
  const app = express();
  const cfg = deps.config;
  app.disable("x-powered-by");
  app.set("trust proxy", "loopback");

  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          "default-src": ["'self'"],
          "img-src": ["'self'", "data:", "blob:"],
          "style-src": ["'self'", "'unsafe-inline'"],
          "font-src": ["'self'", "data:"],
          "connect-src": ["'self'"],
          "object-src": ["'none'"],
          "frame-ancestors": ["'none'"],
          "upgrade-insecure-requests": null,
        },
      },
      crossOriginEmbedderPolicy: false,
      strictTransportSecurity: cfg.secureCookies,
    }),
  );
  app.use(requestContext(deps.log));

  const PgStore = connectPgSimple(session);
  app.use(
    session({
      name: "platen.sid",
      secret: deps.sessionSecret,
      store: new PgStore({ pool: deps.database.pool, tableName: "session", pruneSessionInterval: 3600 }),
      resave: false,
      saveUninitialized: false,
      rolling: true,
      cookie: {
        httpOnly: true,
        sameSite: "lax",
        // Always when configured; otherwise whenever this request arrived over TLS (directly, or
        // through a proxy on this machine that says so), so a TLS deployment never sends it in clear.
        secure: cfg.secureCookies ? true : "auto",
        maxAge: 1000 * 60 * 60 * 24 * 14,
      },
    }),
  );
  const pp = createPassport(deps.database.db);
  app.use(pp.initialize());
  app.use(pp.session());

  const api = express.Router();
  api.use(express.json({ limit: "100kb" }));
  api.use(sameOriginWrites);
  api.use(accessControl);
  api.use(studioRouter(deps));
  api.use(authRouter(deps, pp));
  api.use(queueRouter(deps));
  api.use(eventsRouter(deps));
  api.use(intakesRouter(deps));
  api.use(scansRouter(deps));
  api.use(fragmentsRouter(deps));
  api.use(recipesRouter(deps));
  api.use(presetsRouter(deps));
  api.use(batchesRouter(deps));
  api.use(offsiteRouter(deps));
  api.use(libraryRouter(deps));
  api.use(usersRouter(deps));
  api.use(auditRouter(deps));
  const mailer = deps.mailer ?? createMailer(cfg.mail, deps.log);
  if (!mailer.enabled && cfg.env !== "test")
    deps.log.warn({ reason: mailer.reason }, "e-mail is off: invitations, password resets and notices are refused");
  api.use(invitationsRouter({ ...deps, mailer }));
  api.use(accountRouter({ ...deps, mailer }));
  api.use(mailboxRouter(deps));
  api.use((req, _res, next) => next(new AppError(404, "not_found", `There is no API route ${req.method} ${req.originalUrl}.`)));
  app.use("/api", api);

  // The built client, with the router's paths falling back to index.html.
  const dist = path.join(cfg.root, "dist");
  if (fs.existsSync(path.join(dist, "index.html"))) {
    app.use(express.static(dist, { index: false, maxAge: "1h", setHeaders: noCacheHtml }));
    app.get("/{*rest}", (_req, res) => {
      res.setHeader("Cache-Control", "no-cache");
      res.sendFile(path.join(dist, "index.html"));
    });
  } else {
    app.get("/", (_req, res) => {
      res.type("text").send("The client is not built yet: run `npm run build` (npm start does it for you).");
    });
  }

  app.use(errorHandler);
  return app;
}

function noCacheHtml(res: express.Response, file: string) {
  if (file.endsWith(".html")) res.setHeader("Cache-Control", "no-cache");
}
