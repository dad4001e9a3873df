// What an uploaded file really is, read from its bytes (never its name), and whether it is
// whole: the sniffed type, the pixel size of each page, and nothing decoded beyond headers.
import { Worker } from 'node:worker_threads';
import { fileTypeFromBuffer } from 'file-type';
import { pdfFrameDpi } from '@shared/api';

export const acceptedTypes = {
  'application/pdf': 'PDF',
  'image/png': 'PNG',
  'image/jpeg': 'JPEG',
  'image/tiff': 'TIFF',
} as const;
export type AcceptedMime = keyof typeof acceptedTypes;
export const acceptedKinds = Object.values(acceptedTypes).join(', ');

export interface PageSize {
  widthPx: number;
  heightPx: number;
}

export interface Inspection {
  mimeType: AcceptedMime;
  /** One entry per page: a PDF's pages at 150 dpi, or the one image. */
  pages: PageSize[];
}

export interface InspectLimits {
  /** Largest image (or PDF page at 150 dpi) accepted, in pixels. */
  maxPixels: number;
  maxPages: number;
}

export const defaultInspectLimits: InspectLimits = { maxPixels: 200_000_000, maxPages: 500 };

export type InspectionProblem = 'unsupported' | 'unreadable' | 'too-many-pixels' | 'too-many-pages';

export class InspectionError extends Error {
  override readonly name = 'InspectionError';
  constructor(
    readonly problem: InspectionProblem,
    message: string,
    readonly details: Record<string, unknown> = {},
  ) {
    super(message);
  }
}

const unreadable = (message: string) => new InspectionError('unreadable', message);

/**
 * Sniffs the type from the magic bytes and reads the page sizes from the headers. Throws
 * InspectionError: `unsupported` for anything but PDF, PNG, JPEG and TIFF; `unreadable` for a
 * truncated or broken file; `too-many-pixels` for an image whose header claims more than
 * `maxPixels` (a decompression bomb is refused before anything decodes it).
 */
export async function inspectFile(
  bytes: Uint8Array,
  limits: InspectLimits = defaultInspectLimits,
): Promise<Inspection> {
  const sniffed = await fileTypeFromBuffer(bytes);
  const mimeType = sniffed?.mime as string | undefined;
  if (!mimeType || !(mimeType in acceptedTypes)) {
    throw new InspectionError('unsupported', `Only ${acceptedKinds} files are accepted.`, {
      detected: mimeType ?? null,
      accepted: Object.keys(acceptedTypes),
    });
  }
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let pages: PageSize[];
  switch (mimeType as AcceptedMime) {
    case 'application/pdf':
      pages = await pdfPages(buf, limits.maxPages);
      break;
    case 'image/png':
      pages = [pngSize(buf)];
      break;
    case 'image/jpeg':
      pages = [jpegSize(buf)];
      break;
    case 'image/tiff':
      pages = [tiffSize(buf)];
      break;
  }
  pages.forEach((p, i) => {
    const pixels = p.widthPx * p.heightPx;
    if (pixels > limits.maxPixels) {
      const what =
        mimeType !== 'application/pdf'
          ? 'The image'
          : pages.length > 1
            ? `Page ${i + 1} at ${pdfFrameDpi} dpi`
            : `The page at ${pdfFrameDpi} dpi`;
      throw new InspectionError(
        'too-many-pixels',
        `${what} is ${Math.round(p.widthPx)} × ${Math.round(p.heightPx)} px ` +
          `(${(pixels / 1e6).toFixed(0)} megapixels); the limit is ${limits.maxPixels / 1e6} megapixels.`,
        { widthPx: p.widthPx, heightPx: p.heightPx, maxPixels: limits.maxPixels },
      );
    }
  });
  return { mimeType: mimeType as AcceptedMime, pages };
}

// ---------------------------------------------------------------------------------------------
// PNG: signature, IHDR first, then every chunk must fit, up to IEND (PNG spec §5.3, §11.2.2).

function pngSize(buf: Buffer): PageSize {
  if (buf.length < 33 || buf.toString('latin1', 12, 16) !== 'IHDR' || buf.readUInt32BE(8) !== 13) {
    throw unreadable('The PNG header cannot be read.');
  }
  const size = { widthPx: buf.readUInt32BE(16), heightPx: buf.readUInt32BE(20) };
  if (!size.widthPx || !size.heightPx) throw unreadable('The PNG header gives no size.');
  let pos = 8;
  while (pos + 12 <= buf.length) {
    const length = buf.readUInt32BE(pos);
    const type = buf.toString('latin1', pos + 4, pos + 8);
    if (pos + 12 + length > buf.length) break;
    if (type === 'IEND') return size;
    pos += 12 + length;
  }
  throw unreadable('The PNG file is cut short (it has no end marker).');
}

