import { z } from 'zod';

/** Every error the API answers has this body. */
export const errorBody = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    details: z.unknown().optional(),
  }),
});
export type ErrorBody = z.infer<typeof errorBody>;

export const errorCodes = [
  'bad_request',
  'unauthenticated',
  'forbidden',
  'csrf',
  'not_found',
  'gone',
  'conflict',
  'rate_limited',
  'payload_too_large',
  'unsupported_media_type',
  'unprocessable',
  'unavailable',
  'internal',
] as const;
export type ErrorCode = (typeof errorCodes)[number];

/** A field problem as answered in `details.fields` of a 400. */
export interface FieldIssue {
  path: string;
  message: string;
}
