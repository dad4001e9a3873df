import type { RequestHandler } from 'express';
import type { z } from 'zod';
import type { FieldIssue } from '@shared/api';
import { badRequest } from './errors';

interface Schemas {
  params?: z.ZodType;
  query?: z.ZodType;
  body?: z.ZodType;
}

export function fieldIssues(error: z.ZodError): FieldIssue[] {
  return error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

/**
 * Validates the parts of a request against zod schemas from shared/api and replaces them with
 * the parsed values, so handlers see clean, typed data. A 400 names every offending field.
 */
export function validate(schemas: Schemas): RequestHandler {
  return (req, res, next) => {
    const fields: FieldIssue[] = [];
    for (const part of ['params', 'query', 'body'] as const) {
      const schema = schemas[part];
      if (!schema) continue;
      const result = schema.safeParse(req[part] ?? {});
      if (result.success) {
        // Express 5 makes req.query a getter; keep parsed values on res.locals for it.
        if (part === 'query') res.locals.query = result.data;
        else req[part] = result.data;
      } else {
        fields.push(...fieldIssues(result.error).map((f) => ({ ...f, path: f.path || part })));
      }
    }
    if (fields.length) {
      const names = [...new Set(fields.map((f) => f.path))].join(', ');
      next(badRequest(`Please check: ${names}.`, { fields }));
      return;
    }
    next();
  };
}
