import type { NextFunction, Request, Response, Router } from "express";
import type { z, ZodType } from "zod";
import type { RouteSpec } from "../../shared/api";
import { AppError } from "../errors";
import { zodMessage } from "../middleware/errors";
import { withAuditRequest } from "../services/audit";

type Out<T> = T extends ZodType ? z.output<T> : undefined;

export interface RouteContext<S extends RouteSpec> {
  params: Out<S["params"]>;
  query: Out<S["query"]>;
  body: Out<S["body"]>;
  req: Request;
  res: Response;
  /** The signed-in user; present on every route that is not public. */
  user: Express.User;
}

function parse(schema: ZodType | undefined, value: unknown, where: string) {
  if (!schema) return undefined;
  const result = schema.safeParse(value);
  if (!result.success) {
    const { message, field } = zodMessage(result.error, where);
    throw new AppError(400, "bad_request", message, field);
  }
  return result.data;
}

/**
 * Mounts a handler for a route declared in shared/api.ts. Params, query and body are validated
 * with the route's schemas before the handler runs; a returned value is sent as JSON.
 */
export function handle<S extends RouteSpec>(
  router: Router,
  spec: S,
  handler: (ctx: RouteContext<S>) => unknown,
  before: ((req: Request, res: Response, next: NextFunction) => void)[] = [],
): void {
  const method = spec.method.toLowerCase() as "get" | "post" | "patch" | "delete";
  // Routers are mounted under /api; the table holds the full path.
  router[method](spec.path.replace(/^\/api/, ""), ...before, async (req: Request, res: Response) => {
    const ctx = {
      params: parse(spec.params, req.params, "path"),
      query: parse(spec.query, req.query, "query"),
      body: parse(spec.body, req.body ?? {}, "body"),
      req,
      res,
      user: req.user as Express.User,
    } as RouteContext<S>;
    // Audit rows written while this handler runs name the request's user, address and browser.
    const result = await withAuditRequest(req, () => handler(ctx));
    if (result !== undefined && !res.headersSent) res.json(result);
  });
}