// ---------------------------------------------------------------------------------------------
// JPEG: walk the marker segments to the first scan (ITU-T T.81 §B.1.1); the frame header
// (SOFn) gives the size; the file must end its scan data with EOI.

function jpegSize(buf: Buffer): PageSize {
  let pos = 2;
  let size: PageSize | undefined;
  let orientation = 1;
  while (pos + 4 <= buf.length) {
    if (buf[pos] !== 0xff) throw unreadable('The JPEG file is damaged (a marker is missing).');
    const marker = buf.readUInt8(pos + 1);
    if (marker === 0xff) {
      pos += 1; // fill byte
      continue;
    }
    if (marker === 0x01 || (marker >= 0xd0 && marker <= 0xd7)) {
      pos += 2;
      continue;
    }
    if (marker === 0xd9) break;
    const length = buf.readUInt16BE(pos + 2);
    if (length < 2 || pos + 2 + length > buf.length) break;
    const body = pos + 4;
    const isFrame = marker >= 0xc0 && marker <= 0xcf && ![0xc4, 0xc8, 0xcc].includes(marker);
    if (isFrame && length >= 7) {
      size = { heightPx: buf.readUInt16BE(body + 1), widthPx: buf.readUInt16BE(body + 3) };
    } else if (marker === 0xe1 && buf.toString('latin1', body, body + 6) === 'Exif\0\0') {
      orientation = exifOrientation(buf.subarray(body + 6, pos + 2 + length)) ?? 1;
    } else if (marker === 0xda) {
      if (!size || !size.widthPx || !size.heightPx) {
        throw unreadable('The JPEG header gives no image size.');
      }
      if (buf.lastIndexOf(EOI) < pos + 2 + length) {
        throw unreadable('The JPEG file is cut short (its image data has no end marker).');
      }
      // EXIF orientations 5–8 turn the picture a quarter: browsers show it that way round.
      return orientation >= 5 && orientation <= 8
        ? { widthPx: size.heightPx, heightPx: size.widthPx }
        : size;
    }
    pos += 2 + length;
  }
  throw unreadable('The JPEG file is cut short or has no image data.');
}

const EOI = Buffer.from([0xff, 0xd9]);

// ---------------------------------------------------------------------------------------------
// TIFF (TIFF 6.0 §2): byte order, IFD0, its size tags, and the strips or tiles must lie
// inside the file.

interface IfdEntry {
  tag: number;
  values: number[];
}

const TYPE_SIZE: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4 };

function readIfd(buf: Buffer, offset: number, little: boolean): IfdEntry[] {
  const u16 = (p: number) => (little ? buf.readUInt16LE(p) : buf.readUInt16BE(p));
  const u32 = (p: number) => (little ? buf.readUInt32LE(p) : buf.readUInt32BE(p));
  if (offset < 8 || offset + 2 > buf.length) throw unreadable('The TIFF directory is missing.');
  const count = u16(offset);
  if (offset + 2 + count * 12 > buf.length) throw unreadable('The TIFF directory is cut short.');
  const entries: IfdEntry[] = [];
  for (let i = 0; i < count; i++) {
    const p = offset + 2 + i * 12;
    const tag = u16(p);
    const type = u16(p + 2);
    const n = u32(p + 4);
    const width = TYPE_SIZE[type];
    // Only the integer tags below are read; others are skipped whatever their type.
    if (![3, 4].includes(type) || !width) {
      entries.push({ tag, values: [] });
      continue;
    }
    const at = n * width <= 4 ? p + 8 : u32(p + 8);
    if (at + n * width > buf.length)
      throw unreadable('A TIFF tag points past the end of the file.');
    const values: number[] = [];
    for (let k = 0; k < n; k++) values.push(type === 3 ? u16(at + 2 * k) : u32(at + 4 * k));
    entries.push({ tag, values });
  }
  return entries;
}

function tiffHeader(buf: Buffer): { little: boolean; ifd: number } {
  const order = buf.toString('latin1', 0, 2);
  if (buf.length < 8 || (order !== 'II' && order !== 'MM')) {
    throw unreadable('The TIFF header cannot be read.');
  }
  const little = order === 'II';
  const magic = little ? buf.readUInt16LE(2) : buf.readUInt16BE(2);
  if (magic === 43) throw unreadable('BigTIFF files are not supported; save as a standard TIFF.');
  if (magic !== 42) throw unreadable('The TIFF header cannot be read.');
  return { little, ifd: little ? buf.readUInt32LE(4) : buf.readUInt32BE(4) };
}

