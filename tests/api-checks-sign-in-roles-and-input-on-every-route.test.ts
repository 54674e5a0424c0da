import fs from "node:fs/promises";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import supertest from "supertest";
import { API, apiPath, type RouteName, type RouteSpec } from "../shared/api";
import { ROLES, hasRole, type Role } from "../shared/roles";
import { apiErrorSchema } from "../shared/errors";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { paperScan } from "./helpers/fixtures";
import { fragments, intakes, recipes, scans } from "../server/db/schema";
import { eq } from "drizzle-orm";
import { StorageError, uploadDir } from "../server/storage";

let stack: Stack;
let agents: Record<Role, supertest.Agent>;
let failedScanId: string;
let viewerId: string;
let fragmentIds: string[];
let recipeId: string;
let png: Buffer;

beforeAll(async () => {
  stack = await startStack({ watcher: false, mail: true, env: { PLATEN_LOGIN_LIMIT: "5", PLATEN_MAX_UPLOAD_MB: "1" } });
  agents = {
    viewer: await userAgent(stack, "viewer"),
    operator: await userAgent(stack, "operator"),
    admin: await userAgent(stack, "admin"),
  };
  const [intake] = await stack.db.insert(intakes).values({ name: "Matrix intake" }).returning();
  const [scan] = await stack.db
    .insert(scans)
    .values({
      intakeId: intake!.id,
      originalName: "failed-one.tif",
      source: "inbox",
      sha256: "f".repeat(64),
      sizeBytes: 10,
      originalKey: `originals/ff/${"f".repeat(64)}.tif`,
      status: "failed",
      error: "The file is empty (0 bytes)",
    })
    .returning();
  failedScanId = scan!.id;
  const piece = (x: number) => ({
    box: { x, y: 10, width: 50, height: 40 },
    angle: 0,
    rect: { cx: x + 25, cy: 30, width: 50, height: 40 },
    outline: [
      [x, 10],
      [x + 50, 10],
      [x + 50, 50],
      [x, 50],
    ] as [number, number][],
    shape: "rectangle" as const,
  });
  const made = await stack.db
    .insert(fragments)
    .values([1, 2, 3].map((i) => ({ scanId: failedScanId, position: i, ...piece(i * 100), areaPx: 2000, proposal: piece(i * 100) })))
    .returning();
  fragmentIds = made.map((f) => f.id);
  const [builtIn] = await stack.db.select().from(recipes).limit(1);
  recipeId = builtIn!.id;
  const me = await agents.viewer.get("/api/auth/me");
  viewerId = me.body.user.id;
  png = await paperScan({ format: "png", width: 300, height: 200 });
});
afterAll(async () => {
  await stack?.stop();
});

