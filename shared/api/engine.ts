import { z } from 'zod';
import { MODEL_LIMITS, modelSchema, type LimitIssueParams } from '../engine/model';

const thousands = (n: number) => n.toLocaleString('en-GB');

export const solveBody = z
  .object({
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
  })
  // Each sample re-solves the model: the work grows with samples × dimensions.
  .refine(
    (b) =>
      !b.monteCarlo ||
      b.monteCarlo.samples * b.model.dimensions.length <= MODEL_LIMITS.monteCarloWork,
    {
      path: ['monteCarlo', 'samples'],
      params: { limit: 'monteCarloWork', kind: 'work' } satisfies LimitIssueParams,
      error: (iss) => {
        const b = iss.input as {
          monteCarlo: { samples: number };
          model: { dimensions: unknown[] };
        };
        const { samples } = b.monteCarlo;
        const dims = b.model.dimensions.length;
        return (
          `a Monte Carlo on the server runs at most ${thousands(MODEL_LIMITS.monteCarloWork)} ` +
          `samples × dimensions; ${thousands(samples)} samples of ${thousands(dims)} dimensions ` +
          `are ${thousands(samples * dims)}`
        );
      },
    },
  );
export type SolveBody = z.input<typeof solveBody>;

export const threadParams = z.object({ designation: z.string().trim().min(1).max(40) });

export const threadQuery = z.object({
  percent: z.coerce.number().min(40).max(100).default(75),
  drills: z.enum(['metric', 'number', 'letter', 'fractional', 'numberLetter', 'all']).optional(),
});
