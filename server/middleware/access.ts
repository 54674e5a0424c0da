import type { RequestHandler } from "express";
import { findRoute } from "../../shared/api";
import { hasRole } from "../../shared/roles";
import { AppError, badRequest, forbidden, unauthenticated } from "../errors";

/**
 * The one access check for the whole API. Every route is declared in shared/api.ts with who may
 * call it; a request for a route that is not declared there is refused before any handler runs.
 */
export const accessControl: RequestHandler = (req, _res, next) => {
  const method = req.method === "HEAD" ? "GET" : req.method;
  let found: ReturnType<typeof findRoute>;
  try {
    found = findRoute(method, req.baseUrl + req.path);
  } catch (err) {
    // A parameter that does not decode (a stray or cut-off %-escape) is the caller's mistake.
    if (err instanceof URIError) return next(badRequest("The address is not valid: it has a broken %-escape."));
    return next(err);
  }
  if (!found) return next(new AppError(404, "not_found", `There is no API route ${method} ${req.baseUrl + req.path}.`));
  const { access } = found.spec;
  if (access === "public") return next();
  const user = req.user;
  if (!user) return next(unauthenticated());
  if (!hasRole(user.role, access)) {
    return next(
      forbidden(`Your role (${user.role}) does not allow this; it needs ${access === "admin" ? "an admin" : `an ${access} or admin`}.`),
    );
  }
  next();
};

/**
 * Cross-site request defence: a change must carry our custom header (which a cross-site form
 * cannot send without a CORS preflight we never grant) and, when the browser says where it came
 * from, come from our own origin. Cookies are SameSite=Lax on top of this.
 */
export const sameOriginWrites: RequestHandler = (req, _res, next) => {
  if (req.method === "GET" || req.method === "HEAD" || req.method === "OPTIONS") return next();
  if (req.get("x-platen-request") !== "1") {
    return next(forbidden("Refused: changes must come from the Platen app (missing X-Platen-Request header)."));
  }
  const origin = req.get("origin");
  // An origin that is not a URL ("null" from a sandboxed frame, a local file or a redirect across
  // sites) is not ours either.
  if (origin && originHost(origin) !== req.get("host")) {
    return next(forbidden(`Refused: a change from another site (${origin.slice(0, 200)}).`));
  }
  next();
};

function originHost(origin: string): string | null {
  try {
    return new URL(origin).host;
  } catch {
    return null;
  }
}