function tiffSize(buf: Buffer): PageSize {
  const { little, ifd } = tiffHeader(buf);
  const tags = new Map(readIfd(buf, ifd, little).map((e) => [e.tag, e.values]));
  const widthPx = tags.get(256)?.[0];
  const heightPx = tags.get(257)?.[0];
  if (!widthPx || !heightPx) throw unreadable('The TIFF header gives no image size.');
  const offsets = tags.get(273) ?? tags.get(324);
  const counts = tags.get(279) ?? tags.get(325);
  if (!offsets?.length || !counts || counts.length !== offsets.length) {
    throw unreadable('The TIFF file has no image data.');
  }
  // counts has one entry per offset (checked above).
  offsets.forEach((o, i) => {
    if (o + counts[i]! > buf.length) throw unreadable('The TIFF file is cut short.');
  });
  return { widthPx, heightPx };
}

/** Orientation (tag 274) from an EXIF block, which is itself a little TIFF. */
function exifOrientation(tiff: Buffer): number | undefined {
  try {
    const { little, ifd } = tiffHeader(tiff);
    return readIfd(tiff, ifd, little).find((e) => e.tag === 274)?.values[0];
  } catch {
    return undefined; // a broken EXIF block says nothing about the picture itself
  }
}

// ---------------------------------------------------------------------------------------------
// PDF: the trailer marker must be there (a cut-short download loses it) and pdf.js must open
// every page without repairing the file.

async function pdfPages(buf: Buffer, maxPages: number): Promise<PageSize[]> {
  // ISO 32000-1 §7.5.5: the file ends with %%EOF; readers accept it within the last 1 KB.
  if (!buf.subarray(Math.max(0, buf.length - 1024)).includes('%%EOF')) {
    throw unreadable('The PDF file is cut short (its end marker is missing).');
  }
  const answer = await pdfReader.read(new Uint8Array(buf), pdfFrameDpi / 72, maxPages);
  if ('pages' in answer) return answer.pages;
  throw new InspectionError(answer.problem, answer.message, answer.details);
}

type PdfAnswer =
  | { pages: PageSize[] }
  | { problem: InspectionProblem; message: string; details?: Record<string, unknown> };

/** A PDF that pdf.js has not opened in this long is refused (and its thread ended). */
const pdfTimeoutMs = 60_000;

/**
 * pdf.js on one worker thread (pdf-worker.mjs), started on first use and kept for the next.
 * The thread works on its requests together; one that dies, or that leaves a request
 * unanswered for a minute (stuck in pdf.js, so stuck for all), fails the requests it holds and
 * is replaced on the next one.
 */
const pdfReader = (() => {
  let worker: Worker | undefined;
  let nextId = 0;
  const pending = new Map<
    number,
    { resolve: (a: PdfAnswer) => void; reject: (e: Error) => void }
  >();

  function failAll(err: Error) {
    for (const p of pending.values()) p.reject(err);
    pending.clear();
    worker = undefined;
  }

  function start(): Worker {
    const w = new Worker(new URL('./pdf-worker.mjs', import.meta.url));
    w.on('message', (answer: PdfAnswer & { id: number }) => {
      const { id, ...rest } = answer;
      pending.get(id)?.resolve(rest);
      pending.delete(id);
      // An idle thread does not keep the process alive.
      if (!pending.size) w.unref();
    });
    w.on('error', (err) => {
      if (worker === w) failAll(unreadable(`The PDF cannot be opened: ${err.message}`));
    });
    w.on('exit', () => {
      if (worker === w) failAll(unreadable('The PDF reader stopped before it answered.'));
    });
    return w;
  }

  function read(data: Uint8Array, scale: number, maxPages: number): Promise<PdfAnswer> {
    worker ??= start();
    const w = worker;
    const id = nextId++;
    w.ref();
    return new Promise<PdfAnswer>((resolve, reject) => {
      const timer = setTimeout(() => {
        failAll(unreadable(`The PDF could not be opened within ${pdfTimeoutMs / 1000} s.`));
        void w.terminate();
      }, pdfTimeoutMs);
      const settle =
        <T>(f: (v: T) => void) =>
        (v: T) => {
          clearTimeout(timer);
          f(v);
        };
      pending.set(id, { resolve: settle(resolve), reject: settle(reject) });
      w.postMessage({ id, data, scale, maxPages }, [data.buffer as ArrayBuffer]);
    });
  }

  return { read };
})();
