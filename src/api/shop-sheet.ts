import { shopSheet, type PaperSize } from '@shared/api';
import { request } from './client';

const base = (projectId: string) => `/api/projects/${encodeURIComponent(projectId)}`;

/** The shop sheet of the saved model: JSON for the print view, and the download links. */
export const shopSheetApi = {
  get: (projectId: string) => request('GET', `${base(projectId)}/shop-sheet`, shopSheet),
  pdfUrl: (projectId: string, paper: PaperSize) =>
    `${base(projectId)}/shop-sheet.pdf?paper=${paper}`,
  csvUrl: (projectId: string) => `${base(projectId)}/shop-sheet.csv`,
};
