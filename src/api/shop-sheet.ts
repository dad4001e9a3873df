import type { PaperSize, ShopSheet } from '@shared/api';
import { request } from './client';

const base = (projectId: string) => `/api/projects/${encodeURIComponent(projectId)}`;

/** The shop sheet of the saved model: JSON for the print view, and the download links. */
export const shopSheetApi = {
  get: (projectId: string) => request<ShopSheet>('GET', `${base(projectId)}/shop-sheet`),
  pdfUrl: (projectId: string, paper: PaperSize) =>
    `${base(projectId)}/shop-sheet.pdf?paper=${paper}`,
  csvUrl: (projectId: string) => `${base(projectId)}/shop-sheet.csv`,
};
