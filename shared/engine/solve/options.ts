/** What a caller may ask of a solve. */
export interface SolveOptions {
  /** Seeded Monte Carlo of the derived values (all determined ones unless `values` lists names). */
  monteCarlo?: {
    samples: number;
    seed?: number;
    values?: string[];
    bins?: number;
    /** Called every few hundred samples (and at the end): for a progress bar. */
    onProgress?: (done: number, total: number) => void;
  };
  /** Newton iterations per non-linear block (default 100). */
  maxIterations?: number;
  /** Time budget for all Newton iterations, ms (default 2000). */
  timeLimitMs?: number;
  /**
   * Values only: skip the stack-up and with it the reconciliation (which needs the
   * sensitivities), for the quickest possible preview. Derived values then have null
   * worstCase/rss and no contributors, and there are no checks or contradictions.
   */
  valuesOnly?: boolean;
}
