import { z } from 'zod';
import { modelSchema } from '../engine/model';
import { displayUnit } from './projects';
import { sheet } from './sheets';
import { correctionBody, commentTargetKind } from './team';

/**
 * A whole project as one zip: `manifest.json`, `model.json`, `sheets.json`, `corrections.json`,
 * `comments.json` and the uploaded files under `files/<sha256>`.
 */
export const bundleManifest = z.object({
  format: z.literal('fairsheet.bundle'),
  version: z.literal(1),
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

export const bundleCorrections = z.array(
  correctionBody.extend({ author: z.string(), createdAt: z.string() }),
);

export const bundleComments = z.array(
  z.object({
    targetKind: commentTargetKind,
    targetId: z.string().max(200),
    body: z.string().max(4000),
    author: z.string(),
    createdAt: z.string(),
  }),
);

export const bundleModel = modelSchema;
