import type { SolveOptions } from '@shared/engine';

/** The engine options a server solve may set (everything else is the pool's to decide). */
export interface ServerSolveOptions {
  monteCarlo?: Omit<NonNullable<SolveOptions['monteCarlo']>, 'onProgress'>;
}

/** What the pool posts to a solve thread. */
export type SolveJob = { id: number } & (
  | { kind: 'solve'; model: unknown; options: SolveOptions }
  | { kind: 'features'; model: unknown; options: SolveOptions }
);

/** What a solve thread posts back: once `ready`, then per job its JSON text or its failure. */
export type SolveReply =
  | { ready: true; id?: undefined }
  | { id: number; json: string; failure?: undefined }
  | { id: number; failure: string; json?: undefined; chars?: undefined }
  | { id: number; failure: 'too-large'; chars: number; json?: undefined };
