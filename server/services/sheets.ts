import { readFile } from 'node:fs/promises';
import type { Readable } from 'node:stream';
import { CalibrationError, type SheetCalibration } from '@shared/engine';
import type { z } from 'zod';
import { buildSheetCalibration } from '@shared/api';
import type {
  Measurement,
  Pin,
  Sheet,
  SheetCalibrationDto,
  SheetKind,
  updateSheetBody,
} from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/sheets';
import { AppError, badRequest, conflict, notFound } from '../http/errors';
import { fileStem, sanitiseFileName } from '../storage/file-name';
import {
  acceptedKinds,
  defaultInspectLimits,
  inspectFile,
  InspectionError,
  type InspectLimits,
  type Inspection,
} from '../storage/inspect';
import {
  BlobNotFoundError,
  hashSource,
  type BlobStorage,
  type ByteRange,
} from '../storage/storage';

/** A change to a sheet, as validated by `updateSheetBody`. */
export type SheetChanges = z.output<typeof updateSheetBody>;

/** A file handed to the service: staged on disk by the upload route, or bytes in memory. */
export type UploadSource =
  { originalName: string; path: string } | { originalName: string; bytes: Buffer };

export interface SheetServiceOptions {
  db: Db;
  storage: BlobStorage;
  limits?: Partial<InspectLimits>;
}

