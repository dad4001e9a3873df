// The demo scenario (invented; every name and figure in it is ours): see README "What you see".
import { modelSchema } from '@shared/engine';
import type { PasswordHasher } from '../auth/passwords';
import type { Db } from '../db/client';
import { findProjectByName, upsertMembership } from '../db/projects';
import { findUserByEmail, insertUser } from '../db/users';
import { createModelService } from '../services/models';
import { createProjectService } from '../services/projects';
import type { BlobStorage } from '../storage/storage';
import { kestrelModel } from './kestrel-model';
import { seedDemoSheets } from './sheets';

export const demoPassword = 'fairsheet-demo';
export const demoBuilder = { email: 'builder@example.com', name: 'Alex Marsh (builder)' };
export const demoChecker = { email: 'checker@example.com', name: 'Jo Penrose (club mentor)' };
export const demoProjectName = 'Kestrel — 5 in gauge tank engine, frames and hornblocks';

async function ensureUser(db: Db, hasher: PasswordHasher, who: { email: string; name: string }) {
  const existing = await findUserByEmail(db, who.email);
  if (existing) return { user: existing, created: false };
  const user = await insertUser(db, { ...who, passwordHash: await hasher.hash(demoPassword) });
  return { user: user ?? (await findUserByEmail(db, who.email))!, created: true };
}

/**
 * Creates the demo accounts, project and model once; answers whether anything was created.
 * With a storage, the project also gets its drawing and photo sheets.
 */
export async function seedDemo(
  db: Db,
  hasher: PasswordHasher,
  storage?: BlobStorage,
): Promise<boolean> {
  const builder = await ensureUser(db, hasher, demoBuilder);
  const checker = await ensureUser(db, hasher, demoChecker);
  if (await findProjectByName(db, demoProjectName)) return builder.created || checker.created;
  const models = createModelService(db);
  const projects = createProjectService(db, models);
  const project = await projects.create(builder.user.id, {
    name: demoProjectName,
    displayUnit: 'in',
    modelScale: '1:11.3',
  });
  await upsertMembership(db, project.id, checker.user.id, 'checker');
  await models.save(
    project.id,
    builder.user.id,
    0,
    modelSchema.parse(kestrelModel),
    'Demo model from sheet 1',
  );
  if (storage) await seedDemoSheets(db, storage, project.id, builder.user.id);
  return true;
}
