import { create as contentDisposition } from 'content-disposition';
import { Router, type RequestHandler } from 'express';
import multer from 'multer';
import { tmpdir } from 'node:os';
import { rm } from 'node:fs/promises';
import { pipeline } from 'node:stream/promises';
import { projectId, sheetParams, updateSheetBody } from '@shared/api';
import { editors, requireProjectRole, type ProjectAccess } from '../auth/roles';
import type { Db } from '../db/client';
import { AppError, badRequest } from '../http/errors';
import { validate } from '../http/validate';
import type { SheetService } from '../services/sheets';
import { downloadName, sanitiseFileName } from '../storage/file-name';

export interface UploadOptions {
  /** Largest accepted file, bytes. */
  maxBytes: number;
  /** Where multipart files are staged while they are checked (default: the system temp dir). */
  tempDir?: string;
  /** Most files in one upload. */
  maxFiles?: number;
}

/** A file's bytes never change for a sheet (the ETag is their hash); an hour keeps revoked access short. */
const fileCacheControl = 'private, max-age=3600';

const access = (locals: Record<string, unknown>) => (locals.access as ProjectAccess).project.id;

function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${Number((n / (1024 * 1024)).toFixed(1))} MB`;
  if (n >= 1024) return `${Number((n / 1024).toFixed(1))} KB`;
  return `${n} bytes`;
}

/** multer, with its refusals turned into the API's errors (413 over the size limit). */
export function receiveFiles(options: UploadOptions): RequestHandler {
  const maxFiles = options.maxFiles ?? 20;
  const upload = multer({
    storage: multer.diskStorage({ destination: options.tempDir ?? tmpdir() }),
    limits: { fileSize: options.maxBytes, files: maxFiles, fields: 20, parts: maxFiles + 20 },
    // Browsers send file names as raw UTF-8.
    defParamCharset: 'utf8',
    // The name as sent, path and all: sanitiseFileName keeps its last part. The parser's own
    // trimming would turn a file named “../..” into a nameless part and drop the file unseen.
    preservePath: true,
  }).array('file', maxFiles);
  return (req, res, next) => {
    upload(req, res, (err?: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') {
          const name = (err as { filename?: string }).filename;
          return next(
            new AppError(
              'payload_too_large',
              `${name ? `“${sanitiseFileName(name)}”` : 'A file'} is larger than the ${formatBytes(options.maxBytes)} limit.`,
              413,
              { limitBytes: options.maxBytes },
            ),
          );
        }
        if (err.code === 'LIMIT_FILE_COUNT') {
          return next(
            new AppError('payload_too_large', `At most ${maxFiles} files at once.`, 413, {
              maxFiles,
            }),
          );
        }
        if (err.code === 'LIMIT_UNEXPECTED_FILE') {
          return next(badRequest('Send the files in the form field "file".'));
        }
        return next(badRequest(`The upload was not understood: ${err.message}.`));
      }
      // busboy's parse errors carry no code; disk errors (ENOSPC, …) do and stay 500s.
      if (err instanceof Error && !(err as NodeJS.ErrnoException).code) {
        return next(badRequest(`The upload was cut short or malformed: ${err.message}.`));
      }
      next(err);
    });
  };
}

/** A project's sheets and their files (mounted under /api/projects). */
export function sheetRoutes(db: Db, sheets: SheetService, uploads: UploadOptions): Router {
  const router = Router();
  const projectParams = validate({ params: projectId });
  const params = validate({ params: sheetParams });
  const readers = requireProjectRole(db);
  const writers = requireProjectRole(db, editors);

  router.get('/:projectId/sheets', projectParams, readers, async (_req, res) => {
    res.json({ sheets: await sheets.list(access(res.locals)) });
  });

  // The role is checked before multer reads a byte of the body.
  router.post(
    '/:projectId/sheets',
    projectParams,
    writers,
    receiveFiles(uploads),
    async (req, res) => {
      const files = (req.files ?? []) as Express.Multer.File[];
      try {
        const made = await sheets.upload(
          access(res.locals),
          req.session.userId!,
          files.map((f) => ({ originalName: f.originalname, path: f.path })),
        );
        res.status(201).json({ sheets: made });
      } finally {
        await Promise.all(files.map((f) => rm(f.path, { force: true })));
      }
    },
  );

  router.get('/:projectId/sheets/:sheetId', params, readers, async (req, res) => {
    res.json(await sheets.get(access(res.locals), String(req.params.sheetId)));
  });

  router.patch(
    '/:projectId/sheets/:sheetId',
    params,
    writers,
    validate({ body: updateSheetBody }),
    async (req, res) => {
      res.json(await sheets.update(access(res.locals), String(req.params.sheetId), req.body));
    },
  );

  router.delete('/:projectId/sheets/:sheetId', params, writers, async (req, res) => {
    await sheets.remove(access(res.locals), String(req.params.sheetId));
    res.status(204).end();
  });

  router.get('/:projectId/sheets/:sheetId/file', params, readers, async (req, res) => {
    const file = await sheets.file(access(res.locals), String(req.params.sheetId));
    const etag = `"${file.sha256}"`;
    const isPdf = file.mimeType === 'application/pdf';
    res.set({
      'Content-Type': file.mimeType,
      ETag: etag,
      'Cache-Control': fileCacheControl,
      'Accept-Ranges': 'bytes',
      'X-Content-Type-Options': 'nosniff',
      // Opened directly, the file is a sandboxed document: no script in it (a PDF's
      // JavaScript included) runs with the app's origin. A PDF is also a download, not a page.
      'Content-Security-Policy': 'sandbox',
      'Cross-Origin-Resource-Policy': 'same-origin',
      'Content-Disposition': contentDisposition(downloadName(file.originalName, file.mimeType), {
        type: isPdf ? 'attachment' : 'inline',
      }),
    });
    if (req.fresh) {
      res.status(304).end();
      return;
    }

    // One byte range (pdf.js asks for them on large PDFs); several, or a stale If-Range, get it all.
    let range: { start: number; end: number } | undefined;
    const ifRange = req.get('If-Range');
    if (req.get('Range') && (!ifRange || ifRange === etag)) {
      const ranges = req.range(file.sizeBytes, { combine: true });
      if (ranges === -1) {
        res.status(416).set('Content-Range', `bytes */${file.sizeBytes}`).end();
        return;
      }
      if (ranges !== -2 && ranges && ranges.type === 'bytes') {
        const [only, ...more] = ranges;
        if (only && more.length === 0) range = { start: only.start, end: only.end };
      }
    }
    if (range) {
      res
        .status(206)
        .set('Content-Range', `bytes ${range.start}-${range.end}/${file.sizeBytes}`)
        .set('Content-Length', String(range.end - range.start + 1));
    } else {
      res.set('Content-Length', String(file.sizeBytes));
    }
    if (req.method === 'HEAD') {
      res.end();
      return;
    }
    const body = await file.open(range);
    try {
      await pipeline(body, res);
    } catch (err) {
      // Headers are gone already; all that is left is to cut the connection.
      if (!res.headersSent) throw err;
      res.destroy(err as Error);
    }
  });

  return router;
}
