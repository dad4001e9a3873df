import { z } from 'zod';
import { modelSchema } from '../engine/model';

export const solveBody = z.object({
  model: modelSchema,
  monteCarlo: z
    .object({
      samples: z.number().int().min(10).max(20_000),
      seed: z
        .number()
        .int()
        .min(0)
        .max(2 ** 32 - 1)
        .default(1),
      values: z.array(z.string()).max(50).optional(),
    })
    .optional(),
});
export type SolveBody = z.input<typeof solveBody>;

export const threadParams = z.object({ designation: z.string().trim().min(1).max(40) });

export const threadQuery = z.object({
  percent: z.coerce.number().min(40).max(100).default(75),
  drills: z.enum(['metric', 'number', 'letter', 'fractional', 'numberLetter', 'all']).optional(),
});
