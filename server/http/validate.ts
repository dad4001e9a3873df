import type { RequestHandler } from 'express';
import type { z } from 'zod';
import type { FieldIssue } from '@shared/api';
import type { LimitIssueParams } from '@shared/engine';
import { badRequest, payloadTooLarge, unprocessable } from './errors';

interface Schemas {
  params?: z.ZodType;
  query?: z.ZodType;
  body?: z.ZodType;
}

export function fieldIssues(error: z.ZodError): FieldIssue[] {
  return error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

// PostgreSQL stores no NUL character in text, and its jsonb refuses a \u0000 escape and an
// unpaired surrogate escape (JSON.stringify writes a lone surrogate as one): either would fail
// the insert with a 500.
const UNSTORABLE = /\u0000|[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

/**
 * Strings (and object keys) in a parsed value that the database cannot store, by path.
 *
 * @example unstorableText({ note: 'a\u0000b' }) // [{ path: 'note', message: … }]
 */
export function unstorableText(value: unknown, path: string[] = []): FieldIssue[] {
  const at = (p: string[]) => ({
    path: p.join('.'),
    message: 'holds a character that cannot be stored (a NUL character or half a surrogate pair)',
  });
  if (typeof value === 'string') return UNSTORABLE.test(value) ? [at(path)] : [];
  if (Array.isArray(value)) return value.flatMap((v, i) => unstorableText(v, [...path, String(i)]));
  if (value && typeof value === 'object') {
    return Object.entries(value).flatMap(([k, v]) =>
      UNSTORABLE.test(k) ? [at([...path, k])] : unstorableText(v, [...path, k]),
    );
  }
  return [];
}

/** The issues that are a size limit of shared/engine (MODEL_LIMITS), with their field paths. */
function limitIssues(error: z.ZodError, part: string) {
  return error.issues.flatMap((i) => {
    const params = i.code === 'custom' ? (i.params as Partial<LimitIssueParams> | undefined) : null;
    if (!params?.limit || !params.kind) return [];
    return [
      {
        path: i.path.join('.') || part,
        message: i.message,
        limit: params.limit,
        kind: params.kind,
      },
    ];
  });
}

/**
 * Validates the parts of a request against zod schemas from shared/api and replaces them with
 * the parsed values, so handlers see clean, typed data; text the database cannot store is
 * refused with them. A 400 names every offending field. A body over one of the engine's size
 * limits answers 413 (too large) or 422 (too much work, e.g. Monte Carlo samples × dimensions),
 * the message naming the limit, whatever else is wrong with it.
 */
export function validate(schemas: Schemas): RequestHandler {
  return (req, res, next) => {
    const fields: FieldIssue[] = [];
    const limits: ReturnType<typeof limitIssues> = [];
    for (const part of ['params', 'query', 'body'] as const) {
      const schema = schemas[part];
      if (!schema) continue;
      const result = schema.safeParse(req[part] ?? {});
      const unstorable = result.success ? unstorableText(result.data) : [];
      if (unstorable.length) {
        fields.push(...unstorable.map((f) => ({ ...f, path: f.path || part })));
      } else if (result.success) {
        // Express 5 makes req.query a getter; keep parsed values on res.locals for it.
        if (part === 'query') res.locals.query = result.data;
        else req[part] = result.data;
      } else {
        limits.push(...limitIssues(result.error, part));
        fields.push(...fieldIssues(result.error).map((f) => ({ ...f, path: f.path || part })));
      }
    }
    const first = limits.find((l) => l.kind === 'size') ?? limits[0];
    if (first) {
      const message = `Over a limit: ${first.message} (${first.path}).`;
      const details = {
        limit: first.limit,
        fields: limits.map(({ path, message }) => ({ path, message })),
      };
      next(
        first.kind === 'size' ? payloadTooLarge(message, details) : unprocessable(message, details),
      );
      return;
    }
    if (fields.length) {
      const names = [...new Set(fields.map((f) => f.path))].join(', ');
      next(badRequest(`Please check: ${names}.`, { fields }));
      return;
    }
    next();
  };
}
