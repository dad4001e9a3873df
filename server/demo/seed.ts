// The demo scenario (invented; every name and figure in it is ours): see README "What you see".
import { modelSchema } from '@shared/engine';
import type { PasswordHasher } from '../auth/passwords';
import type { Db } from '../db/client';
import { findProjectByName, upsertMembership } from '../db/projects';
import { findUserByEmail, insertUser, markEmailVerified } from '../db/users';
import { createActivityService } from '../services/activity';
import { createCheckService } from '../services/checks';
import { createCorrectionService } from '../services/corrections';
import { createModelService } from '../services/models';
import { createProjectService } from '../services/projects';
import type { SolvePool } from '../solve/pool';
import type { BlobStorage } from '../storage/storage';
import { kestrelModel } from './kestrel-model';
import { seedDemoSheets } from './sheets';

export const demoPassword = 'fairsheet-demo';
export const demoBuilder = { email: 'builder@example.com', name: 'Alex Marsh (builder)' };
export const demoChecker = { email: 'checker@example.com', name: 'Jo Penrose (club mentor)' };
export const demoProjectName = 'Kestrel — 5 in gauge tank engine, frames and hornblocks';

/**
 * The review states of the demo: the checker has checked two derived positions; a later change
 * of a bolt-edge tolerance voided one of them; one correction is recorded against sheet 2.
 */
async function seedDemoReview(
  db: Db,
  demo: {
    projectId: string;
    builder: { id: string; name: string };
    checker: { id: string; name: string };
    revision: number;
    model: ReturnType<typeof modelSchema.parse>;
    models: ReturnType<typeof createModelService>;
    activity: ReturnType<typeof createActivityService>;
    sheetId: string | null;
  },
) {
  const checks = createCheckService(db, demo.models, demo.activity);
  await checks.create(demo.projectId, demo.checker, 'horn2_x');
  await checks.create(demo.projectId, demo.checker, 'horn1_bolt_fwd_x');
  const tightened = structuredClone(demo.model);
  const edge = tightened.dimensions.find((d) => d.name === 'bolt_edge');
  if (edge && edge.kind !== 'derived') edge.tol = '0.003';
  await demo.models.save(
    demo.projectId,
    demo.builder.id,
    demo.revision,
    tightened,
    'Bolt edge held to ±0.003 after marking out the hornblocks',
  );
  await createCorrectionService(db, demo.activity).create(demo.projectId, demo.builder, {
    sheetId: demo.sheetId,
    dimension: 'bolt_low',
    wrong: '7/16 (lower bolt row, hornblock detail)',
    corrected: '1/2',
    reason:
      'Sheet 1 gives 1/2 from the bottom edge and the hornblock casting measures 1/2; the detail on sheet 2 is a copying slip.',
    source: 'mating part',
    sourceNote: 'Measured on the hornblock casting with a height gauge.',
  });
}

async function ensureUser(db: Db, hasher: PasswordHasher, who: { email: string; name: string }) {
  const existing = await findUserByEmail(db, who.email);
  // The demo addresses count as confirmed (also in a database seeded before addresses were).
  if (existing) {
    if (!existing.emailVerifiedAt) await markEmailVerified(db, existing.id);
    return { user: existing, created: false };
  }
  const user = await insertUser(db, {
    ...who,
    passwordHash: await hasher.hash(demoPassword),
    emailVerifiedAt: new Date(),
  });
  return { user: user ?? (await findUserByEmail(db, who.email))!, created: true };
}

/**
 * Creates the demo accounts, project and model once; answers whether anything was created.
 * With a storage, the project also gets its drawing and photo sheets. The model is solved on
 * `solver` (default: the process's pool).
 */
export async function seedDemo(
  db: Db,
  hasher: PasswordHasher,
  storage?: BlobStorage,
  solver?: SolvePool,
): Promise<boolean> {
  const builder = await ensureUser(db, hasher, demoBuilder);
  const checker = await ensureUser(db, hasher, demoChecker);
  if (await findProjectByName(db, demoProjectName)) return builder.created || checker.created;
  const activity = createActivityService(db);
  const models = createModelService(db, activity, solver);
  const projects = createProjectService(db, models);
  const project = await projects.create(builder.user.id, {
    name: demoProjectName,
    displayUnit: 'in',
    modelScale: '1:11.3',
  });
  await upsertMembership(db, project.id, checker.user.id, 'checker');
  const model = modelSchema.parse(kestrelModel);
  const saved = await models.save(project.id, builder.user.id, 0, model, 'Demo model from sheet 1');
  const sheets = storage
    ? await seedDemoSheets(db, storage, project.id, builder.user.id)
    : undefined;
  await seedDemoReview(db, {
    projectId: project.id,
    builder: builder.user,
    checker: checker.user,
    revision: saved.revision,
    model,
    models,
    activity,
    sheetId: sheets?.details.id ?? null,
  });
  return true;
}
