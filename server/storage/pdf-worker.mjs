// Opens PDFs with pdf.js on a thread of its own and answers each page's size. pdf.js's legacy
// build (the one that runs on Node 20) installs core-js polyfills over built-ins such as
// JSON.stringify and Array.prototype.push; confined to this thread they cannot slow the server's
// own. Plain JavaScript, so the worker starts the same under tsx, vitest and plain node.
import { parentPort } from 'node:worker_threads';
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';

/**
 * @param {{ data: Uint8Array, scale: number, maxPages: number }} request
 * @returns {Promise<{ pages: { widthPx: number, heightPx: number }[] } | { problem: string, message: string, details?: object }>}
 */
async function pageSizes({ data, scale, maxPages }) {
  let task;
  try {
    task = getDocument({
      data,
      stopAtErrors: true,
      isEvalSupported: false,
      enableXfa: false,
      disableFontFace: true,
      useSystemFonts: false,
      verbosity: 0,
    });
    const doc = await task.promise;
    if (doc.numPages > maxPages) {
      return {
        problem: 'too-many-pages',
        message: `The PDF has ${doc.numPages} pages; at most ${maxPages} are accepted in one file.`,
        details: { pageCount: doc.numPages, maxPages },
      };
    }
    const pages = [];
    for (let n = 1; n <= doc.numPages; n++) {
      const viewport = (await doc.getPage(n)).getViewport({ scale });
      if (!(viewport.width > 0 && viewport.height > 0)) {
        return { problem: 'unreadable', message: `Page ${n} has no size.` };
      }
      pages.push({ widthPx: viewport.width, heightPx: viewport.height });
    }
    if (!pages.length) return { problem: 'unreadable', message: 'The PDF has no pages.' };
    return { pages };
  } catch (err) {
    return { problem: 'unreadable', message: `The PDF cannot be opened: ${err?.message ?? err}` };
  } finally {
    // A failure to clean up must not end the thread (and every request on it).
    await task?.destroy().catch(() => {});
  }
}

parentPort.on('message', async (request) => {
  parentPort.postMessage({ id: request.id, ...(await pageSizes(request)) });
});
