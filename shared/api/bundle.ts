import { z } from 'zod';
import { modelSchema } from '../engine/model';
import { sheet } from './sheets';
import { email } from './auth';
import { displayUnit, projectRole } from './projects';
import { activityKind, correctionBody, commentTargetKind } from './team';

/**
 * A whole project as one zip: `manifest.json`, `model.json`, `sheets.json`, `corrections.json`,
 * `comments.json`, and from version 2 `history.json`, `checks.json`, `activity.json` and
 * `people.json`, with the uploaded files under `files/<sha256>`. Authors are recorded as text
 * (name and address), so an import never attributes anything to an account of its server.
 */
export const bundleManifest = z.object({
  format: z.literal('fairsheet.bundle'),
  version: z.union([z.literal(1), z.literal(2)]),
  exportedAt: z.string(),
  project: z.object({
    name: z.string().min(1).max(200),
    displayUnit,
    modelScale: z.string().max(40).nullable(),
  }),
  files: z.array(
    z.object({
      sha256: z.string().regex(/^[0-9a-f]{64}$/),
      mimeType: z.enum(['application/pdf', 'image/png', 'image/jpeg', 'image/tiff']),
      sizeBytes: z.number().int().nonnegative(),
    }),
  ),
});
export type BundleManifest = z.infer<typeof bundleManifest>;

export const bundleSheets = z.array(
  sheet
    .pick({
      title: true,
      kind: true,
      page: true,
      pageCount: true,
      widthPx: true,
      heightPx: true,
      rotation: true,
      straighten: true,
      calibration: true,
      pins: true,
      measurements: true,
    })
    .extend({
      id: z.uuid(),
      sha256: z.string().regex(/^[0-9a-f]{64}$/),
      originalName: z.string().max(200),
    }),
);

/** Who did it, as recorded: version 1 bundles carry the name only. */
const recorded = {
  author: z.string().max(200),
  authorEmail: z.string().max(320).nullable().default(null),
  createdAt: z.iso.datetime({ offset: true }),
};

export const bundleCorrections = z.array(correctionBody.extend(recorded));

export const bundleComments = z.array(
  z.object({
    targetKind: commentTargetKind,
    targetId: z.string().max(200),
    body: z.string().max(4000),
    mentions: z.array(z.string().max(200)).max(100).default([]),
    ...recorded,
  }),
);

export const bundleHistory = z.array(
  z.object({
    revision: z.number().int().nonnegative(),
    summary: z.string().max(2000),
    diff: z.unknown(),
    model: modelSchema,
    ...recorded,
    author: recorded.author.nullable(),
  }),
);

export const bundleChecks = z.array(
  z.object({
    dimension: z.string().min(1).max(120),
    value: z.number(),
    fingerprint: z.string().max(128),
    revision: z.number().int().nonnegative(),
    ...recorded,
  }),
);

export const bundleActivity = z.array(
  z.object({
    kind: activityKind,
    summary: z.string().max(2000),
    details: z.unknown(),
    ...recorded,
    author: recorded.author.nullable(),
  }),
);

/** Members and pending invitations: on import, each becomes an invitation to the same address. */
export const bundlePeople = z.array(z.object({ email, role: projectRole }));

export const bundleModel = modelSchema;
