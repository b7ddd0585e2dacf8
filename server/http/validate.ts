/**
 * Request validation at the edge: every body, params and query is parsed
 * with zod before a handler sees it.
 *
 *   router.patch("/studies/:studyId", authorize("study.update"),
 *     validate({ params: studyParams, body: studyPatch }), handler)
 *
 * The handler reads the parsed values with `parsed(res).body` etc. (typed
 * through `Parsed<typeof schemas>`). A failure answers 400 with `details`
 * naming each field (`body.email`, `query.kind`, …).
 */
import type { RequestHandler, Response } from "express";
import { z } from "zod";
import { HttpError, describeDetails, zodDetails } from "./errors";

export interface Schemas {
  body?: z.ZodType;
  params?: z.ZodType;
  query?: z.ZodType;
}

export type Parsed<S extends Schemas> = {
  body: S["body"] extends z.ZodType ? z.output<S["body"]> : undefined;
  params: S["params"] extends z.ZodType ? z.output<S["params"]> : Record<string, string>;
  query: S["query"] extends z.ZodType ? z.output<S["query"]> : Record<string, unknown>;
};

/** Validates the parts named in `schemas`; unknown parts are left as they are. */
export function validate(schemas: Schemas): RequestHandler {
  return (req, res, next) => {
    const out: Record<string, unknown> = { params: req.params, query: req.query, body: undefined };
    const details: { field: string; message: string }[] = [];
    for (const part of ["params", "query", "body"] as const) {
      const schema = schemas[part];
      if (!schema) continue;
      const input = part === "body" ? (req.body ?? {}) : req[part];
      const result = schema.safeParse(input);
      if (result.success) out[part] = result.data;
      else details.push(...zodDetails(result.error, part));
    }
    if (details.length > 0) {
      next(new HttpError(400, "validation_failed", describeDetails(details), details));
      return;
    }
    res.locals.parsed = out;
    next();
  };
}

/** The values parsed by `validate` for this request. */
export function parsed<S extends Schemas>(res: Response, _schemas?: S): Parsed<S> {
  const value = res.locals.parsed as Parsed<S> | undefined;
  if (!value) throw new Error("parsed() called on a route without validate()");
  return value;
}

/** Common pieces. */
export const idSchema = z.uuid({ error: "must be an id" });
export const emailSchema = z
  .string({ error: "must be an e-mail address" })
  .trim()
  .toLowerCase()
  .max(254, { error: "must be at most 254 characters" })
  .pipe(z.email({ error: "must be an e-mail address" }));
export const noQuery = z.strictObject({});
export const emptyBody = z.union([z.strictObject({}), z.undefined()]);
