import { PassThrough, type Readable } from 'node:stream';
import yazl from 'yazl';
import type { BundleManifest } from '@shared/api';
import * as bundleRepo from '../db/bundle';
import type { Db } from '../db/client';
import { findModel } from '../db/models';
import { unprocessable } from '../http/errors';
import type { BlobStorage } from '../storage/storage';
import type { SheetService } from './sheets';
import { fileKey, jsonEntries, maxBundleEntries } from './bundle-reader';

/** The author as the bundle records them: text, never an account of this server. */
const recordedAuthor = (r: { authorName: string | null; authorEmail: string | null }) => ({
  author: r.authorName ?? '',
  authorEmail: r.authorEmail,
});

/** Streams the whole project as a zip; files are read from storage one at a time. */
export async function exportProject(
  deps: { db: Db; storage: BlobStorage; sheets: SheetService },
  project: {
    id: string;
    name: string;
    displayUnit: 'in' | 'mm';
    modelScale: string | null;
  },
): Promise<Readable> {
  const { db, storage, sheets } = deps;
  const [stored, sheetList, history, checkList, commentList, correctionList, activityList, people] =
    await Promise.all([
      findModel(db, project.id),
      sheets.list(project.id),
      bundleRepo.listRevisionsForExport(db, project.id),
      bundleRepo.listChecksForExport(db, project.id),
      bundleRepo.listCommentsForExport(db, project.id),
      bundleRepo.listCorrectionsForExport(db, project.id),
      bundleRepo.listActivityForExport(db, project.id),
      bundleRepo.listPeopleForExport(db, project.id),
    ]);
  const files = [...new Map(sheetList.map((s) => [s.file.sha256, s.file])).values()];
  if (files.length + Object.keys(jsonEntries).length > maxBundleEntries) {
    throw unprocessable(
      `This project has ${files.length} files; a bundle holds at most ${maxBundleEntries - Object.keys(jsonEntries).length}.`,
    );
  }
  const manifest: BundleManifest = {
    format: 'fairsheet.bundle',
    version: 2,
    exportedAt: new Date().toISOString(),
    project: {
      name: project.name,
      displayUnit: project.displayUnit,
      modelScale: project.modelScale,
    },
    files: files.map((f) => ({
      sha256: f.sha256,
      mimeType: f.mimeType as BundleManifest['files'][number]['mimeType'],
      sizeBytes: f.sizeBytes,
    })),
  };
  const zip = new yazl.ZipFile();
  const json = (name: string, value: unknown) =>
    zip.addBuffer(Buffer.from(JSON.stringify(value, null, 2)), name);
  json('manifest.json', manifest);
  json('model.json', stored!.model);
  json(
    'sheets.json',
    sheetList.map((s) => ({
      id: s.id,
      sha256: s.file.sha256,
      originalName: s.file.originalName,
      title: s.title,
      kind: s.kind,
      page: s.page,
      pageCount: s.pageCount,
      widthPx: s.widthPx,
      heightPx: s.heightPx,
      rotation: s.rotation,
      straighten: s.straighten,
      calibration: s.calibration,
      pins: s.pins,
      measurements: s.measurements,
    })),
  );
  json(
    'corrections.json',
    correctionList.map((c) => ({
      sheetId: c.sheetId,
      dimension: c.dimension,
      wrong: c.wrong,
      corrected: c.corrected,
      reason: c.reason,
      source: c.source,
      sourceNote: c.sourceNote,
      ...recordedAuthor(c),
      createdAt: c.createdAt.toISOString(),
    })),
  );
  json(
    'comments.json',
    commentList.map((c) => ({
      targetKind: c.targetKind,
      targetId: c.targetId,
      body: c.body,
      mentions: c.mentions as string[],
      ...recordedAuthor(c),
      createdAt: c.createdAt.toISOString(),
    })),
  );
  json(
    'history.json',
    history.map((r) => ({
      revision: r.revision,
      summary: r.summary,
      diff: r.diff,
      model: r.model,
      author: r.authorName,
      authorEmail: r.authorEmail,
      createdAt: r.createdAt.toISOString(),
    })),
  );
  json(
    'checks.json',
    checkList.map((c) => ({
      dimension: c.dimension,
      value: c.value,
      fingerprint: c.fingerprint,
      revision: c.revision,
      ...recordedAuthor(c),
      createdAt: c.createdAt.toISOString(),
    })),
  );
  json(
    'activity.json',
    activityList.map((a) => ({
      kind: a.kind,
      summary: a.summary,
      details: a.details,
      author: a.authorName,
      authorEmail: a.authorEmail,
      createdAt: a.createdAt.toISOString(),
    })),
  );
  json('people.json', [...people.members, ...people.pending]);
  // Files are added as streams opened in turn, so a large project never sits in memory.
  for (const f of files) {
    const pass = new PassThrough();
    zip.addReadStream(pass, fileKey(f.sha256), { compress: false });
    storage.get(f.sha256).then(
      (stream) => stream.pipe(pass),
      (err: Error) => pass.destroy(err),
    );
  }
  zip.end();
  return zip.outputStream as Readable;
}