let counter = 0;
/** A well-formed request for each route, so that an allowed role gets past validation. */
function send(agent: supertest.Agent | supertest.Agent, name: RouteName): supertest.Test {
  const spec: RouteSpec = API[name];
  const onFragment = name.startsWith("fragments") && name !== "fragmentsDraw" && name !== "fragmentsApproveRemaining";
  const params: Record<string, string> = {
    id: name.startsWith("users") ? viewerId : name.startsWith("recipes") ? recipeId : onFragment ? fragmentIds[0]! : failedScanId,
    kind: "master",
    itemId: failedScanId,
  };
  const url = apiPath(spec, spec.path.includes(":") ? params : {});
  const m = spec.method.toLowerCase() as "get" | "post" | "patch" | "delete";
  const req = (agent as supertest.Agent)[m](url);
  switch (name) {
    case "login":
      return req.send({ email: "nobody@test.example", password: "wrong-password" });
    case "usersCreate":
      return req.send({ email: `made-${++counter}@test.example`, name: "Made", role: "viewer", password: "a-long-password" });
    case "usersUpdate":
      return req.send({ name: `Renamed ${++counter}` });
    case "intakesCreate":
      return req.send({ name: `Session ${++counter}` });
    case "fragmentsUpdate":
      return req.send({ title: `Title ${++counter}` });
    case "fragmentsMerge":
      return req.send({ ids: fragmentIds.slice(1) });
    case "fragmentsDraw":
      return req.send({ rect: { cx: 50, cy: 50, width: 20, height: 20 }, angle: 0 });
    case "recipesCreate":
      return req.send({ name: `Recipe ${++counter}`, steps: [] });
    case "recipesUpdate":
      return req.send({ description: `Described ${++counter}` });
    case "recipesApply":
      return req.send({ fragmentIds: [fragmentIds[0]] });
    case "scansResplit":
      return req.send({ sensitivity: 0.5 });
    case "scansUpload":
      return req.attach("files", png, `upload-${++counter}.png`);
    case "invitationsCreate":
      return req.send({ email: `invited-${++counter}@test.example`, role: "viewer" });
    case "invitationsAccept":
      return req.send({ token: "A".repeat(43), name: "Invited", password: "a-long-password" });
    case "invitationsPreview":
    case "passwordResetPreview":
      return req.send({ token: "A".repeat(43) });
    case "passwordResetRequest":
      return req.send({ email: "nobody@test.example" });
    case "passwordResetComplete":
      return req.send({ token: "A".repeat(43), password: "a-long-password" });
    case "passwordChange":
      // A wrong current password: past the role check, changes nothing.
      return req.send({ currentPassword: "not-the-password", newPassword: "a-long-new-password" });
    case "nameUpdate":
      return req.send({ name: `Renamed ${++counter}` });
    case "noticesUpdate":
      return req.send({ scanFailed: counter++ % 2 === 0 });
    case "mastersRightsWrite":
      // Rights the studio does not have: refused (409) past the role check, queueing nothing.
      return req.send({ creator: "Nobody by this name", copyright: null });
    case "fragmentsRenderRetry":
    case "scansRenderRetry":
      // No render has failed here: refused (409) past the role check, queueing nothing.
      return req;
    case "fragmentsFilesDelete":
      // Shown no files: refused (409) past the role check, deleting nothing.
      return req.query({ upTo: 0 });
    case "mailboxGet":
      return (agent as supertest.Agent).get(apiPath(spec, { id: "1700000000000-0a1b2c3d" }));
    case "auditList":
      return req.query({ action: "user.*", limit: 5 });
    case "auditGet":
      // Audit events have whole-number ids, not UUIDs.
      return (agent as supertest.Agent).get(apiPath(spec, { id: "1" }));
    case "fragmentsOffsite":
    case "fragmentsOffsiteCheck":
    case "fragmentsOffsiteCopy":
    case "offsiteCheckAll":
      // No body; with off-site copy off in this stack an allowed role gets a 409 saying so.
      return req;
    default:
      return req;
  }
}

const routes = Object.entries(API) as [RouteName, RouteSpec][];

describe("every API route", () => {
  it.each(routes.filter(([, s]) => s.access !== "public").map(([n]) => n))(
    "%s refuses a signed-out request with 401 and the error shape",
    async (name) => {
      const res = await send(stack.agent(), name);
      expect(res.status).toBe(401);
      expect(apiErrorSchema.parse(res.body).error).toEqual({ code: "unauthenticated", message: "Sign in to continue." });
    },
  );

  it("answers an undeclared route with 404, signed in or not", async () => {
    for (const agent of [stack.agent(), agents.admin]) {
      const res = await agent.get("/api/not-a-route");
      expect(res.status).toBe(404);
      expect(res.body.error.message).toBe("There is no API route GET /api/not-a-route.");
    }
  });
});

