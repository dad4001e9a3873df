import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';

/** Every page's text (pdf.js, legacy build for Node), joined, and the page sizes in points. */
export async function readPdf(bytes: Buffer) {
  const doc = await getDocument({ data: new Uint8Array(bytes), useSystemFonts: false }).promise;
  const pages: string[] = [];
  const sizes: number[][] = [];
  for (let i = 1; i <= doc.numPages; i++) {
    const page = await doc.getPage(i);
    sizes.push(page.view);
    const content = await page.getTextContent();
    pages.push(content.items.map((it) => ('str' in it ? it.str : '')).join(' '));
  }
  await doc.destroy();
  return { text: pages.join('\n'), pages, sizes };
}
