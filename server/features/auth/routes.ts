import { Router } from "express";
import { rateLimit } from "express-rate-limit";
import { loginBodySchema, type MeResponse } from "../../../shared/contract/rest";
import type { AppDeps } from "../../deps";
import { HttpError, parseWith } from "../../http/errors";
import { allowAnyone, requireSignedIn } from "./middleware";
import { SESSION_COOKIE, SESSION_TTL_S, TIMING_DUMMY_HASH, signSession, toUserDto, verifySecret } from "./service";

export function authRoutes(deps: AppDeps): Router {
  const router = Router();
  const loginLimiter = rateLimit({
    windowMs: deps.config.loginWindowMs,
    limit: deps.config.loginLimitPerWindow,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    handler: (_req, _res, next) => next(new HttpError(429, "too_many_attempts", "too many sign-in attempts: wait a minute and try again")),
  });

  router.post("/auth/login", allowAnyone("signing in"), loginLimiter, async (req, res) => {
    const { email, password } = parseWith(loginBodySchema, req.body);
    const user = await deps.db.models.User.findOne({ where: { email } });
    const ok = await verifySecret(password, user?.passwordHash ?? TIMING_DUMMY_HASH);
    if (!user || !ok) throw new HttpError(401, "bad_credentials", "e-mail or password is wrong");
    res.cookie(SESSION_COOKIE, signSession(user, deps.config.sessionSecret), {
      httpOnly: true,
      sameSite: "strict",
      secure: deps.config.secureCookies,
      maxAge: SESSION_TTL_S * 1000,
      path: "/",
    });
    const body: MeResponse = { user: toUserDto(user) };
    res.json(body);
  });

  router.post("/auth/logout", requireSignedIn, (_req, res) => {
    res.clearCookie(SESSION_COOKIE, { path: "/" });
    res.json({ ok: true });
  });

  router.get("/me", requireSignedIn, (req, res) => {
    const body: MeResponse = { user: req.user! };
    res.json(body);
  });

  return router;
}