describe("the role matrix over every route that changes data", () => {
  const mutating = routes.filter(([n, s]) => s.mutates && s.access !== "public" && n !== "logout");
  for (const [name, spec] of mutating) {
    for (const role of ROLES) {
      const allowed = hasRole(role, spec.access as Role);
      it(`${role} ${allowed ? "may" : "may not"} call ${name} (${spec.method} ${spec.path})`, async () => {
        const res = await send(agents[role], name);
        if (allowed) {
          expect([401, 403], JSON.stringify(res.body)).not.toContain(res.status);
          expect(res.status).toBeLessThan(500);
        } else {
          expect(res.status).toBe(403);
          expect(res.body.error.code).toBe("forbidden");
          expect(res.body.error.message).toMatch(new RegExp(`^Your role \\(${role}\\) does not allow this`));
        }
      });
    }
  }

  it("every role may sign out, and the session is gone afterwards", async () => {
    for (const role of ROLES) {
      const agent = await userAgent(stack, role, `leaving-${role}@test.example`);
      expect((await agent.post("/api/auth/logout")).status).toBe(204);
      expect((await agent.get("/api/auth/me")).status).toBe(401);
    }
  });

  // Reading routes too: each refuses the roles below it, and lets its own role past the check.
  const reading = routes.filter(([, s]) => !s.mutates && s.access !== "public");
  for (const [name, spec] of reading) {
    for (const role of ROLES) {
      const allowed = hasRole(role, spec.access as Role);
      // The event stream stays open for an allowed role; its refusals are still checked.
      if (allowed && name === "events") continue;
      it(`${role} ${allowed ? "may" : "may not"} read ${name} (${spec.method} ${spec.path})`, async () => {
        const res = await send(agents[role], name);
        if (allowed) {
          expect([401, 403], JSON.stringify(res.body)).not.toContain(res.status);
          expect(res.status).toBeLessThan(500);
        } else {
          expect(res.status).toBe(403);
          expect(res.body.error.code).toBe("forbidden");
        }
      });
    }
  }

  it("a failed render is tried again by operators and admins; one that has not failed is refused with 409, a bad id with 400", async () => {
    expect([API.fragmentsRenderRetry.access, API.scansRenderRetry.access]).toEqual(["operator", "operator"]);
    const piece = await agents.operator.post(`/api/fragments/${fragmentIds[0]}/render-retry`);
    expect(piece.status).toBe(409);
    expect(piece.body.error.message).toMatch(
      /^Only an approved piece is rendered; fragment 1 of failed-one\.tif( \(.+\))? is still to review\.$/,
    );
    const scan = await agents.admin.post(`/api/scans/${failedScanId}/render-retry`);
    expect(scan.status).toBe(409);
    expect(scan.body.error.message).toBe("No approved piece of failed-one.tif has a failed render, so there is nothing to try again.");
    const bad = await agents.operator.post("/api/fragments/not-an-id/render-retry");
    expect(bad.status).toBe(400);
    expect(bad.body.error).toEqual({ code: "bad_request", message: "id: Expected an id in UUID form", field: "id" });
  });

  it("viewers read but the users list is for admins only", async () => {
    expect((await agents.viewer.get("/api/scans")).status).toBe(200);
    expect((await agents.viewer.get("/api/queue")).status).toBe(200);
    expect((await agents.viewer.get("/api/users")).status).toBe(403);
    expect((await agents.operator.get("/api/users")).status).toBe(403);
    expect((await agents.admin.get("/api/users")).status).toBe(200);
  });
});

