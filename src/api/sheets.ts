import {
  errorBody,
  sheet,
  sheetList,
  measureAnswer,
  type ErrorCode,
  type MeasureBody,
  type Sheet,
  type UpdateSheetBody,
} from '@shared/api';
import { ApiError, checkAnswer, csrfToken, noAnswer, request } from './client';

const base = (projectId: string) => `/api/projects/${encodeURIComponent(projectId)}/sheets`;
const one = (projectId: string, sheetId: string) =>
  `${base(projectId)}/${encodeURIComponent(sheetId)}`;

/** Bytes sent so far of an upload, for its progress bar. */
export interface UploadProgress {
  loaded: number;
  total: number;
}

/** The answer body of a failed XMLHttpRequest, as the same ApiError `request()` throws. */
function xhrError(xhr: XMLHttpRequest): ApiError {
  let data: unknown;
  try {
    data = JSON.parse(xhr.responseText);
  } catch {
    data = undefined;
  }
  const parsed = errorBody.safeParse(data);
  if (parsed.success) {
    const { code, message, details } = parsed.data.error;
    return new ApiError(xhr.status, code as ErrorCode, message, details);
  }
  if (xhr.status === 413) {
    return new ApiError(413, 'payload_too_large', 'That file is larger than the upload limit.');
  }
  return new ApiError(xhr.status, 'internal', `The server answered ${xhr.status}.`);
}

/**
 * Multipart upload of one or more files (field `file`, repeated). fetch() cannot report upload
 * progress, so this one request goes through XMLHttpRequest, with the same CSRF header and the
 * same error shape as `request()`.
 */
function upload(
  projectId: string,
  files: readonly File[],
  onProgress?: (p: UploadProgress) => void,
  signal?: AbortSignal,
): Promise<Sheet[]> {
  const form = new FormData();
  for (const f of files) form.append('file', f, f.name);
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', base(projectId));
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.setRequestHeader('X-CSRF-Token', csrfToken());
    xhr.withCredentials = true;
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) onProgress?.({ loaded: e.loaded, total: e.total });
    };
    xhr.onload = () => {
      if (xhr.status >= 200 && xhr.status < 300) {
        let data: unknown;
        try {
          data = JSON.parse(xhr.responseText);
        } catch {
          reject(new ApiError(xhr.status, 'internal', 'The server answered an unreadable list.'));
          return;
        }
        try {
          resolve(checkAnswer(sheetList, data, `POST ${base(projectId)}`).sheets);
        } catch (err) {
          reject(err);
        }
      } else {
        reject(xhrError(xhr));
      }
    };
    xhr.onerror = () =>
      reject(
        new ApiError(
          0,
          'network',
          'The server cannot be reached. Check that Fairsheet is running.',
        ),
      );
    xhr.onabort = () => reject(new DOMException('Upload cancelled', 'AbortError'));
    signal?.addEventListener('abort', () => xhr.abort(), { once: true });
    xhr.send(form);
  });
}

export const sheetsApi = {
  list: (projectId: string) =>
    request('GET', base(projectId), sheetList).then((r) => r.sheets),
  get: (projectId: string, sheetId: string) => request('GET', one(projectId, sheetId), sheet),
  update: (projectId: string, sheetId: string, body: UpdateSheetBody) =>
    request('PATCH', one(projectId, sheetId), sheet, body),
  remove: (projectId: string, sheetId: string) =>
    request('DELETE', one(projectId, sheetId), noAnswer),
  /** A measurement between two pins: the sheet's record and the model's revision, written together. */
  measure: (projectId: string, sheetId: string, body: MeasureBody) =>
    request('POST', `${one(projectId, sheetId)}/measurements`, measureAnswer, body),
  fileUrl: (projectId: string, sheetId: string) => `${one(projectId, sheetId)}/file`,
  upload,
};
