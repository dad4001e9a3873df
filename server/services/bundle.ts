import { createHash } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { PassThrough, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import yauzl from 'yauzl';
import yazl from 'yazl';
import type { z } from 'zod';
import {
  bundleComments,
  bundleCorrections,
  bundleManifest,
  bundleModel,
  bundleSheets,
  type BundleManifest,
} from '@shared/api';
import type { Db } from '../db/client';
import { insertModel, insertRevision } from '../db/models';
import { insertProject } from '../db/projects';
import * as sheetRepo from '../db/sheets';
import { insertComment, insertCorrection } from '../db/team';
import { diffModels, solveModel } from '@shared/engine';
import { unprocessable } from '../http/errors';
import { unstorableText } from '../http/validate';
import type { BlobStorage } from '../storage/storage';
import type { ActivityService } from './activity';
import type { CommentService } from './comments';
import type { CorrectionService } from './corrections';
import type { ModelService } from './models';
import type { SheetService } from './sheets';
import { toProject } from './projects';

const fileKey = (sha256: string) => `files/${sha256}`;
const maxEntries = 10_000;

/** A refusal of a damaged or foreign bundle: nothing has been created. */
const damaged = (why: string) =>
  unprocessable(`This bundle cannot be imported: ${why}. Nothing was created.`);

interface Entry {
  name: string;
  open(): Promise<Readable>;
}

function openZip(file: string): Promise<Map<string, Entry>> {
  return new Promise((resolve, reject) => {
    yauzl.open(file, { lazyEntries: true, autoClose: false, strictFileNames: true }, (err, zip) => {
      if (err || !zip) return reject(damaged('it is not a readable zip file'));
      const entries = new Map<string, Entry>();
      zip.on('error', () => reject(damaged('the zip file is damaged')));
      zip.on('entry', (e: yauzl.Entry) => {
        if (entries.size > maxEntries) return reject(damaged('it holds too many files'));
        entries.set(e.fileName, {
          name: e.fileName,
          open: () =>
            new Promise((res, rej) =>
              zip.openReadStream(e, (error, stream) =>
                error || !stream ? rej(damaged(`${e.fileName} is damaged`)) : res(stream),
              ),
            ),
        });
        zip.readEntry();
      });
      zip.on('end', () => resolve(entries));
      zip.readEntry();
    });
  });
}

async function readJson<S extends z.ZodType>(
  entries: Map<string, Entry>,
  name: string,
  schema: S,
): Promise<z.output<S>> {
  const entry = entries.get(name);
  if (!entry) throw damaged(`${name} is missing`);
  const chunks: Buffer[] = [];
  let size = 0;
  for await (const chunk of await entry.open()) {
    size += (chunk as Buffer).length;
    if (size > 50 * 1024 * 1024) throw damaged(`${name} is too large`);
    chunks.push(chunk as Buffer);
  }
  let json: unknown;
  try {
    json = JSON.parse(Buffer.concat(chunks).toString('utf8'));
  } catch {
    throw damaged(`${name} is not JSON`);
  }
  const parsed = schema.safeParse(json);
  if (!parsed.success) {
    const first = parsed.error.issues[0];
    throw damaged(
      `${name} does not match the bundle format (${first.path.join('.') || 'top'}: ${first.message})`,
    );
  }
  const [unstorable] = unstorableText(parsed.data);
  if (unstorable) throw damaged(`${name} ${unstorable.message} at ${unstorable.path || 'top'}`);
  return parsed.data;
}

export function createBundleService(deps: {
  db: Db;
  storage: BlobStorage;
  models: ModelService;
  sheets: SheetService;
  comments: CommentService;
  corrections: CorrectionService;
  activity: ActivityService;
}) {
  const { db, storage, models, sheets, comments, corrections, activity } = deps;

  /** Streams the whole project as a zip; files are read from storage one at a time. */
  async function exportProject(project: {
    id: string;
    name: string;
    displayUnit: 'in' | 'mm';
    modelScale: string | null;
  }): Promise<Readable> {
    const [stored, sheetList, commentList, correctionList] = await Promise.all([
      models.current(project.id),
      sheets.list(project.id),
      comments.list(project.id, {}),
      corrections.list(project.id),
    ]);
    const files = [...new Map(sheetList.map((s) => [s.file.sha256, s.file])).values()];
    const manifest: BundleManifest = {
      format: 'fairsheet.bundle',
      version: 1,
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
    json('model.json', stored.model);
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
      correctionList.map(({ id: _id, author, ...rest }) => ({ ...rest, author: author.name })),
    );
    json(
      'comments.json',
      commentList.map((c) => ({
        targetKind: c.targetKind,
        targetId: c.targetId,
        body: c.body,
        author: c.author.name,
        createdAt: c.createdAt,
      })),
    );
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

  /**
   * Reads and checks the whole bundle first (format, every file's checksum, every reference),
   * then creates the project and everything in it, storing its files, in one transaction.
   */
  async function importProject(zipPath: string, user: { id: string; name: string }) {
    const entries = await openZip(zipPath);
    const manifest = await readJson(entries, 'manifest.json', bundleManifest);
    const model = await readJson(entries, 'model.json', bundleModel);
    const sheetList = await readJson(entries, 'sheets.json', bundleSheets);
    const correctionList = await readJson(entries, 'corrections.json', bundleCorrections);
    const commentList = await readJson(entries, 'comments.json', bundleComments);
    const known = new Map(manifest.files.map((f) => [f.sha256, f]));
    for (const s of sheetList)
      if (!known.has(s.sha256))
        throw damaged(`sheet “${s.title}” names a file the bundle does not list`);

    const work = await mkdtemp(path.join(tmpdir(), 'fairsheet-import-'));
    const removeWork = () => rm(work, { recursive: true, force: true });
    try {
      for (const f of manifest.files) {
        const entry = entries.get(fileKey(f.sha256));
        if (!entry) throw damaged(`the file ${f.sha256.slice(0, 12)}… is missing`);
        const target = path.join(work, f.sha256);
        const hash = createHash('sha256');
        const stream = await entry.open();
        stream.on('data', (chunk: Buffer) => hash.update(chunk));
        await pipeline(stream, createWriteStream(target)).catch(() => {
          throw damaged(`the file ${f.sha256.slice(0, 12)}… is damaged`);
        });
        if (hash.digest('hex') !== f.sha256)
          throw damaged(`the file ${f.sha256.slice(0, 12)}… does not match its checksum`);
      }
    } catch (err) {
      await removeWork();
      throw err;
    }

    const imported = db.transaction(async (tx) => {
      const project = await insertProject(tx, user.id, manifest.project);
      // As an upload does: the rows locked in sha256 order (imports and uploads sharing files
      // never wait on each other in a cycle), then the blobs written under those locks, so a
      // sheet deleted elsewhere cannot take a file away between its blob and its row.
      const files = [...manifest.files].sort((a, b) => (a.sha256 < b.sha256 ? -1 : 1));
      for (const f of files)
        await sheetRepo.lockOrInsertFile(tx, {
          sha256: f.sha256,
          mimeType: f.mimeType,
          sizeBytes: f.sizeBytes,
        });
      for (const f of files) {
        const put = await storage.put({ path: path.join(work, f.sha256) }, f.mimeType);
        if (put.sha256 !== f.sha256) throw damaged('a file changed while it was stored');
      }
      const rows = sheetList.length
        ? await sheetRepo.insertSheets(
            tx,
            sheetList.map((s) => ({
              projectId: project.id,
              fileSha256: s.sha256,
              originalName: s.originalName,
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
              createdBy: user.id,
            })),
          )
        : [];
      // Sheet ids are new in this project: every reference to one follows it.
      const newId = new Map(sheetList.map((s, i) => [s.id, rows[i].id]));
      const remapTarget = (kind: string, id: string) => {
        if (kind === 'sheet') return newId.get(id) ?? id;
        if (kind === 'pin') {
          const [sheetId, pinId] = id.split(':');
          return `${newId.get(sheetId) ?? sheetId}:${pinId}`;
        }
        return id;
      };
      const remapped = {
        ...model,
        dimensions: model.dimensions.map((d) =>
          d.sheet && newId.has(d.sheet) ? { ...d, sheet: newId.get(d.sheet) } : d,
        ),
      };
      await insertModel(
        tx,
        project.id,
        remapped,
        solveModel(remapped, { timeLimitMs: 2000 }),
        user.id,
      );
      await insertRevision(tx, {
        projectId: project.id,
        revision: 0,
        userId: user.id,
        summary: `imported from a bundle exported ${manifest.exportedAt.slice(0, 10)}`,
        diff: diffModels(remapped, remapped),
        model: remapped,
      });
      for (const c of correctionList) {
        await insertCorrection(tx, {
          projectId: project.id,
          userId: user.id,
          sheetId: c.sheetId ? (newId.get(c.sheetId) ?? null) : null,
          dimension: c.dimension ?? null,
          wrong: c.wrong,
          corrected: c.corrected,
          reason:
            c.author === user.name
              ? c.reason
              : `${c.reason}${c.reason ? ' ' : ''}(recorded by ${c.author}, ${c.createdAt.slice(0, 10)})`,
          source: c.source,
          sourceNote: c.sourceNote,
        });
      }
      for (const c of commentList) {
        await insertComment(tx, {
          projectId: project.id,
          targetKind: c.targetKind,
          targetId: remapTarget(c.targetKind, c.targetId),
          userId: user.id,
          body:
            c.author === user.name
              ? c.body
              : `${c.author} (${c.createdAt.slice(0, 10)}): ${c.body}`,
          mentions: [],
        });
      }
      await activity.record(
        {
          projectId: project.id,
          userId: user.id,
          kind: 'save',
          summary: 'project imported from a bundle',
        },
        tx,
      );
      return project;
    });
    const result = await imported.finally(removeWork);
    return toProject(result, 'owner');
  }

  return { exportProject, importProject };
}

export type BundleService = ReturnType<typeof createBundleService>;