describe("requests are validated and changes must come from the app", () => {
  it("names the field at fault", async () => {
    let res = await agents.admin.patch("/api/users/not-an-id").send({ role: "viewer" });
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({ code: "bad_request", message: "id: Expected an id in UUID form", field: "id" });

    res = await agents.admin.post("/api/users").send({ email: "not-an-address", name: "X", role: "viewer", password: "a-long-password" });
    expect(res.status).toBe(400);
    expect(res.body.error.field).toBe("email");
    expect(res.body.error.message).toBe("email: Expected an e-mail address such as name@studio.example");

    res = await agents.admin.post("/api/users").send({ email: "short@test.example", name: "X", role: "viewer", password: "short" });
    expect(res.body.error.message).toBe("password: Expected a password of at least 10 characters but received 5");
    // bcrypt reads 72 bytes of a password and no more (its key schedule takes at most 72 bytes):
    // 73 would pass with only its first 72 right. 36 × "é" is 72 bytes in UTF-8; one more is 74.
    res = await agents.admin.post("/api/users").send({ email: "long@test.example", name: "X", role: "viewer", password: "x".repeat(73) });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/^password: Expected a password of at most 72 bytes/);
    res = await agents.admin
      .post("/api/users")
      .send({ email: "accents@test.example", name: "X", role: "viewer", password: "é".repeat(37) });
    expect(res.status).toBe(400);
    res = await agents.admin
      .post("/api/users")
      .send({ email: "accents@test.example", name: "X", role: "viewer", password: "é".repeat(36) });
    expect(res.status).toBe(201);
    // Names are one line: a control character would break a file name, a CSV row or a mail header.
    res = await agents.admin
      .post("/api/users")
      .send({ email: "bell@test.example", name: "Ring\u0007", role: "viewer", password: "a-long-password" });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toBe("name: Expected a name on one line, without control characters such as tabs or line breaks");
    res = await agents.operator
      .post("/api/presets")
      .send({ name: "Shop\nsquare", settings: { kind: "web", name: "Shop\nsquare", size: { mode: "longEdge", longEdge: 800 } } });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/Expected a preset name on one line/);

    res = await agents.admin.post("/api/users").send({ email: "role@test.example", name: "X", role: "owner", password: "a-long-password" });
    expect(res.status).toBe(400);
    expect(res.body.error.field).toBe("role");

    res = await agents.viewer.get("/api/scans?sort=colour");
    expect(res.status).toBe(400);
    expect(res.body.error.field).toBe("sort");

    res = await agents.admin.post("/api/intakes").set("Content-Type", "application/json").send('{"name": ');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toBe("The request body is not valid JSON.");
  });

  it("refuses a change without the app's header or from another site", async () => {
    const bare = supertest.agent(stack.url);
    const login = await bare.post("/api/auth/login").send({ email: "admin@test.example", password: "admin-password-123" });
    expect(login.status).toBe(403);
    expect(login.body.error.message).toMatch(/missing X-Platen-Request header/);
    const res = await agents.admin.post("/api/intakes").set("Origin", "http://evil.example").send({ name: "x" });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toBe("Refused: a change from another site (http://evil.example).");
  });

  it("sets security headers and a session cookie that scripts cannot read", async () => {
    const res = await stack.agent().post("/api/auth/login").send({ email: "admin@test.example", password: "admin-password-123" });
    expect(res.status).toBe(200);
    const cookie = String(res.headers["set-cookie"]);
    expect(cookie).toMatch(/platen\.sid=/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Lax/);
    expect(res.headers["content-security-policy"]).toContain("default-src 'self'");
    expect(res.headers["x-content-type-options"]).toBe("nosniff");
    expect(res.headers["x-frame-options"]).toBe("SAMEORIGIN");
    expect(res.headers["x-powered-by"]).toBeUndefined();
  });
});

