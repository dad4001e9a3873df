import { describe, expect, it } from 'vitest';
import { pdfFrameDpi } from '@shared/api';
import { InspectionError, inspectFile } from '../../../server/storage/inspect';
import { makePdf } from '../../helpers/sheet-files';

const isNative = (f: unknown) => String(f).includes('[native code]');

describe('opening PDFs on the server', () => {
  it('answers each page at 150 dpi: A4 is 595.28 × 841.89 pt (ISO 216, 1 pt = 1/72 in)', async () => {
    const { mimeType, pages } = await inspectFile(await makePdf(2));
    expect(mimeType).toBe('application/pdf');
    expect(pages).toHaveLength(2);
    const scale = pdfFrameDpi / 72;
    expect(pages[0]!.widthPx).toBeCloseTo(595.28 * scale, 0);
    expect(pages[1]!.heightPx).toBeCloseTo(841.89 * scale, 0);
  });

  it("leaves the server's own JSON.stringify and Array.prototype.push native (pdf.js's polyfills stay on its thread)", async () => {
    await inspectFile(await makePdf(1));
    expect(isNative(JSON.stringify)).toBe(true);
    expect(isNative(Array.prototype.push)).toBe(true);
  });

  it('refuses a PDF over the page limit, naming the count, and reads the next one as before', async () => {
    const refused = await inspectFile(await makePdf(3), { maxPixels: 1e9, maxPages: 2 }).catch(
      (e: unknown) => e,
    );
    expect(refused).toBeInstanceOf(InspectionError);
    expect((refused as InspectionError).problem).toBe('too-many-pages');
    expect((refused as InspectionError).message).toMatch(/3 pages; at most 2/);
    expect((await inspectFile(await makePdf(1))).pages).toHaveLength(1);
  });

  it('reads several PDFs at once, each answered with its own pages', async () => {
    const counts = [1, 4, 2, 3];
    const answers = await Promise.all(counts.map(async (n) => inspectFile(await makePdf(n))));
    expect(answers.map((a) => a.pages.length)).toEqual(counts);
  });
});
