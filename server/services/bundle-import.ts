import { createHash } from 'node:crypto';
import { mkdtemp, open, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
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
} from '@shared/api';
import { diffModels } from '@shared/engine';
import * as bundleRepo from '../db/bundle';
import type { Db } from '../db/client';
import { insertProject } from '../db/projects';
import * as sheetRepo from '../db/sheets';
import { AppError } from '../http/errors';
import { defaultSolvePool, type SolvePool } from '../solve/pool';
import type { BlobStorage } from '../storage/storage';
import type { ActivityService } from './activity';
import {
  damaged,
  fileEntry,
  fileKey,
  maxModelBytes,
  megabytes,
  openBundle,
  readJson,
  type BundleLimits,
} from './bundle-reader';
import type { InvitationService } from './invitations';
import type { SheetService } from './sheets';
import { toProject } from './projects';

export interface BundleImportDeps {
  db: Db;
  storage: BlobStorage;
  sheets: SheetService;
  invitations: InvitationService;
  activity: ActivityService;
  /** Where a bundle's files are expanded while checked (default: the system temp folder). */
  tempDir?: string;
  limits: BundleLimits;
  /** Where the imported model is solved (default: the process's pool). */
  solver?: SolvePool;
}

/**
 * Reads the whole bundle into the work folder and checks it (limits, format, every file's
 * checksum and its inspection as an upload, every reference); the zip is closed before
 * anything is created.
 */
async function readBundle(
  deps: Pick<BundleImportDeps, 'sheets' | 'limits'>,
  zipPath: string,
  work: string,
) {
  const { sheets, limits } = deps;
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
export async function importProject(
  deps: BundleImportDeps,
  zipPath: string,
  user: { id: string; name: string; email: string },
) {
  const { db, storage, sheets, invitations, activity } = deps;
  const work = await mkdtemp(path.join(deps.tempDir ?? tmpdir(), 'fairsheet-import-'));
  const created: string[] = [];
  let b: Awaited<ReturnType<typeof readBundle>> | undefined;
  let project;
  try {
    b = await readBundle(deps, zipPath, work);
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
      // insertSheets answers one row per sheet, in order.
      const newId = new Map(data.sheetRows.map((s, i) => [s.id, rows[i]!.id]));
      const remapTarget = (kind: string, id: string) => {
        if (kind === 'sheet') return newId.get(id) ?? id;
        if (kind === 'pin') {
          // split answers at least one part.
          const [sheetId, pinId] = id.split(':') as [string, string?];
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
      const revision = history?.at(-1)?.revision ?? 0;
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