describe("a malformed request gets a clear 4xx, never a 500 or a trace", () => {
  const noTrace = (res: supertest.Response) => {
    expect(res.status, JSON.stringify(res.body)).toBeLessThan(500);
    const err = apiErrorSchema.parse(res.body).error;
    expect(err.message).not.toMatch(/\bat [\w.<>]+ \(|node_modules|TypeError|URIError|SyntaxError/);
    return err;
  };

  it("a change from a page with no origin (Origin: null) is refused, not crashed on", async () => {
    const res = await agents.admin.post("/api/intakes").set("Origin", "null").send({ name: "x" });
    expect(res.status).toBe(403);
    expect(noTrace(res).message).toBe("Refused: a change from another site (null).");
  });

  it("a broken percent-escape in the path", async () => {
    const res = await agents.viewer.get("/api/scans/%E0%A4%A");
    expect(res.status).toBe(400);
    expect(noTrace(res).message).toBe("The address is not valid: it has a broken %-escape.");
  });

  it("a JSON body in a character set or encoding the server does not read", async () => {
    let res = await agents.admin.post("/api/intakes").set("Content-Type", "application/json; charset=iso-8859-1").send('{"name":"x"}');
    expect(res.status).toBe(415);
    expect(noTrace(res).code).toBe("unsupported_media_type");
    res = await agents.admin
      .post("/api/intakes")
      .set("Content-Type", "application/json")
      .set("Content-Encoding", "x-squash")
      .send('{"name":"x"}');
    expect(res.status).toBe(415);
    expect(noTrace(res).code).toBe("unsupported_media_type");
  });

  it("a body over the limit", async () => {
    const res = await agents.admin.post("/api/intakes").send({ name: "x".repeat(200 * 1024) });
    expect(res.status).toBe(413);
    expect(noTrace(res).message).toBe("The request body is too large.");
  });

  it("an upload that is not well-formed multipart", async () => {
    let res = await agents.operator.post("/api/scans/upload").set("Content-Type", "multipart/form-data").send("no boundary here");
    expect(res.status).toBe(400);
    expect(noTrace(res).message).toMatch(/^Upload refused: the form data is malformed/);
    res = await agents.operator
      .post("/api/scans/upload")
      .set("Content-Type", "multipart/form-data; boundary=XYZ")
      .send('--XYZ\r\nContent-Disposition: form-data; name="files"; filename="cut.png"\r\n\r\n\x89PNG');
    expect(res.status).toBe(400);
    expect(noTrace(res).message).toMatch(/^Upload refused: the form data is malformed/);
  });

  it("an error after the response has begun ends the connection instead of leaving it open", async () => {
    const express = (await import("express")).default;
    const { errorHandler } = await import("../server/middleware/errors");
    const app = express();
    app.get("/half", (_req, res) => {
      res.writeHead(200, { "Content-Type": "application/octet-stream" });
      res.write("partial");
      throw new Error("failed half-way");
    });
    app.use(errorHandler);
    const started = Date.now();
    const outcome = await supertest(app)
      .get("/half")
      .timeout(5_000)
      .then(
        () => "completed",
        (err: Error & { timeout?: number }) => (err.timeout ? "hung" : "cut short"),
      );
    expect(outcome).toBe("cut short");
    expect(Date.now() - started).toBeLessThan(5_000);
  });
});

describe("the session cookie", () => {
  it("is marked Secure when the request came through a TLS proxy on this machine", async () => {
    const res = await stack
      .agent()
      .post("/api/auth/login")
      .set("X-Forwarded-Proto", "https")
      .send({ email: "admin@test.example", password: "admin-password-123" });
    expect(res.status).toBe(200);
    expect(String(res.headers["set-cookie"])).toMatch(/;\s*Secure/i);
    const plain = await stack.agent().post("/api/auth/login").send({ email: "admin@test.example", password: "admin-password-123" });
    expect(String(plain.headers["set-cookie"])).not.toMatch(/;\s*Secure/i);
  });

  it("changes at sign-in, so a session id planted before it is worth nothing", async () => {
    const agent = stack.agent();
    const first = await agent.post("/api/auth/login").send({ email: "operator@test.example", password: "operator-password-123" });
    const before = /platen\.sid=([^;]+)/.exec(String(first.headers["set-cookie"]))![1];
    const again = await agent.post("/api/auth/login").send({ email: "viewer@test.example", password: "viewer-password-123" });
    const after = /platen\.sid=([^;]+)/.exec(String(again.headers["set-cookie"]))![1];
    expect(after).not.toBe(before);
    // The old id no longer names a session at all.
    const planted = supertest.agent(stack.url).set("Cookie", `platen.sid=${before}`);
    expect((await planted.get("/api/auth/me")).status).toBe(401);
  });
});

describe("the live event stream", () => {
  it("ends when its session does: at sign-out elsewhere, and when the account is disabled", async () => {
    // A second app on the same database and sessions, re-checking its streams five times a second.
    const { createApp } = await import("../server/app");
    const { createHub } = await import("../server/services/hub");
    const { logger } = await import("../server/logger");
    const log = logger.child({ test: true });
    const hub = createHub(stack.database.pool, log);
    const app = createApp({
      config: stack.cfg,
      database: stack.database,
      boss: stack.boss,
      library: stack.library,
      log,
      hub,
      sessionSecret: stack.env.PLATEN_SESSION_SECRET!,
      liveCheckMs: 200,
    });
    const server = await new Promise<import("node:http").Server>((resolve) => {
      const s = app.listen(0, "127.0.0.1", () => resolve(s));
    });
    const url = `http://127.0.0.1:${(server.address() as import("node:net").AddressInfo).port}`;
    /** Signs in on the second app; returns the session cookie. */
    const signIn = async (email: string, password: string) => {
      const res = await supertest(url).post("/api/auth/login").set("X-Platen-Request", "1").send({ email, password });
      expect(res.status).toBe(200);
      return String(res.headers["set-cookie"]).split(";")[0]!;
    };
    /** Opens the stream; resolves with what it sent once the server ends it, or "still open" after 4 s. */
    const open = async (cookie: string) => {
      const http = await import("node:http");
      return new Promise<string>((resolve, reject) => {
        const req = http.get(`${url}/api/events`, { headers: { Cookie: cookie } }, (res) => {
          if (res.statusCode !== 200) return reject(new Error(`the stream answered ${res.statusCode}`));
          let text = "";
          res.setEncoding("utf8");
          res.on("data", (c: string) => (text += c));
          res.on("end", () => {
            clearTimeout(timer);
            resolve(text);
          });
        });
        req.on("error", () => {});
        const timer = setTimeout(() => {
          req.destroy();
          resolve("still open");
        }, 4_000);
      });
    };
    try {
      const leaving = await signIn("operator@test.example", "operator-password-123");
      const stream = open(leaving);
      await new Promise((r) => setTimeout(r, 600));
      // The same person signs out in another tab: the stream must not outlive the session.
      expect((await supertest(url).post("/api/auth/logout").set("X-Platen-Request", "1").set("Cookie", leaving)).status).toBe(204);
      expect(await stream).toMatch(/event: hello[\s\S]*event: signed-out/);

      await createUserForStream();
      const disabledSoon = await signIn("stream-viewer@test.example", "viewer-password-123");
      const second = open(disabledSoon);
      await new Promise((r) => setTimeout(r, 600));
      const users = (await agents.admin.get("/api/users")).body.users as { id: string; email: string }[];
      const target = users.find((u) => u.email === "stream-viewer@test.example")!;
      expect((await agents.admin.patch(`/api/users/${target.id}`).send({ disabled: true })).status).toBe(200);
      expect(await second).toMatch(/event: signed-out/);
    } finally {
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
      await hub.close();
    }
  });
});

async function createUserForStream() {
  const { createUser } = await import("../server/services/users");
  await createUser(stack.db, {
    email: "stream-viewer@test.example",
    name: "Stream viewer",
    role: "viewer",
    password: "viewer-password-123",
  });
}

describe("sign-in", () => {
  it("says what went wrong, refuses disabled accounts and ends their sessions", async () => {
    const res = await stack.agent().post("/api/auth/login").send({ email: "admin@test.example", password: "not-it-at-all" });
    expect(res.status).toBe(401);
    expect(res.body.error.message).toBe("Wrong e-mail or password.");

    const soon = await userAgent(stack, "viewer", "soon-disabled@test.example");
    const users = (await agents.admin.get("/api/users")).body.users as { id: string; email: string }[];
    const target = users.find((u) => u.email === "soon-disabled@test.example")!;
    expect((await agents.admin.patch(`/api/users/${target.id}`).send({ disabled: true })).body.user.disabled).toBe(true);
    expect((await soon.get("/api/auth/me")).status).toBe(401);
    const again = await stack
      .agent()
      .post("/api/auth/login")
      .send({ email: "soon-disabled@test.example", password: "viewer-password-123" });
    expect(again.status).toBe(401);
    expect(again.body.error.message).toBe("This account is disabled. Ask a studio admin to enable it.");
  });

  it("an admin cannot demote or disable their own account", async () => {
    const me = (await agents.admin.get("/api/auth/me")).body.user;
    let res = await agents.admin.patch(`/api/users/${me.id}`).send({ role: "viewer" });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toBe("You cannot take the admin role from your own account; ask another admin.");
    res = await agents.admin.patch(`/api/users/${me.id}`).send({ disabled: true });
    expect(res.status).toBe(403);
  });

  it("refuses a second account with the same e-mail", async () => {
    const res = await agents.admin
      .post("/api/users")
      .send({ email: "Operator@Test.example", name: "Again", role: "viewer", password: "a-long-password" });
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({
      code: "conflict",
      message: "A user with the e-mail operator@test.example already exists.",
      field: "email",
    });
  });

  it("is rate-limited per address and e-mail", async () => {
    const agent = stack.agent();
    const statuses: number[] = [];
    for (let i = 0; i < 7; i++) {
      statuses.push((await agent.post("/api/auth/login").send({ email: "target@test.example", password: `guess-${i}` })).status);
    }
    expect(statuses).toEqual([401, 401, 401, 401, 401, 429, 429]);
    // Successful sign-ins of other people from the same address do not count.
    for (let i = 0; i < 6; i++) await userAgent(stack, "viewer", `busy-${i}@test.example`);
    const last = await agent.post("/api/auth/login").send({ email: "target@test.example", password: "guess" });
    expect(last.body.error.message).toBe("Too many sign-in attempts. Wait 15 minutes and try again.");
  });
});

describe("uploads", () => {
  it("go through the same intake as the inbox and are analysed", async () => {
    const res = await agents.operator
      .post("/api/scans/upload")
      .attach("files", await paperScan({ format: "png", seed: 5 }), "from-browser.png");
    expect(res.status).toBe(201);
    const [result] = res.body.results;
    expect(result.originalName).toBe("from-browser.png");
    const scan = await waitFor("the upload to be ready", async () => {
      const r = await agents.viewer.get(`/api/scans/${result.scanId}`);
      return r.body.scan.status === "ready" ? r.body.scan : null;
    });
    expect(scan.source).toBe("upload");
    // 300 DPI is stored in pHYs as 11811 pixels per metre (PNG 11.3.5.3), which reads back as 299.9994.
    expect(scan.dpi).toMatchObject({ source: "embedded", origin: "png-phys" });
    expect(scan.dpi.x).toBeCloseTo(300, 2);
    // The whole-scan pictures show every piece on the bed, reviewed or not: operators see them,
    // a viewer (who sees approved work only) is refused.
    for (const which of ["thumb", "preview"]) {
      const seen = await agents.operator.get(`/api/scans/${result.scanId}/${which}`);
      expect(seen.status, which).toBe(200);
      expect(seen.headers["content-type"]).toBe("image/jpeg");
      const refused = await agents.viewer.get(`/api/scans/${result.scanId}/${which}`);
      expect(refused.status, which).toBe(403);
      expect(refused.body.error).toEqual({
        code: "forbidden",
        message: "Your role (viewer) does not allow this; it needs an operator or admin.",
      });
      expect(refused.headers["content-type"]).not.toMatch(/^image\//);
    }
    // The scan's facts stay readable to a viewer.
    expect((await agents.viewer.get(`/api/scans/${result.scanId}`)).status).toBe(200);
  });

  it("refuse content that is not an image, whatever its name, and files over the limit", async () => {
    let res = await agents.operator.post("/api/scans/upload").attach("files", Buffer.from("just some notes\n"), "looks-like.tif");
    expect(res.status).toBe(415);
    expect(res.body.error.message).toBe(
      "Not a scan Platen can read: looks-like.tif (it holds plain text). Expected TIFF, JPEG, PNG or WebP.",
    );
    res = await agents.operator.post("/api/scans/upload").attach("files", Buffer.alloc(1.5 * 1024 * 1024, 1), "big.tif");
    expect(res.status).toBe(413);
    expect(res.body.error.message).toBe("The file is larger than the upload limit of 1 MB.");
    res = await agents.operator.post("/api/scans/upload").send({});
    expect(res.status).toBe(400);
    const rows = await stack.db.select().from(scans).where(eq(scans.originalName, "looks-like.tif"));
    expect(rows).toHaveLength(0);
  });

  it("leave no file behind in the upload folder when one of them cannot be filed", async () => {
    const temps = async () => (await fs.readdir(uploadDir(stack.library))).filter((n) => !n.startsWith("."));
    expect(await temps()).toEqual([]);
    const original = stack.library.stageCopy.bind(stack.library);
    let calls = 0;
    const spy = vi.spyOn(stack.library, "stageCopy").mockImplementation(async (source: string) => {
      if (++calls === 1) throw new StorageError("unavailable", "The library did not answer.");
      return original(source);
    });
    try {
      const res = await agents.operator
        .post("/api/scans/upload")
        .attach("files", await paperScan({ format: "png", seed: 21 }), "first.png")
        .attach("files", await paperScan({ format: "png", seed: 22 }), "second.png");
      expect(res.status).toBe(503);
      expect(res.body.error.message).toBe("The library did not answer. Try again in a moment.");
    } finally {
      spy.mockRestore();
    }
    expect(await temps()).toEqual([]);
    // And the size refusal above left nothing either.
    const big = await agents.operator.post("/api/scans/upload").attach("files", Buffer.alloc(1.5 * 1024 * 1024, 1), "big-again.tif");
    expect(big.status).toBe(413);
    expect(await temps()).toEqual([]);
  });

  it("a failed scan can be retried by an operator, once", async () => {
    const [intake] = await stack.db.select().from(intakes).limit(1);
    const [row] = await stack.db
      .insert(scans)
      .values({
        intakeId: intake!.id,
        originalName: "retry-me.tif",
        source: "inbox",
        sha256: "e".repeat(64),
        sizeBytes: 1,
        originalKey: `originals/ee/${"e".repeat(64)}`,
        status: "failed",
        error: "x",
      })
      .returning();
    const res = await agents.operator.post(`/api/scans/${row!.id}/retry`);
    expect(res.status).toBe(200);
    expect(["queued", "analysing", "failed"]).toContain(res.body.scan.status);
    const again = await waitFor(
      "the retried scan to fail again (its original is missing)",
      async () => {
        const r = await agents.viewer.get(`/api/scans/${row!.id}`);
        return r.body.scan.status === "failed" && r.body.scan.attempts >= 1 ? r.body.scan : null;
      },
      30_000,
    );
    expect(again.attempts).toBeGreaterThanOrEqual(1);
  });
});

// Last in this file: it exhausts this address's sign-in allowance.
describe("sign-in from one address trying many e-mails", () => {
  it("is stopped by a looser limit per address, and the stopped attempts are not recorded", async () => {
    const failedRows = async () =>
      (await stack.database.pool.query("select count(*)::int as n from audit_events where action = 'auth.sign_in_failed'")).rows[0]
        .n as number;
    const agent = stack.agent();
    let stopped: supertest.Response | undefined;
    // PLATEN_LOGIN_LIMIT is 5 here: ten times that per address, whatever the e-mails.
    for (let i = 0; i < 60 && !stopped; i++) {
      const res = await agent.post("/api/auth/login").send({ email: `spray-${i}@test.example`, password: "guess" });
      if (res.status === 429) stopped = res;
      else expect(res.status).toBe(401);
    }
    expect(stopped?.body.error.message).toBe("Too many sign-in attempts from this address. Wait 15 minutes and try again.");
    const before = await failedRows();
    for (let i = 0; i < 5; i++)
      expect((await agent.post("/api/auth/login").send({ email: `more-${i}@test.example`, password: "guess" })).status).toBe(429);
    expect(await failedRows()).toBe(before);
  });

  it("refuses a malformed sign-in before counting or recording it", async () => {
    const res = await stack.agent().post("/api/auth/login").send({ email: "my secret password", password: "x" });
    expect(res.status).toBe(400);
    expect(res.body.error.field).toBe("email");
    const { rows } = await stack.database.pool.query(
      "select count(*)::int as n from audit_events where summary like '%my secret password%'",
    );
    expect(rows[0].n).toBe(0);
  });
});
