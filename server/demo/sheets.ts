// The demo sheets (invented; every name and figure in them is ours): a two-page drawing of the
// Kestrel frames (drawing-pdf.ts) and a stand-in photograph of the full-size engine (photo.ts),
// with the calibrations and pins of figures.ts. Both go through the sheet service like any upload.
import type { Sheet } from '@shared/api';
import type { Db } from '../db/client';
import { createSheetService } from '../services/sheets';
import type { BlobStorage } from '../storage/storage';
import { buildDemoDrawingPdf } from './drawing-pdf';
import { demoSheetFigures, type DemoSheetFigures } from './figures';
import { buildDemoPhotoJpeg } from './photo';

export interface DemoSheets {
  frame: Sheet;
  details: Sheet;
  photo: Sheet;
  figures: DemoSheetFigures;
}

/**
 * Generates the drawing and the photo, uploads them through the sheet service and saves their
 * calibrations, pins and the photo's wheelbase measurement. Call once, when the demo project is
 * made. Answers the sheets and every figure used (pixel positions, lengths).
 */
export async function seedDemoSheets(
  db: Db,
  storage: BlobStorage,
  projectId: string,
  userId: string,
): Promise<DemoSheets> {
  const sheets = createSheetService({ db, storage });
  const photo = buildDemoPhotoJpeg();
  const figures = demoSheetFigures(photo.toPhoto);
  const [page1, page2, picture] = await sheets.upload(projectId, userId, [
    { originalName: 'kestrel-K1-frames.pdf', bytes: await buildDemoDrawingPdf() },
    { originalName: 'kestrel-prototype-side.jpg', bytes: photo.jpeg },
  ]);
  if (!page1 || !page2 || !picture) {
    throw new Error('The demo upload answered fewer than its three sheets (two pages, a photo).');
  }
  const frame = await sheets.update(projectId, page1.id, {
    revision: page1.revision,
    title: 'K-1 sheet 1 — frame plate, side view',
    calibration: figures.frame.calibration,
    pins: figures.frame.pins,
  });
  const details = await sheets.update(projectId, page2.id, {
    revision: page2.revision,
    title: 'K-1 sheet 2 — hornblock and horn stay',
    calibration: figures.details.calibration,
    pins: figures.details.pins,
  });
  const photoSheet = await sheets.update(projectId, picture.id, {
    revision: picture.revision,
    title: 'Prototype photo (stand-in) — engine side',
    calibration: figures.photo.calibration,
    pins: figures.photo.pins,
    measurements: figures.photo.measurements,
  });
  return { frame, details, photo: photoSheet, figures };
}