export function toSheet(row: repo.SheetWithFile): Sheet {
  return {
    id: row.id,
    projectId: row.projectId,
    title: row.title,
    kind: row.kind,
    page: row.page,
    pageCount: row.pageCount,
    widthPx: row.widthPx,
    heightPx: row.heightPx,
    rotation: row.rotation as Sheet['rotation'],
    straighten: row.straighten,
    calibration: (row.calibration as SheetCalibrationDto | null) ?? null,
    pins: row.pins as Pin[],
    measurements: row.measurements as Measurement[],
    file: {
      sha256: row.file.sha256,
      mimeType: row.file.mimeType,
      originalName: row.originalName,
      sizeBytes: row.file.sizeBytes,
    },
    revision: row.revision,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

const unsupportedMediaType = (message: string, details?: unknown) =>
  new AppError('unsupported_media_type', message, 415, details);

/** The refusal a user sees for a file that failed inspection, naming the file. */
function refusal(name: string, err: InspectionError): AppError {
  const details = { file: name, problem: err.problem, ...err.details };
  if (err.problem === 'unsupported') {
    return unsupportedMediaType(
      `“${name}” is not a PDF or an image we can use (its content was checked, not its name). ` +
        `Accepted kinds: ${acceptedKinds}.`,
      details,
    );
  }
  // Too many pixels is 422, not 413: the request may be tiny (a 50,000 × 50,000 PNG header in a
  // few kilobytes); what cannot be processed is the content, and a smaller file would not help.
  return new AppError('unprocessable', `“${name}”: ${err.message}`, 422, details);
}

/**
 * Builds the engine's calibration from the stored form, so a degenerate one (coincident picks,
 * a crossed or collinear four-point, a scale that does not parse) is refused when saved.
 */
export function engineCalibration(c: SheetCalibrationDto): SheetCalibration {
  return buildSheetCalibration(c).cal;
}

function checkPinsAndMeasurements(pins: Pin[], measurements: Measurement[]) {
  const ids = new Set<string>();
  for (const p of pins) {
    if (ids.has(p.id)) throw badRequest(`Two pins have the id "${p.id}".`, { pin: p.id });
    ids.add(p.id);
  }
  const seen = new Set<string>();
  for (const m of measurements) {
    if (seen.has(m.id)) {
      throw badRequest(`Two measurements have the id "${m.id}".`, { measurement: m.id });
    }
    seen.add(m.id);
    for (const end of [m.from, m.to]) {
      if (!ids.has(end)) {
        throw badRequest(`Measurement "${m.id}" runs to pin "${end}", which is not on the sheet.`, {
          measurement: m.id,
          pin: end,
        });
      }
    }
    if (m.from === m.to) {
      throw badRequest(`Measurement "${m.id}" starts and ends on the same pin.`, {
        measurement: m.id,
      });
    }
  }
}

export function createSheetService({ db, storage, limits }: SheetServiceOptions) {
  const inspectLimits: InspectLimits = { ...defaultInspectLimits, ...limits };

  async function list(projectId: string): Promise<Sheet[]> {
    return (await repo.listSheets(db, projectId)).map(toSheet);
  }

  async function get(projectId: string, sheetId: string): Promise<Sheet> {
    const row = await repo.findSheet(db, projectId, sheetId);
    if (!row) throw notFound('The sheet');
    return toSheet(row);
  }

  /**
   * What a file is, from its bytes: type, pages and their pixel sizes, hash and size. Refuses
   * (415 or 422, naming the file) what an upload would refuse; a bundle's files come here too.
   */
  async function inspect(source: UploadSource) {
    const name = sanitiseFileName(source.originalName);
    const bytes = 'bytes' in source ? source.bytes : await readFile(source.path);
    let inspection: Inspection;
    try {
      inspection = await inspectFile(bytes, inspectLimits);
    } catch (err) {
      if (err instanceof InspectionError) throw refusal(name, err);
      throw err;
    }
    return { name, inspection, ...(await hashSource(bytes)) };
  }

  /**
   * Inspects every file first and refuses the whole upload if any one is refused, so nothing
   * is stored then. Accepted files are stored once per content and make one sheet per page, in
   * one transaction that holds each file's row locked while its blob is written.
   */
  async function upload(
    projectId: string,
    userId: string | null,
    sources: UploadSource[],
  ): Promise<Sheet[]> {
    if (!sources.length) throw badRequest('Attach one or more files in the field "file".');
    const accepted: {
      source: UploadSource;
      name: string;
      sha256: string;
      sizeBytes: number;
      inspection: Inspection;
    }[] = [];
    for (const source of sources) accepted.push({ source, ...(await inspect(source)) });

    const distinct = [...new Map(accepted.map((a) => [a.sha256, a])).values()].sort((a, b) =>
      a.sha256 < b.sha256 ? -1 : 1,
    );
    const created: string[] = [];
    try {
      const rows = await db.transaction(async (tx) => {
        // Sorted, so two uploads sharing files lock them in the same order.
        for (const f of distinct) {
          await repo.lockOrInsertFile(tx, {
            sha256: f.sha256,
            mimeType: f.inspection.mimeType,
            sizeBytes: f.sizeBytes,
          });
        }
        for (const f of distinct) {
          const source = 'bytes' in f.source ? f.source.bytes : { path: f.source.path };
          const put = await storage.put(source, f.inspection.mimeType);
          if (put.sha256 !== f.sha256) throw new Error('The file changed while it was stored.');
          if (put.created) created.push(put.sha256);
        }
        const values: repo.NewSheet[] = accepted.flatMap((a) => {
          const { pages, mimeType } = a.inspection;
          const stem = fileStem(a.name);
          const kind: SheetKind = mimeType === 'image/jpeg' ? 'photo' : 'drawing';
          return pages.map((size, i) => ({
            projectId,
            fileSha256: a.sha256,
            originalName: a.name,
            title: (pages.length > 1 ? `${stem}, p. ${i + 1}` : stem).slice(0, 200),
            kind,
            page: i + 1,
            pageCount: pages.length,
            widthPx: size.widthPx,
            heightPx: size.heightPx,
            createdBy: userId,
          }));
        });
        return repo.insertSheets(tx, values);
      });
      const byFile = new Map(distinct.map((f) => [f.sha256, f]));
      return rows.map((row) => {
        const f = byFile.get(row.fileSha256)!;
        return toSheet({
          ...row,
          file: {
            sha256: f.sha256,
            mimeType: f.inspection.mimeType,
            sizeBytes: f.sizeBytes,
            createdAt: row.createdAt,
          },
        });
      });
    } catch (err) {
      // A blob this upload wrote is removed again unless a sheet came to use it meanwhile (an
      // upload of the same content); failing that, it stays as an unused file, never a loss.
      for (const f of distinct.filter((d) => created.includes(d.sha256))) {
        await releaseFile(f.sha256, {
          sha256: f.sha256,
          mimeType: f.inspection.mimeType,
          sizeBytes: f.sizeBytes,
        }).catch((cleanup: Error) => console.error(`[sheets] ${f.sha256}: ${cleanup.message}`));
      }
      throw err;
    }
  }

  /** Applies a change based on `revision`: refused with 409 and the current sheet when stale. */
  async function update(projectId: string, sheetId: string, body: SheetChanges) {
    return db.transaction(async (tx) => {
      const row = await repo.lockSheet(tx, projectId, sheetId);
      if (!row) throw notFound('The sheet');
      if (row.revision !== body.revision) {
        throw conflict(
          `Someone else changed this sheet (now revision ${row.revision}) after the revision ${body.revision} you edited.`,
          { currentRevision: row.revision, sheet: toSheet(row) },
        );
      }
      const { revision: _revision, ...changes } = body;
      const pins = changes.pins ?? (row.pins as Pin[]);
      const measurements = changes.measurements ?? (row.measurements as Measurement[]);
      checkPinsAndMeasurements(pins, measurements);
      if (changes.calibration) {
        try {
          engineCalibration(changes.calibration);
        } catch (err) {
          if (!(err instanceof CalibrationError)) throw err;
          throw badRequest(`The calibration cannot be used: ${err.message}.`, {
            fields: [{ path: 'calibration', message: err.message }],
            calibrationError: err.code,
            ...err.details,
          });
        }
      }
      const updated = await repo.updateSheet(tx, sheetId, {
        ...changes,
        revision: row.revision + 1,
      });
      return toSheet({ ...updated, file: row.file });
    });
  }

  /**
   * Deletes a sheet, then its stored file when no other sheet (in any project) uses it. The
   * sheet's row goes first, in its own transaction: dying in between leaves an unused file
   * (swept at the next start), never a sheet whose file is gone.
   */
  async function remove(projectId: string, sheetId: string) {
    const sha256 = await db.transaction((tx) => repo.deleteSheet(tx, projectId, sheetId));
    if (!sha256) throw notFound('The sheet');
    await releaseFile(sha256).catch((err: Error) =>
      console.error(`[sheets] unused file ${sha256} kept until the next start: ${err.message}`),
    );
  }

  /**
   * Removes each of `keys` (a deleted project's files) that no sheet uses any more; one that
   * cannot be removed now is logged and left to the start-up sweep.
   */
  async function releaseFiles(keys: string[]) {
    for (const sha256 of keys) {
      await releaseFile(sha256).catch((err: Error) =>
        console.error(`[sheets] unused file ${sha256} kept until the next start: ${err.message}`),
      );
    }
  }

  /**
   * Removes a file that no sheet uses: its row and, under the row's lock, its blob (an upload
   * of the same content waits, then writes the blob anew). The blob goes before the commit,
   * so dying in between leaves a row without blob and without sheets: the next upload of that
   * content writes the blob again (storage.put checks the blob, not the row), the start-up
   * sweep removes the row. `values` locks a row that may not be there yet (an upload's
   * rollback), waiting for another upload of the same content to finish first.
   */
  async function releaseFile(sha256: string, values?: repo.FileValues) {
    await db.transaction(async (tx) => {
      if (values) await repo.lockOrInsertFile(tx, values);
      else if (!(await repo.lockFile(tx, sha256))) return;
      if ((await repo.countSheetsUsing(tx, sha256)) > 0) return;
      await repo.deleteFile(tx, sha256);
      await storage.delete(sha256);
    });
  }

  /** Removes stored files that no sheet uses any more (a deleted project's); answers how many. */
  async function removeUnusedFiles(batch = 500): Promise<number> {
    return db.transaction(async (tx) => {
      const unused = await repo.lockUnusedFiles(tx, batch);
      for (const { sha256 } of unused) {
        await repo.deleteFile(tx, sha256);
        await storage.delete(sha256);
      }
      return unused.length;
    });
  }

  /** The sheet's file: its metadata, and a way to read it (whole or a byte range). */
  async function file(projectId: string, sheetId: string) {
    const row = await repo.findSheet(db, projectId, sheetId);
    if (!row) throw notFound('The sheet');
    return {
      sha256: row.file.sha256,
      mimeType: row.file.mimeType,
      sizeBytes: row.file.sizeBytes,
      originalName: row.originalName,
      async open(range?: ByteRange): Promise<Readable> {
        try {
          return await storage.get(row.file.sha256, range);
        } catch (err) {
          if (err instanceof BlobNotFoundError) {
            console.error(`[sheets] stored file ${err.sha256} of sheet ${sheetId} is missing`);
            throw notFound("The sheet's stored file");
          }
          throw err;
        }
      },
    };
  }

  return {
    list,
    get,
    inspect,
    upload,
    update,
    remove,
    releaseFile,
    releaseFiles,
    removeUnusedFiles,
    file,
  };
}

export type SheetService = ReturnType<typeof createSheetService>;
