import type { Db } from '../db/client';
import type { SolvePool } from '../solve/pool';
import type { BlobStorage } from '../storage/storage';
import type { ActivityService } from './activity';
import { exportProject } from './bundle-export';
import { importProject } from './bundle-import';
import { MB, type BundleLimits } from './bundle-reader';
import type { InvitationService } from './invitations';
import type { SheetService } from './sheets';

/**
 * A project as one zip and back: the export streams it (bundle-export.ts); the import reads and
 * checks the whole zip under its limits (bundle-reader.ts) before it creates anything
 * (bundle-import.ts).
 */
export function createBundleService(deps: {
  db: Db;
  storage: BlobStorage;
  sheets: SheetService;
  invitations: InvitationService;
  activity: ActivityService;
  /** Where a bundle's files are expanded while checked (default: the system temp folder). */
  tempDir?: string;
  limits?: Partial<BundleLimits>;
  /** Where the imported model is solved (default: the process's pool). */
  solver?: SolvePool;
}) {
  const limits: BundleLimits = { maxFileBytes: 60 * MB, ...deps.limits };
  return {
    exportProject: (project: Parameters<typeof exportProject>[1]) => exportProject(deps, project),
    importProject: (zipPath: string, user: Parameters<typeof importProject>[2]) =>
      importProject({ ...deps, limits }, zipPath, user),
  };
}

export type BundleService = ReturnType<typeof createBundleService>;
