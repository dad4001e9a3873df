import { createHash } from 'node:crypto';
import { mkdtemp, open, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { PassThrough, type Readable } from 'node:stream';
import yauzl from 'yauzl';
import yazl from 'yazl';
import type { z } from 'zod';
import {
  bundleActivity,
  bundleChecks,
  bundleComments,
  bundleCorrections,
  bundleHistory,
  bundleManifest,
  bundleModel,
  bundlePeople,
  bundleSheets,
  type BundleManifest,
} from '@shared/api';
import * as bundleRepo from '../db/bundle';
import type { Db } from '../db/client';
import { findModel } from '../db/models';
import { insertProject } from '../db/projects';
import * as sheetRepo from '../db/sheets';
import { diffModels } from '@shared/engine';
import { AppError, unprocessable } from '../http/errors';
import { unstorableText } from '../http/validate';
import { defaultSolvePool, type SolvePool } from '../solve/pool';
import type { BlobStorage } from '../storage/storage';
import type { ActivityService } from './activity';
import type { InvitationService } from './invitations';
import type { SheetService } from './sheets';
import { toProject } from './projects';

const fileKey = (sha256: string) => `files/${sha256}`;
const fileEntry = /^files\/([0-9a-f]{64})$/;

/**
 * What one import may hold. Sizes are those the rest of the app accepts: a file is one upload
 * (UPLOAD_MAX_MB), the model one save (the 2 MB JSON body limit of the API), the whole bundle
 * expands to no more than the zip the import route accepts (20 uploads' worth).
 */
export interface BundleLimits {
  /** Largest file, as an upload (default 60 MB). */
  maxFileBytes: number;
}

const MB = 1024 * 1024;
/** model.json, and each revision's model in history.json: what a save accepts (2 MB body). */
const maxModelBytes = 2 * MB;
/** sheets, comments, corrections, checks, activity and people: text records, many per project. */
const maxRecordsBytes = 16 * MB;
/**
 * Entries in one zip: the JSON entries and one per distinct file. A drawing set runs to a few
 * hundred files; reading a thousand directory records costs nothing, and a bundle over it is
 * refused before a byte is expanded.
 */
export const maxBundleEntries = 1000;
/**
 * How much an entry may expand over its compressed size. Deflate tops out near 1,032:1; the
 * files of an export are stored (1:1) and its pretty-printed JSON compresses 5–20:1. Entries
 * expanding to under 1 MB are not held to it (a few kilobytes of zeros harm no one).
 */
const maxRatio = 100;
const ratioFloorBytes = MB;

/** A refusal of a damaged or foreign bundle: nothing has been created. */
const damaged = (why: string, details?: Record<string, unknown>) =>
  unprocessable(`This bundle cannot be imported: ${why}. Nothing was created.`, details);

const shortName = (name: string) => (name.length > 80 ? `${name.slice(0, 77)}…` : name);
const megabytes = (n: number) => `${Number((n / MB).toFixed(1))} MB`;

/** The JSON entries and the largest each may be; those without `required` came with version 2. */
const jsonEntries: Record<string, { maxBytes: (l: BundleLimits) => number; required?: true }> = {
  'manifest.json': { maxBytes: () => maxRecordsBytes, required: true },
  'model.json': { maxBytes: () => maxModelBytes, required: true },
  'sheets.json': { maxBytes: () => maxRecordsBytes, required: true },
  'corrections.json': { maxBytes: () => maxRecordsBytes, required: true },
  'comments.json': { maxBytes: () => maxRecordsBytes, required: true },
  // Every revision holds a whole model: as large as one upload.
  'history.json': { maxBytes: (l) => l.maxFileBytes },
  'checks.json': { maxBytes: () => maxRecordsBytes },
  'activity.json': { maxBytes: () => maxRecordsBytes },
  'people.json': { maxBytes: () => maxRecordsBytes },
};

/**
 * An open bundle: its directory, read and checked against the limits before any entry is
 * expanded, and a way to stream an entry that counts every byte. `close` ends every stream
 * still open and resolves once the zip's file descriptor is closed.
 */
interface OpenBundle {
  entries: Map<string, yauzl.Entry>;
  read(name: string, onChunk: (chunk: Buffer) => unknown): Promise<void>;
  close(): Promise<void>;
}

function entryLimit(name: string, limits: BundleLimits): number | undefined {
  if (fileEntry.test(name)) return limits.maxFileBytes;
  return jsonEntries[name]?.maxBytes(limits);
}

async function openBundle(file: string, limits: BundleLimits): Promise<OpenBundle> {
  const zip = await new Promise<yauzl.ZipFile>((resolve, reject) =>
    yauzl.open(
      file,
      // validateEntrySizes: a stream that expands past (or short of) its declared size errors.
      { lazyEntries: true, autoClose: false, strictFileNames: true, validateEntrySizes: true },
      (err, z) => (err || !z ? reject(damaged('it is not a readable zip file')) : resolve(z)),
    ),
  );
  const streams = new Set<Readable>();
  const closed = new Promise<void>((resolve) => zip.once('close', () => resolve()));
  // An error after a refusal (a read still in flight) has no one left to tell.
  zip.on('error', () => undefined);
  async function close() {
    for (const s of streams) s.destroy();
    zip.close();
    await closed;
  }

  const maxTotal = limits.maxFileBytes * 20;
  try {
    if (zip.entryCount > maxBundleEntries) {
      throw damaged(`it holds ${zip.entryCount} entries; the limit is ${maxBundleEntries}`, {
        entries: zip.entryCount,
        maxEntries: maxBundleEntries,
      });
    }
    const entries = await new Promise<Map<string, yauzl.Entry>>((resolve, reject) => {
      const found = new Map<string, yauzl.Entry>();
      let total = 0;
      zip.on('error', () => reject(damaged('the zip file is damaged')));
      zip.on('end', () => resolve(found));
      zip.on('entry', (e: yauzl.Entry) => {
        const name = e.fileName;
        if (name.endsWith('/')) return zip.readEntry(); // a folder, as some zip tools add
        const limit = entryLimit(name, limits);
        let refusal: AppError | undefined;
        if (limit === undefined)
          refusal = damaged(`it holds “${shortName(name)}”, which is not part of a bundle`);
        else if (found.has(name)) refusal = damaged(`it holds ${name} twice`);
        else if (e.isEncrypted()) refusal = damaged(`${name} is encrypted`);
        else if (e.compressionMethod !== 0 && e.compressionMethod !== 8)
          refusal = damaged(`${name} is compressed in a way we do not read`);
        else if (e.uncompressedSize > limit)
          refusal = damaged(
            `${name} expands to ${megabytes(e.uncompressedSize)}; the limit is ${megabytes(limit)}`,
            { entry: name, sizeBytes: e.uncompressedSize, limitBytes: limit },
          );
        else if (
          e.uncompressedSize > ratioFloorBytes &&
          e.uncompressedSize > maxRatio * e.compressedSize
        )
          refusal = damaged(
            `${name} expands ${Math.round(e.uncompressedSize / Math.max(1, e.compressedSize))} times over; the limit is ${maxRatio} times`,
            { entry: name, maxRatio },
          );
        else if ((total += e.uncompressedSize) > maxTotal)
          refusal = damaged(`it expands to over ${megabytes(maxTotal)}, the limit`, {
            limitBytes: maxTotal,
          });
        if (refusal) return reject(refusal);
        found.set(name, e);
        zip.readEntry();
      });
      zip.readEntry();
    });

    async function read(name: string, onChunk: (chunk: Buffer) => unknown) {
      const e = entries.get(name)!;
      const stream = await new Promise<Readable>((resolve, reject) =>
        zip.openReadStream(e, (err, s) =>
          err || !s ? reject(damaged(`${name} is damaged`)) : resolve(s),
        ),
      );
      streams.add(stream);
      let size = 0;
      try {
        // Events, not `for await`: yauzl's streams of stored (uncompressed) entries never end
        // under an async iterator, and the request would wait for ever.
        await new Promise<void>((resolve, reject) => {
          let failed = false;
          const fail = (err: unknown) => {
            if (failed) return;
            failed = true;
            stream.destroy();
            reject(err instanceof AppError ? err : damaged(`${name} is damaged`));
          };
          stream.on('error', fail);
          stream.on('end', () => failed || resolve());
          stream.on('data', (chunk: Buffer) => {
            size += chunk.length;
            // yauzl checks this too; counted here as well, so no entry writes past its size.
            if (size > e.uncompressedSize)
              return fail(damaged(`${name} is larger than its zip entry says`));
            stream.pause();
            Promise.resolve(onChunk(chunk)).then(() => failed || stream.resume(), fail);
          });
        });
      } finally {
        stream.destroy();
        streams.delete(stream);
      }
      if (size !== e.uncompressedSize) throw damaged(`${name} is shorter than its zip entry says`);
    }

    return { entries, read, close };
  } catch (err) {
    await close();
    throw err;
  }
}

async function readJson<S extends z.ZodType>(
  bundle: OpenBundle,
  name: string,
  schema: S,
): Promise<z.output<S> | undefined> {
  if (!bundle.entries.has(name)) {
    if (jsonEntries[name].required) throw damaged(`${name} is missing`);
    return undefined;
  }
  const chunks: Buffer[] = [];
  await bundle.read(name, (chunk) => chunks.push(chunk));
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

/** The author as the bundle records them: text, never an account of this server. */
const recordedAuthor = (r: { authorName: string | null; authorEmail: string | null }) => ({
  author: r.authorName ?? '',
  authorEmail: r.authorEmail,
});

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
  const { db, storage, sheets, invitations, activity } = deps;
  const limits: BundleLimits = { maxFileBytes: 60 * MB, ...deps.limits };

  /** Streams the whole project as a zip; files are read from storage one at a time. */
  async function exportProject(project: {
    id: string;
    name: string;
    displayUnit: 'in' | 'mm';
    modelScale: string | null;
  }): Promise<Readable> {
    const [
      stored,
      sheetList,
      history,
      checkList,
      commentList,
      correctionList,
      activityList,
      people,
    ] = await Promise.all([
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

  /**
   * Reads the whole bundle into the work folder and checks it (limits, format, every file's
   * checksum and its inspection as an upload, every reference); the zip is closed before
   * anything is created.
   */
  async function readBundle(zipPath: string, work: string) {
    const bundle = await openBundle(zipPath, limits);
    try {
      const manifest = (await readJson(bundle, 'manifest.json', bundleManifest))!;
      const model = (await readJson(bundle, 'model.json', bundleModel))!;
      const sheetList = (await readJson(bundle, 'sheets.json', bundleSheets))!;
      const correctionList = (await readJson(bundle, 'corrections.json', bundleCorrections))!;
      const commentList = (await readJson(bundle, 'comments.json', bundleComments))!;
      const history = await readJson(bundle, 'history.json', bundleHistory);
      const checkList = (await readJson(bundle, 'checks.json', bundleChecks)) ?? [];
      const activityList = (await readJson(bundle, 'activity.json', bundleActivity)) ?? [];
      const people = (await readJson(bundle, 'people.json', bundlePeople)) ?? [];

      const listed = new Set(manifest.files.map((f) => f.sha256));
      if (listed.size !== manifest.files.length) throw damaged('the manifest lists a file twice');
      for (const name of bundle.entries.keys()) {
        const sha = fileEntry.exec(name)?.[1];
        if (sha && !listed.has(sha)) throw damaged(`it holds ${name}, which the manifest omits`);
      }
      for (const s of sheetList)
        if (!listed.has(s.sha256))
          throw damaged(`sheet “${s.title}” names a file the bundle does not list`);
      for (const r of history ?? [])
        if (Buffer.byteLength(JSON.stringify(r.model)) > maxModelBytes)
          throw damaged(`revision ${r.revision} holds a model over ${megabytes(maxModelBytes)}`);
      const revisions = new Set((history ?? []).map((r) => r.revision));
      if (revisions.size !== (history?.length ?? 0))
        throw damaged('history.json holds a revision twice');
      if (new Set(checkList.map((c) => c.dimension)).size !== checkList.length)
        throw damaged('checks.json holds a dimension twice');

      // Each file as an upload is taken: its checksum, then its type and pages from its bytes.
      // The manifest's type is not trusted (an older export may carry a wrong one): the bytes
      // decide. Its size must be the real one, and is checked before anything is expanded.
      const files = [];
      for (const f of manifest.files) {
        const name = fileKey(f.sha256);
        const entry = bundle.entries.get(name);
        if (!entry) throw damaged(`the file ${f.sha256.slice(0, 12)}… is missing`);
        if (f.sizeBytes !== entry.uncompressedSize)
          throw damaged(
            `the file ${f.sha256.slice(0, 12)}… is listed as ${f.sizeBytes} bytes but holds ${entry.uncompressedSize}`,
          );
        const target = path.join(work, f.sha256);
        const hash = createHash('sha256');
        const out = await open(target, 'wx', 0o600);
        try {
          await bundle.read(name, async (chunk) => {
            hash.update(chunk);
            await out.write(chunk);
          });
        } finally {
          await out.close();
        }
        if (hash.digest('hex') !== f.sha256)
          throw damaged(`the file ${f.sha256.slice(0, 12)}… does not match its checksum`);
        const named = sheetList.find((s) => s.sha256 === f.sha256)?.originalName;
        try {
          const inspected = await sheets.inspect({
            originalName: named || f.sha256.slice(0, 12),
            path: target,
          });
          files.push({ sha256: f.sha256, sizeBytes: inspected.sizeBytes, ...inspected.inspection });
        } catch (err) {
          if (err instanceof AppError)
            throw damaged(err.message, err.details as Record<string, unknown>);
          throw err;
        }
      }
      // A sheet's page and pixel size are the file's, as an upload would record them.
      const pagesOf = new Map(files.map((f) => [f.sha256, f.pages]));
      const sheetRows = sheetList.map((s) => {
        const pages = pagesOf.get(s.sha256)!;
        const size = pages[s.page - 1];
        if (!size)
          throw damaged(`sheet “${s.title}” is page ${s.page} of a file with ${pages.length}`);
        return { ...s, pageCount: pages.length, ...size };
      });
      return {
        manifest,
        model,
        files,
        sheetRows,
        correctionList,
        commentList,
        history,
        checkList,
        activityList,
        people,
      };
    } finally {
      await bundle.close();
    }
  }

  /**
   * Reads and checks the whole bundle first, then creates the project and everything in it,
   * storing its files, in one transaction. Members come back as invitations to the same
   * addresses, sent by the importer once the project exists.
   */
  async function importProject(zipPath: string, user: { id: string; name: string; email: string }) {
    const work = await mkdtemp(path.join(deps.tempDir ?? tmpdir(), 'fairsheet-import-'));
    const created: string[] = [];
    let b: Awaited<ReturnType<typeof readBundle>> | undefined;
    let project;
    try {
      b = await readBundle(zipPath, work);
      const data = b;
      project = await db.transaction(async (tx) => {
        const project = await insertProject(tx, user.id, data.manifest.project);
        // As an upload does: the rows locked in sha256 order (imports and uploads sharing files
        // never wait on each other in a cycle), then the blobs written under those locks, so a
        // sheet deleted elsewhere cannot take a file away between its blob and its row.
        const files = [...data.files].sort((x, y) => (x.sha256 < y.sha256 ? -1 : 1));
        for (const f of files)
          await sheetRepo.lockOrInsertFile(tx, {
            sha256: f.sha256,
            mimeType: f.mimeType,
            sizeBytes: f.sizeBytes,
          });
        for (const f of files) {
          const put = await storage.put({ path: path.join(work, f.sha256) }, f.mimeType);
          if (put.sha256 !== f.sha256) throw damaged('a file changed while it was stored');
          if (put.created) created.push(put.sha256);
        }
        const rows = data.sheetRows.length
          ? await sheetRepo.insertSheets(
              tx,
              data.sheetRows.map((s) => ({
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
        const newId = new Map(data.sheetRows.map((s, i) => [s.id, rows[i].id]));
        const remapTarget = (kind: string, id: string) => {
          if (kind === 'sheet') return newId.get(id) ?? id;
          if (kind === 'pin') {
            const [sheetId, pinId] = id.split(':');
            return `${newId.get(sheetId) ?? sheetId}:${pinId}`;
          }
          return id;
        };
        const remap = (m: typeof data.model) => ({
          ...m,
          dimensions: m.dimensions.map((d) =>
            d.sheet && newId.has(d.sheet) ? { ...d, sheet: newId.get(d.sheet) } : d,
          ),
        });
        const remapped = remap(data.model);
        const recorded = (r: { author: string | null; authorEmail: string | null }) => ({
          projectId: project.id,
          authorName: r.author || null,
          authorEmail: r.authorEmail,
        });

        // The whole history, numbers and dates as recorded; a version 1 bundle has none, and
        // its model becomes revision 0.
        const history = data.history?.length
          ? [...data.history].sort((x, y) => x.revision - y.revision)
          : undefined;
        const revision = history ? history[history.length - 1].revision : 0;
        await bundleRepo.insertImportedModel(tx, {
          projectId: project.id,
          revision,
          model: remapped,
          result: await (deps.solver ?? defaultSolvePool()).solve(remapped),
          userId: user.id,
        });
        await bundleRepo.insertRecordedRevisions(
          tx,
          history
            ? history.map((r) => ({
                ...recorded(r),
                revision: r.revision,
                createdAt: new Date(r.createdAt),
                summary: r.summary,
                diff: r.diff ?? {},
                model: remap(r.model),
              }))
            : [
                {
                  projectId: project.id,
                  authorName: user.name,
                  authorEmail: user.email,
                  revision: 0,
                  createdAt: new Date(),
                  summary: `imported from a bundle exported ${data.manifest.exportedAt.slice(0, 10)}`,
                  diff: diffModels(remapped, remapped),
                  model: remapped,
                },
              ],
        );
        await bundleRepo.insertRecordedChecks(
          tx,
          data.checkList.map((c) => ({
            ...recorded(c),
            createdAt: new Date(c.createdAt),
            dimension: c.dimension,
            value: c.value,
            fingerprint: c.fingerprint,
            revision: c.revision,
          })),
        );
        await bundleRepo.insertRecordedCorrections(
          tx,
          data.correctionList.map((c) => ({
            ...recorded(c),
            createdAt: new Date(c.createdAt),
            sheetId: c.sheetId ? (newId.get(c.sheetId) ?? null) : null,
            dimension: c.dimension ?? null,
            wrong: c.wrong,
            corrected: c.corrected,
            reason: c.reason,
            source: c.source,
            sourceNote: c.sourceNote,
          })),
        );
        await bundleRepo.insertRecordedComments(
          tx,
          data.commentList.map((c) => ({
            ...recorded(c),
            createdAt: new Date(c.createdAt),
            targetKind: c.targetKind,
            targetId: remapTarget(c.targetKind, c.targetId),
            body: c.body,
            mentions: c.mentions,
          })),
        );
        await bundleRepo.insertRecordedActivity(
          tx,
          data.activityList.map((a) => ({
            ...recorded(a),
            createdAt: new Date(a.createdAt),
            kind: a.kind,
            summary: a.summary,
            details: a.details ?? {},
          })),
        );
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
    } catch (err) {
      // A blob this import wrote goes again unless another sheet came to use it meanwhile.
      for (const f of b?.files.filter((x) => created.includes(x.sha256)) ?? [])
        await sheets
          .releaseFile(f.sha256, { sha256: f.sha256, mimeType: f.mimeType, sizeBytes: f.sizeBytes })
          .catch((cleanup: Error) => console.error(`[bundle] ${f.sha256}: ${cleanup.message}`));
      throw err;
    } finally {
      await rm(work, { recursive: true, force: true });
    }

    // The people of the project, invited again by the importer through the invitation service
    // (which mails the link, as every invitation is mailed: a link is the only way to accept).
    // The importer is the owner already. One that cannot be sent does not undo the import: the
    // owner sees who is invited and can invite again.
    const invited = new Set([user.email.toLowerCase()]);
    for (const p of b!.people) {
      const email = p.email.trim().toLowerCase();
      if (invited.has(email)) continue;
      invited.add(email);
      await invitations
        .create(project, user, email, p.role)
        .catch((err: Error) =>
          console.error(`[bundle] invitation of ${email} not made: ${err.message}`),
        );
    }
    return toProject(project, 'owner');
  }

  return { exportProject, importProject };
}

export type BundleService = ReturnType<typeof createBundleService>;
