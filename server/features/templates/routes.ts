/**
 * Junction templates (CONTRACT.md §6): the catalogue with each template's options as JSON
 * Schema, and a generated rulebook for given options. Nothing is saved here: the client
 * saves the result as a draft through `POST /api/layouts/:slug/rulebooks`.
 */
import { Router } from "express";
import { generateTemplateBodySchema, type GeneratedRulebookResponse, type TemplatesResponse } from "@shared/contract/layoutEdit";
import { JUNCTION_TEMPLATES, findTemplate, generateFromTemplate, templateOptionsJsonSchema } from "@shared/rulebook/templateCatalog";
import type { AppDeps } from "../../deps";
import { HttpError, notFound, parseWith } from "../../http/errors";
import { requirePermission } from "../auth/middleware";

export function templateRoutes(_deps: AppDeps): Router {
  const router = Router();
  // The catalogue never changes while the process runs.
  const catalogue: TemplatesResponse = {
    templates: JUNCTION_TEMPLATES.map((t) => ({
      id: t.id,
      name: t.name,
      description: t.description,
      optionsSchema: templateOptionsJsonSchema(t),
      example: t.example,
    })),
  };

  router.get("/templates", requirePermission("templates.use"), (_req, res) => {
    res.json(catalogue);
  });

  router.post("/templates/:id", requirePermission("templates.use"), (req, res) => {
    const template = findTemplate(String(req.params.id));
    if (!template) throw notFound(`template "${String(req.params.id)}"`);
    const body = parseWith(generateTemplateBodySchema, req.body);
    const result = generateFromTemplate(template, body.options, "$.options");
    if (!result.ok) throw new HttpError(400, "invalid_options", `the options have ${result.errors.length} error(s)`, result.errors);
    const reply: GeneratedRulebookResponse = { rulebook: result.rulebook };
    res.json(reply);
  });

  return router;
}
