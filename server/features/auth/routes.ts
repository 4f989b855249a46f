import { Router, type Request } from "express";
import { preferencesBodySchema, resetPasswordBodySchema, resetRequestBodySchema, updateMeBodySchema } from "@shared/contract/accounts";
import { loginBodySchema, type MeResponse } from "@shared/contract/rest";
import type { AppDeps } from "../../deps";
import { attemptLimiter } from "../../http/attemptLimiter";
import { HttpError, parseWith } from "../../http/errors";
import { updateOwnAccount, updateOwnPreferences } from "./account";
import { allowAnyone, requireSignedIn } from "./middleware";
import { requestPasswordReset, resetPassword } from "./reset";
import { SESSION_COOKIE, TIMING_DUMMY_HASH, endSession, setSessionCookie, startSession, toUserDto, verifySecret } from "./service";

export function authRoutes(deps: AppDeps): Router {
  const router = Router();
  const limiter = (what: string, key?: (req: Request) => string) => attemptLimiter(deps, what, key);
  const loginLimiter = limiter("sign-in attempts");
  const resetLimiter = limiter("password reset requests");
  // Per account, not per address: a stolen cookie must not be a way to guess the password.
  const accountLimiter = limiter("password attempts", (req) => `user:${req.user?.id ?? "none"}`);

  router.post("/auth/login", allowAnyone("signing in"), loginLimiter, async (req, res) => {
    const { email, password } = parseWith(loginBodySchema, req.body);
    const user = await deps.db.models.User.findOne({ where: { email } });
    const ok = await verifySecret(password, user?.passwordHash ?? TIMING_DUMMY_HASH);
    if (!user || !ok) throw new HttpError(401, "bad_credentials", "e-mail or password is wrong");
    const { token } = await startSession(deps, user);
    setSessionCookie(res, deps, token);
    const body: MeResponse = { user: toUserDto(user) };
    res.json(body);
  });

  router.post("/auth/logout", requireSignedIn, async (req, res) => {
    await endSession(deps, req.sessionId!);
    res.clearCookie(SESSION_COOKIE, { path: "/" });
    res.json({ ok: true });
  });

  router.post("/auth/reset", allowAnyone("asking for a reset mail (202 whoever asks)"), resetLimiter, (req, res) => {
    const { email } = parseWith(resetRequestBodySchema, req.body);
    res.status(202).json({ ok: true });
    requestPasswordReset(deps, email).catch((err: unknown) => deps.logger.warn({ err }, "password reset mail failed"));
  });

  router.post("/auth/reset/:token", allowAnyone("the reset token"), resetLimiter, async (req, res) => {
    const { password } = parseWith(resetPasswordBodySchema, req.body);
    await resetPassword(deps, String(req.params.token), password);
    res.json({ ok: true });
  });

  router.get("/me", requireSignedIn, (req, res) => {
    const body: MeResponse = { user: req.user! };
    res.json(body);
  });

  router.patch("/me", requireSignedIn, accountLimiter, async (req, res) => {
    const body = parseWith(updateMeBodySchema, req.body);
    const { user } = await updateOwnAccount(deps, { userId: req.user!.id, sessionId: req.sessionId! }, body);
    const reply: MeResponse = { user };
    res.json(reply);
  });

  router.patch("/me/preferences", requireSignedIn, async (req, res) => {
    const body = parseWith(preferencesBodySchema, req.body);
    const reply: MeResponse = { user: await updateOwnPreferences(deps, req.user!.id, body) };
    res.json(reply);
  });

  return router;
}
